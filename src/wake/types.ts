/**
 * Wake-analysis results. Everything is in SI units and the rotor frame (x downstream, y to the LEFT looking
 * downstream, z up = height above the turbine's ground level). "D" is the rotor diameter; "deficit" is
 * 1 - u / u_inf(z) (dimensionless, positive in the wake). NaN marks a value that could not be computed; every
 * per-plane-and-window row carries a flag and a reason instead of a silent number.
 *
 * Stability: fields are only ever added, never renamed or removed (the images and the report read this file).
 */
import type { GridSpec } from '../grid/grid.ts';
import type { WindowInfo } from '../retrieval/types.ts';

/** Where the undisturbed inflow profile came from. */
export type InflowSource = 'series' | 'plane' | 'fixed' | 'profile' | 'upstream';
/** Vertical profile law: power V = V_ref (z/z_ref)^alpha, or log V = (u_star / kappa) ln(z/z0) with kappa = 0.40. */
export type InflowLaw = 'power' | 'log';

export interface InflowProfile {
  source: InflowSource;
  law: InflowLaw;
  /** Reference height of the power law, metres (the hub height). */
  zRef_m: number;
  /** Power law: speed at zRef_m, m/s (NaN for log). */
  uRef_ms: number;
  /** Power law shear exponent (NaN for log). */
  alpha: number;
  /** Log law friction velocity, m/s (NaN for power). */
  uStar_ms: number;
  /** Log law roughness length, metres (NaN for power). */
  z0_m: number;
  /** Speed of the fitted law at hub height, m/s. */
  hubSpeed_ms: number;
  /** The points the law was fitted to (bin-mean heights and speeds), ascending height; empty for 'fixed'. */
  heights_m: number[];
  speeds_ms: number[];
  /** Cells (plane) or rows (series) behind each point. */
  counts: number[];
  /** Standard uncertainty of each point's speed, m/s (profile source; absent otherwise: not propagated). */
  speedsSd_ms?: number[];
  /** Root-mean-square residual of the fit over the points, m/s (NaN for 'fixed'). */
  rmse_ms: number;
  /** Coefficient of determination over the points (NaN when undefined or 'fixed'). */
  r2: number;
  /** Mean wind direction (from) of the series in the window, degrees (series source only, else NaN). */
  direction_deg: number;
  /** false when no usable inflow could be formed (then the deficit is all NaN and the row is flagged). */
  ok: boolean;
  /** Why not ok, or a note (e.g. "cells |y - y_c| > 1 D excluded"). */
  note: string;
}

/** Parameters of the 2D Gaussian deficit: d(y, z) = A exp(-(y-yc)^2/(2 sy^2) - (z-zc)^2/(2 sz^2)) + offset. */
export interface Gaussian2DParams {
  amplitude: number;
  yc_m: number;
  zc_m: number;
  sigmaY_m: number;
  sigmaZ_m: number;
  /** Constant background (0 and stderr NaN when the offset was not fitted). */
  offset: number;
}

export interface Gaussian2DFit {
  params: Gaussian2DParams;
  /** Standard errors sqrt(diag((J^T J)^-1 SSR/(N - p))) at the solution, same units as params. */
  stderr: Gaussian2DParams;
  /** Parameter covariance, p x p, order amplitude, yc, zc, sigmaY, sigmaZ[, offset]. */
  covariance: number[][];
  fitOffset: boolean;
  /** Cells used (N) and degrees of freedom N - p. */
  n: number;
  dof: number;
  /** Sum of squared (weighted, when weighted) residuals minimised by the fit. */
  ssr: number;
  rmse: number;
  r2: number;
  iterations: number;
  converged: boolean;
}

/** A wake centre from one estimator. */
export interface CentreEstimate {
  method: 'gaussian' | 'min-power-disk' | 'deficit-centroid';
  y_m: number;
  z_m: number;
  /** Standard uncertainty, metres (NaN where the estimator gives none). */
  sy_m: number;
  sz_m: number;
  ok: boolean;
}

/** A 1D cut through the wake centre (horizontal: along y at z = zc; vertical: along z at y = yc). */
export interface Profile1D {
  /** Coordinate along the cut, metres (y for horizontal, z for vertical). */
  coord_m: number[];
  u_ms: number[];
  /** Standard uncertainty of u, m/s. */
  su_ms: number[];
  deficit: number[];
  /** The fitted Gaussian evaluated along the cut (NaN when no fit). */
  model: number[];
}

