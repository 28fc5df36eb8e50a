/**
 * Options of the wake analysis, with units and defaults. Thresholds marked "common practice" are engineering
 * choices, not published values; they are stated in the output notes.
 */
import { OptionError } from '../errors.ts';

/** von Karman constant used by the log law: 0.40 (Hogstrom 1996, Boundary-Layer Meteorol. 78 [from memory]). */
export const KAPPA = 0.4;

export interface WakeOptions {
  /** Below this robust maximum deficit (98th percentile over valid cells) the plane has no wake. @default 0.05 */
  minDeficit: number;
  /** Minimum valid cells for the 2D Gaussian fit. @default 30 */
  minCells: number;
  /** Fit a constant background offset with the Gaussian. @default true */
  fitOffset: boolean;
  /**
   * Weight the Gaussian fit by the cells' deficit uncertainty su / u_inf (cells without one get the median).
   * Off by default: per-cell uncertainties from few samples can be tiny by chance and then dominate. @default false
   */
  weightedFit: boolean;
  /** Plane-inflow, first pass: cells with |y| below this many rotor diameters (from the rotor axis) are excluded. @default 1 */
  inflowExclusion_D: number;
  /** Plane-inflow: after a first fit, also exclude cells within this many sigmas of the fitted centre. @default 3 */
  inflowExclusionSigmas: number;
  /** Plane-inflow: a height row counts when it has at least this many undisturbed cells. @default 2 */
  inflowMinCellsPerRow: number;
  /** Disk estimator: minimum fraction of the disk covered by valid cells. @default 0.6 */
  diskMinCoverage: number;
  /** Centroid estimator: cells with deficit above this fraction of the maximum. @default 0.5 */
  centroidFraction: number;
  /** Widths outside [minWidthCells * cell size, maxWidth_D * D] are absurd. @default 0.5 and 3 */
  minWidthCells: number;
  maxWidth_D: number;
  /** REWS segments; 0 = automatic: floor(D / dz) clamped to [1, 10]. @default 0 */
  rewsSegments: number;
  /**
   * Top-hat wake decay constant k (Jensen 1983), given explicitly. Default (undefined): fitted to the planes'
   * centreline deficits where they allow, else 0.4 I from the ambient turbulence intensity (Pena et al. 2016).
   */
  topHatK?: number;
  /** Jimenez et al. (2010) wake-expansion coefficient beta. @default 0.1 (common practice) */
  jimenezBeta: number;
}

export const defaultWakeOptions: WakeOptions = {
  minDeficit: 0.05,
  minCells: 30,
  fitOffset: true,
  weightedFit: false,
  inflowExclusion_D: 1,
  inflowExclusionSigmas: 3,
  inflowMinCellsPerRow: 2,
  diskMinCoverage: 0.6,
  centroidFraction: 0.5,
  minWidthCells: 0.5,
  maxWidth_D: 3,
  rewsSegments: 0,
  jimenezBeta: 0.1,
};

/** Merges options over the defaults and checks them; throws OptionError naming the option, rule and value. */
export function resolveWakeOptions(o: Partial<WakeOptions> = {}): WakeOptions {
  const r: WakeOptions = { ...defaultWakeOptions, ...o };
  const need = (name: keyof WakeOptions, ok: boolean, rule: string) => {
    if (!ok) throw new OptionError(`wake.${name}`, `${rule} (got ${JSON.stringify(r[name])})`);
  };
  need('minDeficit', r.minDeficit > 0 && r.minDeficit < 1, 'must be in (0, 1)');
  need('minCells', Number.isInteger(r.minCells) && r.minCells >= 7, 'must be an integer >= 7 (6 parameters + 1)');
  need('inflowExclusion_D', r.inflowExclusion_D >= 0, 'must be >= 0');
  need('inflowExclusionSigmas', r.inflowExclusionSigmas > 0, 'must be > 0');
  need('inflowMinCellsPerRow', Number.isInteger(r.inflowMinCellsPerRow) && r.inflowMinCellsPerRow >= 1, 'must be an integer >= 1');
  need('diskMinCoverage', r.diskMinCoverage > 0 && r.diskMinCoverage <= 1, 'must be in (0, 1]');
  need('centroidFraction', r.centroidFraction >= 0 && r.centroidFraction < 1, 'must be in [0, 1)');
  need('minWidthCells', r.minWidthCells >= 0, 'must be >= 0');
  need('maxWidth_D', r.maxWidth_D > 0, 'must be > 0');
  need('rewsSegments', Number.isInteger(r.rewsSegments) && r.rewsSegments >= 0, 'must be an integer >= 0 (0 = automatic)');
  need('topHatK', r.topHatK === undefined || r.topHatK > 0, 'must be > 0');
  need('jimenezBeta', r.jimenezBeta > 0, 'must be > 0');
  return r;
}
