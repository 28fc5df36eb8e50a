/**
 * Retrieval of one averaging window (or of an ensemble of windows): from the per-key statistics of the kept samples
 * (cellStats.ts, produced by the robust filter from a window's accumulator), per-instrument means, then a weighted
 * least-squares wind vector per cell with uncertainties, geometry figures and per-component masks.
 * See solveCell.ts for the estimator, its sources and its limits, robustFilter.ts for the outlier rule.
 *
 * Masks per component (MaskReason): no_data (no kept sample in the cell); too_few_samples (the cell has enough
 * instruments for the component, but too few of them reach minSamplesPerInstrument); too_few_instruments (fewer
 * instruments than the component needs: three for u, v, w; two for u, v with the w-zero assumption); singular;
 * amplification (the component's error amplification > maxAmplification; the other components stay valid);
 * assumed_zero (w in a two-instrument cell solved with w = 0; with w-zero allowed, also in a cell of three or more
 * instruments whose three-component solve loses u or v, mostly to amplification, where the w = 0 solve keeps more).
 *
 * Cell counters: `samples` = kept samples of the instruments used (those with >= minSamplesPerInstrument);
 * `instruments` = how many instruments were used. Samples of instruments below the minimum are not outliers and
 * are not counted as used.
 *
 * Cost: O(keys); allocation per window and per cell, never per sample. `retrieveWindow` takes a window's samples
 * as arrays (grid/windowSamples.ts), accumulates them and runs the same path: the entry point for callers holding
 * samples in memory.
 */
import type { WindowSamples } from '../grid/windowSamples.ts';
import { CellAccumulator } from '../grid/accumulator.ts';
import { invertSym3, normalMatrix } from '../geometry/amplification.ts';
import { instrumentMeans, type CellStats } from './cellStats.ts';
import { robustFilter, samplingSums, type WindowSampling } from './robustFilter.ts';
import { DEFAULT_SIGMA_FLOOR_MS, W_ZERO_ASSUMPTION, type PlaneGrid, type RetrievalSettings } from './settings.ts';
import { emptyCellSolution, solve2, solve3, type CellSolution } from './solveCell.ts';
import { MaskReason, type FieldResult, type WindowInfo } from './types.ts';
import { fieldBudget, type PlaneCells } from './fieldBudget.ts';

export type { PlaneGrid, RetrievalSettings } from './settings.ts';

export interface WindowRetrieval {
  /** One field per plane, in the order of `planes`. */
  fields: FieldResult[];
  /** Samples rejected by the robust filter, per instrument. */
  outliers: Float64Array;
}

/** First key-space cell of each plane (in the order of `planes`), length planes.length + 1. */
export function cellOffsets(planes: PlaneGrid[]): Uint32Array {
  const off = new Uint32Array(planes.length + 1);
  for (let j = 0; j < planes.length; j++) off[j + 1] = off[j] + planes[j].grid.ny * planes[j].grid.nz;
  return off;
}

/** Number of keys of a window over these planes: all cells times instruments. */
export function keyCountOf(planes: PlaneGrid[], instrumentCount: number): number {
  return cellOffsets(planes)[planes.length] * instrumentCount;
}

/**
 * Accumulate samples held in arrays (plane = PlaneSpec.index, cell, instrument, v_r, rotor-frame unit vector,
 * in-plane position). Throws RangeError for a sample whose plane is not among `planes`, whose cell is outside its
 * grid or whose instrument index is >= instrumentCount (an upstream bug, not a data problem).
 */
