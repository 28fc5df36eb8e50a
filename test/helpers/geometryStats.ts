/**
 * Hand-made kept-sample statistics for the single-instrument solvers: each key gets n samples whose mean radial
 * velocity, sample standard deviation and beam vector are given exactly (half the samples at mean + s', half at
 * mean - s', s' chosen so that the n - 1 standard deviation is s; n even).
 */
import { emptyCellStats, type CellStats } from '../../src/retrieval/cellStats.ts';

export function statsOf(keyCount: number, instrumentCount: number): CellStats {
  return emptyCellStats(keyCount, instrumentCount);
}

export function putKey(st: CellStats, key: number, n: number, mean: number, sd: number, beam: [number, number, number], py = 0, pz = 0): void {
  const half = sd * Math.sqrt((n - 1) / n);
  st.n[key] = n;
  st.sv[key] = n * mean;
  st.sv2[key] = n * (mean * mean + half * half);
  st.sx[key] = n * beam[0]; st.sy[key] = n * beam[1]; st.sz[key] = n * beam[2];
  st.spy[key] = n * py; st.spz[key] = n * pz;
}

export function beamOf(az: number, el: number): [number, number, number] {
  const a = (az * Math.PI) / 180, e = (el * Math.PI) / 180;
  return [Math.cos(e) * Math.sin(a), Math.cos(e) * Math.cos(a), Math.sin(e)];
}
