/**
 * Trust of each cell of a plane, from the beams of all instruments (see beamCells.ts).
 *
 * The beams that can serve a cell (no hard flag) form the rows of A. With three or more, the error amplification of
 * u, v, w is sqrt(diag((A^T A)^-1)) (geometry/amplification.ts, amplification3); with two and the campaign's w = 0
 * assumption, u and v come from the two-component system (amplification2) and w is not resolved. With three or more
 * whose three-component system loses u or v to amplification, the w = 0 system is taken when it keeps more of them,
 * as the run's retrieval does (its amplification and condition number reported, w not resolved, and the crossing
 * criterion on the best two beams' u, v projections, bestPairCrossingAngleUV). A component passes
 * when its amplification is at most retrieval.maxAmplification and the cell carries no soft flag: crossing angle
 * below plan.minCrossing_deg (nearly parallel beams: with three or more beams, no three of them whose smallest
 * crossing reaches it, bestTripleCrossingAngle, so an extra beam beside another never costs trust; for two beams under
 * w = 0 the angle between their projections on the u, v plane, minCrossingAngleUV), a probe footprint wider than plan.maxFootprintCells, or a
 * CW focus beyond the validity of the probe formula. A cell is trusted when all three components pass.
 *
 * Each cell gets one category, the first that applies in this order: trusted; fewer than two usable beams (named
 * after the hard limit that removed beams: ground, terrain, rotor, elevation, range, else too_few_instruments); parallel_beams;
 * footprint; probe_model; amplification (u or v fails); w_not_resolved (u and v pass, w does not).
 *
 * Target components: what the layout is asked to resolve in a plane (components.ts): u, v and w in a cross plane
 * with three or more plane scanners; u and v in a horizontal plane (near-horizontal beams do not resolve w) and with
 * two scanners (w = 0 assumed). "Trusted" and the fraction `all` refer to the target components.
 */
import { amplification2, amplification3, bestPairCrossingAngleUV, bestTripleCrossingAngle, invertSym3, minCrossingAngle, minCrossingAngleUV, normalMatrix } from '../geometry/amplification.ts';
import { BeamFlag, HARD_BEAM_FLAGS, type BeamCells } from './beamCells.ts';
import type { PlanSettings } from './settings.ts';

export const TrustCategory = {
  trusted: 0,
  w_not_resolved: 1,
  amplification: 2,
  parallel_beams: 3,
  footprint: 4,
  probe_model: 5,
  too_few_instruments: 6,
  range: 7,
  elevation: 8,
  ground: 9,
  terrain: 10,
  rotor: 11,
} as const;
export const trustCategoryName: readonly string[] = Object.keys(TrustCategory);

/** Reason bits per cell (several may apply). */
export const CellReason = {
  ground: 1,
  elevation: 2,
  range: 4,
  footprint: 8,
  probeModel: 16,
  parallelBeams: 32,
  amplificationU: 64,
  amplificationV: 128,
  amplificationW: 256,
  /** Fewer than three usable beams: w (and with fewer than two, u and v) cannot be resolved. */
  tooFewInstruments: 512,
  /** Beams blocked by the terrain. */
  terrain: 1024,
  /** Beams through a rotor disk. */
  rotor: 2048,
} as const;

export function cellReasonNames(bits: number): string[] {
  return Object.entries(CellReason)
    .filter(([, b]) => bits & b)
    .map(([k]) => k);
}

export interface CellTrust {
  dopU: Float64Array;
  dopV: Float64Array;
  dopW: Float64Array;
  /** Condition number of A (usable beams; the two-column system for two beams). */
  cond: Float64Array;
  minCrossing_deg: Float64Array;
  /** Number of usable beams. */
  usable: Uint8Array;
  passU: Uint8Array;
  passV: Uint8Array;
  passW: Uint8Array;
  /** Every target component passes (u, v, w; or u, v: TrustSettings.components). */
  passTarget: Uint8Array;
  category: Uint8Array;
  reasons: Uint16Array;
}

type TrustSettings = Pick<PlanSettings, 'maxAmplification' | 'minCrossing_deg' | 'twoInstrumentAssumption'> & {
  /** Components the plane is to resolve. @default 'uvw' */
  components?: 'uvw' | 'uv';
};