export function accumulateSamples(samples: WindowSamples, planes: PlaneGrid[], instrumentCount: number, tMid = NaN): CellAccumulator {
  const I = instrumentCount;
  const off = cellOffsets(planes);
  let maxIndex = 0;
  for (const p of planes) maxIndex = Math.max(maxIndex, p.spec.index);
  const planePos = new Int32Array(maxIndex + 1).fill(-1);
  planes.forEach((p, j) => (planePos[p.spec.index] = j));
  const acc = new CellAccumulator(off[planes.length] * I, I);
  const time = samples.time;
  for (let i = 0; i < samples.length; i++) {
    const p = samples.plane[i];
    const j = p < planePos.length ? planePos[p] : -1;
    if (j < 0) throw new RangeError(`sample ${i}: plane index ${p} is not among the planes retrieved`);
    const c = samples.cell[i];
    if (c >= off[j + 1] - off[j]) throw new RangeError(`sample ${i}: cell ${c} outside plane ${p}'s grid`);
    const ins = samples.instrument[i];
    if (ins >= I) throw new RangeError(`sample ${i}: instrument ${ins} >= instrumentCount ${I}`);
    acc.add((off[j] + c) * I + ins, samples.vr[i], samples.nx[i], samples.ny[i], samples.nz[i], samples.py[i], samples.pz[i], time ? time[i] : NaN, tMid);
  }
  return acc;
}

function emptyField(pg: PlaneGrid, window: WindowInfo, direction_deg: number): FieldResult {
  const nc = pg.grid.ny * pg.grid.nz;
  const nan = () => new Float64Array(nc).fill(NaN);
  const mask = () => new Uint8Array(nc).fill(MaskReason.noData);
  return {
    planeId: pg.spec.id,
    planeIndex: pg.spec.index,
    orientation: pg.spec.orientation,
    x_m: pg.spec.orientation === 'cross' ? pg.spec.x_m : NaN,
    z_m: pg.spec.orientation === 'horizontal' ? pg.spec.z_m : NaN,
    window,
    direction_deg,
    grid: { ...pg.grid },
    u: nan(), v: nan(), w: nan(), su: nan(), sv: nan(), sw: nan(),
    dopU: nan(), dopV: nan(), dopW: nan(), cond: nan(), minCrossing_deg: nan(),
    yEff: nan(), zEff: nan(),
    samples: new Uint32Array(nc),
    instruments: new Uint8Array(nc),
    maskU: mask(), maskV: mask(), maskW: mask(),
    assumptions: [],
    // Present from the start (filled by the budget pass): a property added later gives the object another shape,
    // and the stages' optimised code, made for one shape, went back to the interpreter on the other.
    budget: undefined,
  };
}

/**
 * Effective position of the u estimate in cell c. The solution is U = H m with H = (A^T W A)^-1 A^T W, so with
 * instrument i's mean radial velocity taken at its mean sample position p_i, and u varying linearly across the cell
 * (the wake's dominant gradient), u_hat = u(sum_i c_i p_i) with c_i = H_ui A_iu and sum_i c_i = 1 (since H A = I).
 * The weights are exact for that case; they tell where in the cell the retrieved u belongs. `dims` = 3 for the
 * three-component solve, 2 for the two-component (w = 0) one.
 */
function effectivePosition(
  rows: Float64Array, wts: Float64Array, py: Float64Array, pz: Float64Array, K: number, dims: 2 | 3, f: FieldResult, c: number,
): void {
  let inv0: [number, number, number];
  if (dims === 3) {
    const inv = invertSym3(normalMatrix(rows, K, wts));
    inv0 = [inv[0], inv[1], inv[2]];
  } else {
    let a = 0, b = 0, d = 0;
    for (let i = 0; i < K; i++) {
      const x = rows[i * 3], y = rows[i * 3 + 1], w = wts[i];
      a += w * x * x; b += w * x * y; d += w * y * y;
    }
    const det = a * d - b * b;
    inv0 = [d / det, -b / det, 0];
  }
  let y = 0, z = 0, sum = 0;
  for (let i = 0; i < K; i++) {
    const h = wts[i] * (inv0[0] * rows[i * 3] + inv0[1] * rows[i * 3 + 1] + inv0[2] * rows[i * 3 + 2]);
    const ci = h * rows[i * 3];
    y += ci * py[i]; z += ci * pz[i]; sum += ci;
  }
  if (Number.isFinite(y) && Math.abs(sum - 1) < 1e-6) {
    f.yEff[c] = y; f.zEff[c] = z;
  }
}

