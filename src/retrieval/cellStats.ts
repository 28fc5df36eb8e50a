/**
 * Per-key statistics after the robust filter, as plain sums in SI units (dense over all keys of a window's planes:
 * key = (cellOffset[plane] + cell) * instrumentCount + instrument). Sums merge by addition, so an ensemble of windows
 * is the element-wise sum of their CellStats, and the retrieval of the ensemble is the retrieval of that sum: the
 * same as one window over the pooled kept samples, to rounding.
 *
 * n: kept samples; sv, sv2: sum of v_r (m/s) and of v_r^2; sx, sy, sz: sum of the rotor-frame beam unit vectors;
 * spy, spz: sum of the in-plane positions (m).
 *
 * Uncertainty-budget sums (retrieval/sampling.ts computes them per window; zero when the budget is off), additive
 * over windows so that an ensemble's budget is that of its pooled windows: st, sum of n (mean sample time - window
 * middle) (s); se, sum of n e with e the key's trend error (m/s, signed: trend times the time offset); vb, sum of
 * n^2 u_b^2 with u_b^2 the key's sampling variance beyond s^2 / n (m^2/s^2; the ensemble's is vb / n^2, windows being
 * independent); vt, vn: sums of n s_t^2 and n s_n^2 (turbulence and noise variance of v_r, m^2/s^2) over the windows
 * where they were estimated, nb the sum of their n; ta: sum of n tau (integral time scale, s) over the same windows;
 * ne: sum of the effective sample counts.
 */
export interface CellStats {
  keyCount: number;
  instrumentCount: number;
  n: Float64Array;
  sv: Float64Array;
  sv2: Float64Array;
  sx: Float64Array;
  sy: Float64Array;
  sz: Float64Array;
  spy: Float64Array;
  spz: Float64Array;
  st: Float64Array;
  se: Float64Array;
  vb: Float64Array;
  vt: Float64Array;
  vn: Float64Array;
  nb: Float64Array;
  ta: Float64Array;
  ne: Float64Array;
}

/** The additive per-key arrays of CellStats, in one list (merging and serialising take every one). */
export const CELL_STATS_SUMS = ['n', 'sv', 'sv2', 'sx', 'sy', 'sz', 'spy', 'spz', 'st', 'se', 'vb', 'vt', 'vn', 'nb', 'ta', 'ne'] as const;

export function emptyCellStats(keyCount: number, instrumentCount: number): CellStats {
  const z = () => new Float64Array(keyCount);
  return {
    keyCount, instrumentCount, n: z(), sv: z(), sv2: z(), sx: z(), sy: z(), sz: z(), spy: z(), spz: z(),
    st: z(), se: z(), vb: z(), vt: z(), vn: z(), nb: z(), ta: z(), ne: z(),
  };
}

/** into += from (same key space). */
export function mergeCellStats(into: CellStats, from: CellStats): void {
  if (into.keyCount !== from.keyCount || into.instrumentCount !== from.instrumentCount) {
    throw new RangeError(`cannot merge statistics of ${from.keyCount} keys into ${into.keyCount}`);
  }
  for (let k = 0; k < into.keyCount; k++) {
    if (from.n[k] === 0) continue;
    into.n[k] += from.n[k];
    into.sv[k] += from.sv[k]; into.sv2[k] += from.sv2[k];
    into.sx[k] += from.sx[k]; into.sy[k] += from.sy[k]; into.sz[k] += from.sz[k];
    into.spy[k] += from.spy[k]; into.spz[k] += from.spz[k];
    into.st[k] += from.st[k]; into.se[k] += from.se[k]; into.vb[k] += from.vb[k];
    into.vt[k] += from.vt[k]; into.vn[k] += from.vn[k]; into.nb[k] += from.nb[k];
    into.ta[k] += from.ta[k]; into.ne[k] += from.ne[k];
  }
}

/**
 * Per-key means of the kept samples: count n, mean radial velocity, mean beam unit vector (rotor frame) and its
 * length, the sample variance s^2 of v_r (denominator n - 1; NaN for n = 1) and the mean in-plane position.
 *
 * The mean vector is kept unnormalised for the solve: for a wind uniform over the cell, mean(v_r) = mean(n) . U
 * exactly, while the renormalised mean would bias v_r by the factor |mean(n)| = 1 - (angular variance)/2 (about
 * 1e-4 for a 1 degree spread). The renormalised direction (nx/len, ...) describes the geometry (amplification,
 * condition, crossing angle).
 */
export interface InstrumentMeans {
  n: Float64Array;
  vr: Float64Array;
  nx: Float64Array;
  ny: Float64Array;
  nz: Float64Array;
  variance: Float64Array;
  /** Length of the mean unit vector (1 when every sample has the same beam direction). */
  len: Float64Array;
  /** Mean in-plane position of the kept samples, metres. */
  py: Float64Array;
  pz: Float64Array;
}

export function instrumentMeans(st: CellStats): InstrumentMeans {
  const K = st.keyCount;
  const nan = () => new Float64Array(K).fill(NaN);
  const out: InstrumentMeans = { n: st.n, vr: nan(), nx: nan(), ny: nan(), nz: nan(), variance: nan(), len: nan(), py: nan(), pz: nan() };
  for (let k = 0; k < K; k++) {
    const c = st.n[k];
    if (c === 0) continue;
    const m = st.sv[k] / c;
    out.vr[k] = m;
    out.nx[k] = st.sx[k] / c; out.ny[k] = st.sy[k] / c; out.nz[k] = st.sz[k] / c;
    out.py[k] = st.spy[k] / c; out.pz[k] = st.spz[k] / c;
    out.len[k] = Math.hypot(out.nx[k], out.ny[k], out.nz[k]);
    if (c > 1) {
      const ss = st.sv2[k] - st.sv[k] * m;
      out.variance[k] = Math.max(0, ss) / (c - 1);
    }
  }
  return out;
}
