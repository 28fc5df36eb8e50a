/**
 * Options of the per-window retrieval (campaign keys retrieval.* and qc.robust.*; validated and defaulted by the
 * campaign schema, so the kernels trust them).
 */
import type { PlaneSpec } from '../campaign/types.ts';
import type { GridSpec } from '../grid/grid.ts';
import type { BudgetSettings } from './budget.ts';

export interface RobustSettings {
  /** Apply the median/MAD filter. @default true */
  enabled: boolean;
  /** Reject |v_r - median| > k * 1.4826 * MAD within one (plane, cell, instrument) group; dimensionless. @default 3.5 */
  k: number;
  /** Filter only groups with at least this many samples. @default 5 */
  minSamples: number;
}

export interface RetrievalSettings {
  /** Mask a component whose error amplification sqrt([(A^T A)^-1]_kk) exceeds this; dimensionless. @default 3 */
  maxAmplification: number;
  /** An instrument counts in a cell when it has at least this many samples there (after the robust filter). @default 3 */
  minSamplesPerInstrument: number;
  /** Cells with exactly two instruments: 'w-zero' solves u, v with w = 0 (stated in the field); 'none' masks them. @default 'w-zero' */
  twoInstrumentAssumption: 'w-zero' | 'none';
  robust: RobustSettings;
  /** Number of instruments in the campaign; sample instrument indices are below it. */
  instrumentCount: number;
  /**
   * Floor on the per-instrument sample standard deviation of v_r, m/s, before it becomes a weight n / s^2. A
   * smaller scatter is below the velocity resolution of typical Doppler lidars (a few cm/s; common practice) and
   * would give one instrument an unbounded weight; a single sample (n = 1) has no scatter and also gets the floor.
   * @default 0.01
   */
  sigmaFloor_ms?: number;
  /** The uncertainty budget (retrieval/budget.ts); absent or disabled: none. */
  budget?: BudgetSettings;
}

export const DEFAULT_SIGMA_FLOOR_MS = 0.01;

export const DEFAULT_RETRIEVAL_SETTINGS: Omit<RetrievalSettings, 'instrumentCount'> = {
  maxAmplification: 3,
  minSamplesPerInstrument: 3,
  twoInstrumentAssumption: 'w-zero',
  robust: { enabled: true, k: 3.5, minSamples: 5 },
  sigmaFloor_ms: DEFAULT_SIGMA_FLOOR_MS,
};

/** A plane and its grid. Sample plane indices refer to spec.index. */
export interface PlaneGrid {
  spec: PlaneSpec;
  grid: GridSpec;
}

/** The one statement pushed into FieldResult.assumptions when any cell used the w = 0 assumption. */
export const W_ZERO_ASSUMPTION = 'w = 0 assumed in cells with two instruments, and in cells of three or more whose three-component solve loses u or v';