function store(f: FieldResult, c: number, s: CellSolution): void {
  f.u[c] = s.u; f.v[c] = s.v; f.w[c] = s.w;
  f.su[c] = s.su; f.sv[c] = s.sv; f.sw[c] = s.sw;
  f.dopU[c] = s.dopU; f.dopV[c] = s.dopV; f.dopW[c] = s.dopW;
  f.cond[c] = s.cond; f.minCrossing_deg[c] = s.minCrossing_deg;
  f.maskU[c] = s.maskU; f.maskV[c] = s.maskV; f.maskW[c] = s.maskW;
}

/**
 * Retrieve every plane of one window from its samples in arrays. `samples` hold rotor-frame unit vectors (see
 * grid/windowSamples.ts); `direction_deg` is the wind direction that defined that frame (recorded in each field).
 */
export function retrieveWindow(
  samples: WindowSamples, planes: PlaneGrid[], window: WindowInfo, direction_deg: number, settings: RetrievalSettings,
): WindowRetrieval {
  const acc = accumulateSamples(samples, planes, settings.instrumentCount, (window.start_s + window.end_s) / 2);
  const { stats, outliers, sampling } = robustFilter(acc, settings.robust, window);
  return { fields: retrieveStats(stats, planes, window, direction_deg, settings, sampling), outliers };
}

/** 1 when a u or v mask loses the component (anything but ok), else 0. */
function uvLost(mask: number): number {
  return mask === MaskReason.ok ? 0 : 1;
}

/**
 * Retrieve every plane from kept-sample statistics (one window, or the merged statistics of an ensemble).
 * `direction_deg` is the wind direction that defined the rotor frame (recorded in each field). `sampling` (one
 * window with the budget on, from robustFilter): once every plane is solved, the budget sums of `stats` are refined
 * with the cells' velocities (robustFilter.ts samplingSums) before the budget pass; an ensemble's merged `stats`
 * already hold its windows' refined sums.
 */
