/**
 * Retrieval results: one FieldResult per plane and averaging window. All arrays are grid-shaped (see grid/grid.ts),
 * components in the rotor frame (u streamwise, v to the left looking downstream, w up), m/s.
 */
import type { GridSpec } from '../grid/grid.ts';
import type { FieldBudget } from './budget.ts';

/** Why a component is not retrieved in a cell. 0 = valid. */
export const MaskReason = {
  ok: 0,
  /** No accepted samples in the cell. */
  noData: 1,
  /** Instruments present, enough of them for the component, but too few reach retrieval.minSamplesPerInstrument. */
  tooFewSamples: 2,
  /** Fewer instruments than the components need (three for u, v, w; two with the w = 0 assumption). */
  tooFewInstruments: 3,
  /** The component's error amplification exceeds retrieval.maxAmplification. */
  amplification: 4,
  /** The beams are (nearly) parallel: the system is singular. */
  singular: 5,
  /** Not retrieved: assumed zero (two-instrument cell with the w-zero assumption). */
  assumedZero: 6,
  /** The component's combined standard uncertainty (uncertainty budget) exceeds uncertainty.maxCombined_ms. */
  uncertainty: 7,
} as const;
export type MaskReasonCode = (typeof MaskReason)[keyof typeof MaskReason];
export const maskReasonName: Record<number, string> = {
  0: '',
  1: 'no_data',
  2: 'too_few_samples',
  3: 'too_few_instruments',
  4: 'amplification_above_threshold',
  5: 'singular_geometry',
  6: 'assumed_zero',
  7: 'uncertainty_above_threshold',
};

export interface WindowInfo {
  /** Ordinal of the window in the run (windows), or of the condition bin (ensembles). */
  index: number;
  /** Unix seconds, inclusive (an ensemble: the start of its first window). */
  start_s: number;
  /** Unix seconds, exclusive (an ensemble: the end of its last window). */
  end_s: number;
  /** Why the window exists: fixed, list, segment, record; or ensemble (windows pooled by condition). */
  kind?: 'fixed' | 'list' | 'segment' | 'record' | 'ensemble';
  /** Label for people: a list label, a state level, or a condition bin ("yaw_offset_deg in [-15, -5)"). */
  label?: string;
  /** Segment windows: the yaw-offset level, degrees. */
  level?: number;
  /** Ensembles: the [start, end) of every pooled window, Unix seconds (series are averaged over these only). */
  members?: [number, number][];
}

export interface FieldResult {
  planeId: string;
  planeIndex: number;
  orientation: 'cross' | 'horizontal';
  /** Cross plane: downstream distance, metres; horizontal: NaN. */
  x_m: number;
  /** Horizontal plane: height, metres; cross: NaN. */
  z_m: number;
  window: WindowInfo;
  /** Wind direction (from) that defined the rotor frame in this window, degrees. */
  direction_deg: number;
  grid: GridSpec;
  /** Retrieved components, NaN where masked. */
  u: Float64Array;
  v: Float64Array;
  w: Float64Array;
  /** Standard uncertainties, m/s, from the radial-velocity scatter and the geometry. */
  su: Float64Array;
  sv: Float64Array;
  sw: Float64Array;
  /** Error amplification sqrt(diag((A^T A)^-1)) of the three components (NaN if not computable). */
  dopU: Float64Array;
  dopV: Float64Array;
  dopW: Float64Array;
  cond: Float64Array;
  minCrossing_deg: Float64Array;
  /**
   * Effective position of the retrieved u in the cell (y, and height for a cross plane or x for a horizontal one),
   * metres: the instruments' mean sample positions weighted by their share in the u solution (exact when u varies
   * linearly across the cell). Scanning instruments aim at fixed points while the rotor frame turns with the wind,
   * so this can be up to half a cell from the cell centre. NaN where u is not retrieved or positions are unknown.
   */
  yEff: Float64Array;
  zEff: Float64Array;
  /** Accepted samples used in the cell (after robust rejection). */
  samples: Uint32Array;
  /** Instruments used in the cell. */
  instruments: Uint8Array;
  /** Mask reason per component (MaskReason codes). */
  maskU: Uint8Array;
  maskV: Uint8Array;
  maskW: Uint8Array;
  /** Assumptions stated for this field (for example "w = 0 in two-instrument cells"). */
  assumptions: string[];
  /** The uncertainty budget and turbulence statistics (retrieval/budget.ts); absent when the budget is off. */
  budget?: FieldBudget;
}