export type WakeFlag =
  | 'ok'
  /** Max deficit below the threshold: no wake in the plane. */
  | 'no_wake'
  /** Centre at/beyond the plane edge: the wake leaves the plane. */
  | 'off_edge'
  /** Fewer valid cells than needed for the fit. */
  | 'too_few_cells'
  /** Levenberg-Marquardt did not converge. */
  | 'not_converged'
  /** Widths non-positive, tiny or far larger than the plane. */
  | 'absurd_width'
  /** No usable inflow reference. */
  | 'no_inflow'
  /** Horizontal plane: no cross-section fit (see horizontalTrack). */
  | 'horizontal_plane';

export interface RewsResult {
  /** Rotor-equivalent wind speed over a rotor disk on the rotor axis (y = 0, z = hub), m/s. */
  axis_ms: number;
  /** The same on the wake centre (Gaussian centre if ok, else the disk centre), m/s. */
  centre_ms: number;
  /** Fraction of the disk area covered by valid cells (axis, centre), 0..1. */
  axisCoverage: number;
  centreCoverage: number;
  /** Number of horizontal segments used. */
  segments: number;
}

export interface WakePlaneWindow {
  planeId: string;
  planeIndex: number;
  orientation: 'cross' | 'horizontal';
  x_m: number;
  x_D: number;
  window: WindowInfo;
  /** Direction of the rotor frame in this window (from the field), degrees. */
  direction_deg: number;
  /** Wind direction used for the yaw offset, degrees (field's or series' wind_direction_deg). */
  windDirection_deg: number;
  /** Mean nacelle direction in the window, degrees (NaN without a turbine series). */
  nacelle_deg: number;
  /** gamma = nacelle - wind direction wrapped to [-180, 180), degrees; positive = nacelle clockwise (from above). */
  yawOffset_deg: number;
  /** Mean power in the window, kW (NaN when absent). */
  power_kW: number;
  inflow: InflowProfile;
  grid: GridSpec;
  /** Deficit field 1 - u/u_inf(z), grid-shaped, NaN where u is masked. */
  deficit: Float64Array;
  /** Largest deficit over valid cells (robust: 98th percentile), dimensionless. */
  maxDeficit: number;
  validCells: number;
  gaussian: Gaussian2DFit | null;
  /** The primary centre (the Gaussian fit's when it is ok, else NaN). */
  centre: CentreEstimate;
  /** Second, shape-independent estimators. */
  diskCentre: CentreEstimate;
  centroid: CentreEstimate;
  /** Distance between the Gaussian centre and the disk centre, metres and in D (NaN when either is missing). */
  disagreement_m: number;
  disagreement_D: number;
  rews: RewsResult;
  /** Deficit at hub height on the rotor axis (y = 0, z = hub), interpolated bilinearly. */
  hubDeficit: number;
  /** Deficit of the field at the primary wake centre (centreline deficit), interpolated bilinearly. */
  centreDeficit: number;
  /** Integral of u (U_inf(z) - u) dA over valid cells, m^4/s^2. */
  momentumDeficit_m4s2: number;
  /** momentumDeficit / ((pi/8) Ct D^2 U_hub^2). */
  momentumRatio: number;
  /** Thrust coefficient used (from the value or the curve at the hub-height inflow speed). */
  ct: number;
  horizontal: Profile1D;
  vertical: Profile1D;
  /** Horizontal planes only: per downstream row, 1D Gaussian lateral fit. */
  horizontalTrack?: { x_m: number[]; yc_m: number[]; syc_m: number[]; sigmaY_m: number[]; amplitude: number[] };
  flag: WakeFlag;
  /** Turbulence intensity of u in the wake, beside it (ambient) and added (wake/addedTurbulence.ts); NaN without the budget. */
  addedTurbulence?: { wake: number; ambient: number; added: number; wakeCells: number; ambientCells: number };
  /** Human-readable reason ('' when ok). */
  reason: string;
  /**
   * Several turbines (wake/siteWakes.ts): the turbine whose wake this row analyses, in its own rotor frame (x, y, z
   * from its tower base); the turbines whose wakes reach its rotor (nearest first); where its inflow came from; and
   * the measured wake centre just upstream of each turbine it wakes (its rotor frame, metres).
   */
  turbineId?: string;
  wakedBy?: string[];
  inflowFrom?: string;
  centreAtTurbines?: { turbineId: string; x_m: number; yc_m: number; syc_m: number }[];
}

/** Mean and spread over windows of one quantity. */
export interface Stat {
  mean: number;
  sd: number;
  n: number;
  /** Half-width of the 95 % confidence interval of the mean (Student t, n - 1 dof); NaN for n < 2. */
  ci95: number;
}