/**
 * Options: `withCond` (default true) computes the condition number (an eigen-decomposition per cell); the layout
 * search turns it off, as the pass/fail decision does not use it (cond is then NaN for cells with three beams or more).
 */
export function assessCells(beams: readonly Pick<BeamCells, 'dir' | 'flags'>[], nCells: number, s: TrustSettings, withCond = true): CellTrust {
  const t: CellTrust = {
    dopU: new Float64Array(nCells).fill(NaN),
    dopV: new Float64Array(nCells).fill(NaN),
    dopW: new Float64Array(nCells).fill(NaN),
    cond: new Float64Array(nCells).fill(NaN),
    minCrossing_deg: new Float64Array(nCells).fill(NaN),
    usable: new Uint8Array(nCells),
    passU: new Uint8Array(nCells),
    passV: new Uint8Array(nCells),
    passW: new Uint8Array(nCells),
    passTarget: new Uint8Array(nCells),
    category: new Uint8Array(nCells),
    reasons: new Uint16Array(nCells),
  };
  const rows = new Float64Array(3 * beams.length);
  const maxA = s.maxAmplification;
  const uvOnly = s.components === 'uv';
  for (let c = 0; c < nCells; c++) {
    let k = 0, hard = 0, soft = 0;
    for (const b of beams) {
      const f = b.flags[c];
      if (f & HARD_BEAM_FLAGS) {
        hard |= f & HARD_BEAM_FLAGS;
        continue;
      }
      soft |= f;
      rows[3 * k] = b.dir[3 * c]; rows[3 * k + 1] = b.dir[3 * c + 1]; rows[3 * k + 2] = b.dir[3 * c + 2];
      k++;
    }
    t.usable[c] = k;
    let reasons = hard & (CellReason.ground | CellReason.elevation | CellReason.range); // same bit values as BeamFlag
    if (hard & BeamFlag.terrain) reasons |= CellReason.terrain;
    if (hard & BeamFlag.rotor) reasons |= CellReason.rotor;
    if (soft & BeamFlag.footprint) reasons |= CellReason.footprint;
    if (soft & BeamFlag.probeModel) reasons |= CellReason.probeModel;
    let okU = false, okV = false, okW = false;
    let wZero3 = false; // three or more beams judged as the w = 0 system
    if (k >= 3) {
      let du: number, dv: number, dw: number;
      if (withCond) {
        const a = amplification3(rows, k);
        [du, dv, dw] = a.dop;
        t.cond[c] = a.cond;
        t.minCrossing_deg[c] = a.minCrossing_deg;
      } else {
        const inv = invertSym3(normalMatrix(rows, k));
        du = Math.sqrt(inv[0]); dv = Math.sqrt(inv[4]); dw = Math.sqrt(inv[8]);
        t.minCrossing_deg[c] = minCrossingAngle(rows, k);
      }
      t.dopU[c] = du; t.dopV[c] = dv; t.dopW[c] = dw;
      okU = du <= maxA; okV = dv <= maxA; okW = dw <= maxA;
      if (s.twoInstrumentAssumption === 'w-zero' && !(okU && okV)) {
        // The run solves such a cell for u and v with w = 0 when that keeps more of them (retrieval/retrieveWindow.ts:
        // beams whose vertical and along-wind parts move together confound u with w); judged here as it will be.
        const a2 = amplification2(rows, k);
        const ok2U = a2.dop[0] <= maxA, ok2V = a2.dop[1] <= maxA;
        if (Number(ok2U) + Number(ok2V) > Number(okU) + Number(okV)) {
          t.dopU[c] = a2.dop[0]; t.dopV[c] = a2.dop[1]; t.dopW[c] = NaN;
          if (withCond) t.cond[c] = a2.cond;
          okU = ok2U; okV = ok2V; okW = false;
          wZero3 = true;
        }
      }
    } else if (k === 2) {
      const a = amplification2(rows, 2);
      t.dopU[c] = a.dop[0]; t.dopV[c] = a.dop[1];
      t.cond[c] = a.cond;
      t.minCrossing_deg[c] = minCrossingAngleUV(rows, 2);
      const allowed = s.twoInstrumentAssumption === 'w-zero';
      okU = allowed && a.dop[0] <= maxA; okV = allowed && a.dop[1] <= maxA;
    }
    if (k < 3) reasons |= CellReason.tooFewInstruments;
    // Crossing criterion: two beams (w = 0) by their u, v crossing; three or more by the best three of them, so that
    // a redundant beam nearly parallel to another never fails a cell (least squares: adding a beam can only lower
    // the amplification). minCrossing_deg still reports the smallest angle between any two usable beams.
    // Three or more judged with w = 0: the best two of them in u, v (the w = 0 system needs two crossing beams).
    const crossing = wZero3 ? bestPairCrossingAngleUV(rows, k) : k >= 3 ? bestTripleCrossingAngle(rows, k) : t.minCrossing_deg[c];
    if (k >= 2 && crossing < s.minCrossing_deg) reasons |= CellReason.parallelBeams;
    if (k >= 2 && !(t.dopU[c] <= maxA)) reasons |= CellReason.amplificationU;
    if (k >= 2 && !(t.dopV[c] <= maxA)) reasons |= CellReason.amplificationV;
    if (k >= 3 && !(t.dopW[c] <= maxA)) reasons |= CellReason.amplificationW;
    const softFail = (reasons & (CellReason.parallelBeams | CellReason.footprint | CellReason.probeModel)) !== 0;
    t.passU[c] = okU && !softFail ? 1 : 0;
    t.passV[c] = okV && !softFail ? 1 : 0;
    t.passW[c] = okW && !softFail ? 1 : 0;
    t.reasons[c] = reasons;
    const target = t.passU[c] & t.passV[c] & (uvOnly ? 1 : t.passW[c]);
    t.passTarget[c] = target;
    let cat: number;
    if (target) cat = TrustCategory.trusted;
    else if (k < 2 || (k === 2 && s.twoInstrumentAssumption === 'none'))
      cat = hard & BeamFlag.ground ? TrustCategory.ground : hard & BeamFlag.terrain ? TrustCategory.terrain : hard & BeamFlag.rotor ? TrustCategory.rotor
        : hard & BeamFlag.elevation ? TrustCategory.elevation : hard & BeamFlag.range ? TrustCategory.range : TrustCategory.too_few_instruments;
    else if (reasons & CellReason.parallelBeams) cat = TrustCategory.parallel_beams;
    else if (reasons & CellReason.footprint) cat = TrustCategory.footprint;
    else if (reasons & CellReason.probeModel) cat = TrustCategory.probe_model;
    else if (!t.passU[c] || !t.passV[c]) cat = TrustCategory.amplification;
    else cat = TrustCategory.w_not_resolved;
    t.category[c] = cat;
  }
  return t;
}