export function retrieveStats(
  stats: CellStats, planes: PlaneGrid[], window: WindowInfo, direction_deg: number, settings: RetrievalSettings, sampling?: WindowSampling,
): FieldResult[] {
  const I = settings.instrumentCount;
  if (stats.instrumentCount !== I || stats.keyCount !== keyCountOf(planes, I)) {
    throw new RangeError(`statistics of ${stats.keyCount} keys do not match ${planes.length} planes and ${I} instruments`);
  }
  const cellOffset = cellOffsets(planes);
  const st = instrumentMeans(stats);

  const floor = settings.sigmaFloor_ms ?? DEFAULT_SIGMA_FLOOR_MS;
  const floor2 = floor * floor;
  const minN = settings.minSamplesPerInstrument;
  const wZero = settings.twoInstrumentAssumption === 'w-zero';
  const rows = new Float64Array(I * 3), geom = new Float64Array(I * 3), m = new Float64Array(I), wts = new Float64Array(I);
  const posY = new Float64Array(I), posZ = new Float64Array(I);
  const sol = emptyCellSolution(), sol2 = emptyCellSolution();
  const fields: FieldResult[] = [];
  const budget = settings.budget?.enabled ? settings.budget : undefined;
  const planeCells: PlaneCells[] = [];

  for (let j = 0; j < planes.length; j++) {
    const f = emptyField(planes[j], window, direction_deg);
    const nc = planes[j].grid.ny * planes[j].grid.nz;
    let usedWZero = false;
    const cells: PlaneCells | undefined = budget ? { K: new Uint8Array(nc), keys: new Int32Array(nc * I), I } : undefined;
    for (let c = 0; c < nc; c++) {
      const base = (cellOffset[j] + c) * I;
      let present = 0, K = 0, used = 0;
      for (let i = 0; i < I; i++) {
        const k = base + i;
        const n = st.n[k];
        if (n === 0) continue;
        present++;
        if (n < minN) continue;
        rows[K * 3] = st.nx[k]; rows[K * 3 + 1] = st.ny[k]; rows[K * 3 + 2] = st.nz[k];
        const len = st.len[k];
        geom[K * 3] = st.nx[k] / len; geom[K * 3 + 1] = st.ny[k] / len; geom[K * 3 + 2] = st.nz[k] / len;
        m[K] = st.vr[k];
        const v = st.variance[k];
        wts[K] = n / (v > floor2 ? v : floor2);
        used += n;
        posY[K] = st.py[k]; posZ[K] = st.pz[k];
        if (cells) cells.keys[c * I + K] = k;
        K++;
      }
      if (present === 0) continue; // stays no_data
      f.samples[c] = used;
      f.instruments[c] = K;
      if (cells) cells.K[c] = K;
      let dims: 2 | 3 = K >= 3 ? 3 : 2;
      if (K >= 3) {
        solve3(rows, geom, m, wts, K, settings.maxAmplification, sol);
        const lost3 = uvLost(sol.maskU) + uvLost(sol.maskV);
        if (wZero && lost3 > 0) {
          // Three or more scanners near the ground: w is barely seen, and solving for it can spoil u and v (their
          // amplification over the limit) where the same beams give u, v well with w = 0, as two scanners would.
          // The w-zero solution is taken when it keeps more of u and v (stated, as in a two-instrument cell).
          solve2(rows, geom, m, wts, K, settings.maxAmplification, sol2);
          if (uvLost(sol2.maskU) + uvLost(sol2.maskV) < lost3) {
            Object.assign(sol, sol2);
            usedWZero = true;
            dims = 2;
          }
        }
      } else if (K === 2 && wZero) {
        solve2(rows, geom, m, wts, K, settings.maxAmplification, sol);
        if (sol.maskW === MaskReason.assumedZero) usedWZero = true;
      } else {
        const need = wZero ? 2 : 3;
        const reason = present >= need ? MaskReason.tooFewSamples : MaskReason.tooFewInstruments;
        sol.u = sol.v = sol.w = sol.su = sol.sv = sol.sw = NaN;
        sol.dopU = sol.dopV = sol.dopW = sol.cond = sol.minCrossing_deg = NaN;
        sol.maskU = sol.maskV = sol.maskW = reason;
      }
      store(f, c, sol);
      if (Number.isFinite(sol.u)) effectivePosition(rows, wts, posY, posZ, K, dims, f, c);
    }
    if (usedWZero) f.assumptions.push(W_ZERO_ASSUMPTION);
    fields.push(f);
    if (cells) planeCells.push(cells);
  }
  if (!budget) return fields;
  if (sampling) {
    // The cells' velocities per key (w = 0 where it was not solved), for the burst residuals of the sampling term.
    const vel = new Float64Array(stats.keyCount * 3).fill(NaN);
    fields.forEach((f, j) => {
      const nc = planes[j].grid.ny * planes[j].grid.nz;
      for (let c = 0; c < nc; c++) {
        if (!Number.isFinite(f.u[c]) || !Number.isFinite(f.v[c])) continue;
        const w = Number.isFinite(f.w[c]) ? f.w[c] : 0;
        for (let i = 0, k = (cellOffset[j] + c) * I; i < I; i++, k++) {
          vel[k * 3] = f.u[c]; vel[k * 3 + 1] = f.v[c]; vel[k * 3 + 2] = w;
        }
      }
    });
    samplingSums(stats, sampling, vel);
  }
  fields.forEach((f, j) => {
    const spec = planes[j].spec;
    fieldBudget(f, planeCells[j], st, stats, budget, floor2, spec.orientation === 'cross' ? spec.x_m : spec.z_m);
  });
  return fields;
}