/** One cross plane summarised over its ok, near-aligned windows (|gamma| <= yawBin/2, or all without yaw data). */
export interface DownstreamPoint {
  planeId: string;
  x_m: number;
  x_D: number;
  amplitude: Stat;
  sigmaY_m: Stat;
  sigmaZ_m: Stat;
  /** sqrt(sigmaY sigmaZ) / D, the width the axisymmetric models use. */
  sigma_D: Stat;
  yc_m: Stat;
  zc_m: Stat;
  /** Deficit at the wake centre (centreline), from the field. */
  centreDeficit: Stat;
  hubDeficit: Stat;
  momentumRatio: Stat;
  /** Mean hub-height inflow speed, m/s, and Ct used. */
  hubSpeed_ms: number;
  ct: number;
}

export interface ModelCurve {
  x_D: number[];
  /** Centreline deficit of the model. */
  deficit: number[];
  /** Gaussian: sigma/D; top-hat: wake radius / D. */
  width_D: number[];
}

/** Fit of sigma/d0 = k* x/d0 + eps to the measured widths, Bastankhah & Porte-Agel (2014). */
export interface GaussianModelFit {
  kStar: number;
  eps: number;
  kStarSE: number;
  epsSE: number;
  /** 95 % intervals (Student t with dof); [NaN, NaN] when dof < 1. */
  kStarCI95: [number, number];
  epsCI95: [number, number];
  /** eps of the 2014 paper's formula 0.2 sqrt(beta) for this Ct, for comparison. */
  epsTheory: number;
  ct: number;
  ctSource: 'value' | 'curve';
  hubSpeed_ms: number;
  nPlanes: number;
  dof: number;
  rmse: number;
  /** Per plane: measured sigma/D, fitted, residual; measured amplitude, model amplitude. */
  residuals: { planeId: string; x_D: number; sigma_D: number; fitted_D: number; residual_D: number; amplitude: number; modelAmplitude: number }[];
  ok: boolean;
  /** e.g. "2 planes: exact line, no interval". */
  note: string;
}

export interface TopHatModel {
  /** The k of the curve: the fitted one when the fit is usable, else the default from the inflow. */
  k: number;
  ct: number;
  /** Where k came from, in words. */
  kNote: string;
  /** The default from the ambient turbulence intensity, k = 0.4 I (Pena et al. 2016), and that intensity. */
  kDefault: number;
  turbulenceIntensity: number;
  /** Least-squares fit to the planes' centreline deficits (NaN when not possible), with standard error and 95 % interval. */
  kFit: number;
  kFitSE: number;
  kFitCI95: [number, number];
  fitPlanes: number;
  fitRmse: number;
  fitOk: boolean;
  fitNote: string;
  /** 'fit', 'inflow' (the default) or 'option' (given explicitly). */
  kSource: 'fit' | 'inflow' | 'option';
}

export interface DownstreamResult {
  points: DownstreamPoint[];
  gaussianFit: GaussianModelFit;
  topHat: TopHatModel;
  /** Model curves on a fine x/D axis spanning the planes. */
  gaussianCurve: ModelCurve;
  topHatCurve: ModelCurve;
}

/** One yaw-offset bin of one cross plane. */
export interface SteeringBin {
  planeId: string;
  x_m: number;
  x_D: number;
  /** Bin centre and edges, degrees. */
  gammaCentre_deg: number;
  gammaLo_deg: number;
  gammaHi_deg: number;
  /** Mean yaw offset of the windows in the bin, degrees. */
  gammaMean_deg: number;
  n: number;
  /** Lateral wake centre (rotor-frame y, + = left looking downstream): mean, sd, 95 % CI half-width, metres. */
  yc_m: number;
  sd_m: number;
  ci95_m: number;
  yc_D: number;
  /**
   * yc minus the mean centre of the plane's bin around gamma = 0 (the wake's position without yaw, which includes
   * any offset not caused by yaw), metres; NaN when the plane has no such bin. Its 95 % half-width, approximate, combines both
   * bins' intervals in quadrature.
   */
  deflection_m: number;
  deflectionCi95_m: number;
  /** Thrust coefficient of the bin: the mean of its windows' Ct (each at its hub speed; the campaign's when none). */
  ct: number;
  /** Model deflections at the bin's mean gamma and its Ct, metres (Jimenez 2010; Bastankhah & Porte-Agel 2016). */
  jimenez_m: number;
  bastankhah_m: number;
}

export interface SteeringResult {
  bins: SteeringBin[];
  /** Model curves per cross plane on a gamma axis, metres. */
  curves: { planeId: string; x_D: number; gamma_deg: number[]; jimenez_m: number[]; bastankhah_m: number[] }[];
  ct: number;
  turbulenceIntensity: number;
  /** Why steering is empty (e.g. "no turbine series"), '' otherwise. */
  note: string;
}

export interface WakeAnalysis {
  rotorDiameter_m: number;
  hubHeight_m: number;
  rows: WakePlaneWindow[];
  downstream: DownstreamResult;
  steering: SteeringResult;
  /** Assumptions and notes to carry into the report/manifest. */
  notes: string[];
}