export interface Fractions {
  u: number;
  v: number;
  w: number;
  /** Every target component passes (u, v and w; or u and v where the plane targets only those: passTarget). */
  all: number;
  /** Number of cells counted. */
  cells: number;
}

/** Fractions of the cells (those with mask[c] = 1, or all) where each component passes. NaN when no cell counts. */
export function passFractions(t: Pick<CellTrust, 'passU' | 'passV' | 'passW'> & { passTarget?: Uint8Array }, mask?: Uint8Array): Fractions {
  let n = 0, u = 0, v = 0, w = 0, all = 0;
  for (let c = 0; c < t.passU.length; c++) {
    if (mask && !mask[c]) continue;
    n++;
    u += t.passU[c]; v += t.passV[c]; w += t.passW[c];
    all += t.passTarget ? t.passTarget[c] : t.passU[c] & t.passV[c] & t.passW[c];
  }
  return n ? { u: u / n, v: v / n, w: w / n, all: all / n, cells: n } : { u: NaN, v: NaN, w: NaN, all: NaN, cells: 0 };
}

/** Fractions pooled over several sets of cells (weighted by their cell counts). */
export function poolFractions(list: readonly Fractions[]): Fractions {
  let n = 0, u = 0, v = 0, w = 0, all = 0;
  for (const f of list) {
    if (!f.cells) continue;
    n += f.cells; u += f.u * f.cells; v += f.v * f.cells; w += f.w * f.cells; all += f.all * f.cells;
  }
  return n ? { u: u / n, v: v / n, w: w / n, all: all / n, cells: n } : { u: NaN, v: NaN, w: NaN, all: NaN, cells: 0 };
}
