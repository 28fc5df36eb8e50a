/**
 * Sampling statistics of one key (cell and instrument) of one window, from the budget sums of its accumulator
 * (grid/accumulator.ts): noise and turbulence variance, lag correlation, effective sample count, integral time
 * scale and the trend of the radial velocity. Pure; no allocation.
 *
 * Model. The key's samples, in the order they arrived, are a stationary series with autocovariance
 *   C(0) = s_t^2 + s_n^2,   C(j) = s_t^2 r^j  (j >= 1),
 * turbulence with an exponential (first-order autoregressive) correlation r per step plus white noise of variance
 * s_n^2 (the estimator noise). From the lag-1 and lag-2 covariances C1, C2 (sums of products of successive samples
 * about the key's mean): r = C2 / C1 and s_t^2 = C1^2 / C2, the autocovariance extrapolated to lag 0 (Lenschow,
 * Wulfmeyer & Senff 2000, J. Atmos. Oceanic Technol. 17, 1330-1347, eq. 17 and sect. 3: the noise variance is the
 * jump of the autocovariance at lag 0). r is clipped to [C1 / s^2, R_MAX]: C1 / s^2 is the correlation with no noise
 * (a lower bound of r), R_MAX keeps a key whose correlation does not decay within two steps finite. When C1 <= 0 no
 * correlation is resolved: r = 0 and the whole variance is counted as turbulence (the noise cannot be separated).
 *
 * Variance of the key's mean over n samples (exact for this model):
 *   var(mean) = s_n^2 / n + s_t^2 / N_eff,   N_eff = n^2 / (n + 2 sum_{j=1}^{n-1} (n - j) r^j),
 *   sum_{j=1}^{n-1} (n - j) r^j = r (n (1 - r) - (1 - r^n)) / (1 - r)^2,
 * the effective sample count of an autocorrelated series (e.g. Bayley & Hammersley 1946, J. R. Stat. Soc. Suppl.
 * 8(2), 184-197). For samples dense in time (step dt << tau) r = exp(-dt / tau) and N_eff -> T / (2 tau), T = n dt:
 * the sampling error of a mean over T with integral time scale tau, var = 2 tau s_t^2 / T (Lenschow, Mann &
 * Kristensen 1994, J. Atmos. Oceanic Technol. 11, 661-673, eq. 36). The integral time scale is reported as
 * tau = -dt / ln r with dt the mean gap of the lag-1 pairs.
 *
 * The budget splits var(mean) into the scatter term s^2 / n (the one the retrieval always had, as if samples were
 * independent) and the sampling term s_t^2 (1 / N_eff - 1 / n) >= 0, so that their sum is the variance above.
 *
 * Trend (for the non-simultaneity term): b = (mean of the later half - mean of the earlier half) / (T / 2), T the
 * window length (exact for samples spread evenly over the window); its noise is removed in the square,
 * b^2 - var(b), var(b) = (var(mean_late) + var(mean_early)) / (T / 2)^2.
 *
 * Limits: the lag pairs are formed in arrival order: range gates of one ray are successive samples too, so a
 * correlation along the beam counts like one in time (both reduce N_eff, which is what matters for the mean). The
 * lag sums include the samples the robust filter rejected; the turbulence share s_t^2 / s^2 found on all samples is
 * applied to the kept ones. Keys with fewer than MIN_LAG_PAIRS lag-2 pairs get r = 0.
 */
import { DT_SCALE, F, SQ_SPLIT, STRIDE, T_SCALE, VR_SCALE, type CellAccumulator } from '../grid/accumulator.ts';

/** Largest lag-1 correlation used, dimensionless (a key whose samples hardly decorrelate). */
export const R_MAX = 0.99;
/** Fewest lag-2 pairs for a correlation estimate. */
export const MIN_LAG_PAIRS = 8;

/** Results for one key, written into a reusable object. */
export interface KeySampling {
  /** Lag-1 correlation of the turbulence r (0 when none resolved). */
  r: number;
  /** Turbulence variance of v_r (noise removed), m^2/s^2, on all samples. */
  turbVar: number;
  /** Noise variance of v_r, m^2/s^2, on all samples. */
  noiseVar: number;
  /** Share of the variance that is turbulence, s_t^2 / s^2 (1 when the noise is not separated). */
  turbShare: number;
  /** Mean gap of the lag-1 pairs, s (NaN without pairs). */
  gap_s: number;
  /** Integral time scale, s (0 when r = 0, NaN without pairs). */
  tau_s: number;
  /** Mean sample time, Unix s. */
  meanTime_s: number;
  /** Samples and mean v_r of the earlier and later half of the window (n = 0 when unknown). */
  nEarly: number;
  vEarly: number;
  nLate: number;
  vLate: number;
}

export function emptyKeySampling(): KeySampling {
  return { r: 0, turbVar: NaN, noiseVar: NaN, turbShare: 1, gap_s: NaN, tau_s: NaN, meanTime_s: NaN, nEarly: 0, vEarly: NaN, nLate: 0, vLate: NaN };
}

/** Effective sample count of n samples with lag-1 correlation r (AR(1)), between 1 and n. */
export function effectiveCount(n: number, r: number): number {
  if (!(r > 0) || n <= 1) return n;
  const rr = Math.min(r, R_MAX);
  const sum = (rr * (n * (1 - rr) - (1 - rr ** n))) / ((1 - rr) * (1 - rr));
  return Math.min(n, Math.max(1, (n * n) / (n + 2 * sum)));
}

/** Sampling statistics of slot s of a finished window's accumulator. */
export function keySampling(acc: CellAccumulator, s: number, out: KeySampling): KeySampling {
  const m = acc.sums, o = s * STRIDE;
  const n = m[o + F.n];
  const V2 = VR_SCALE * VR_SCALE;
  const sum = m[o + F.sv] / VR_SCALE;
  const mean = sum / n;
  const ss = (m[o + F.sv2h] * SQ_SPLIT + m[o + F.sv2l]) / V2 - sum * mean;
  const s2 = n > 1 ? Math.max(0, ss) / (n - 1) : NaN;
  out.r = 0; out.turbVar = s2; out.noiseVar = 0; out.turbShare = 1; out.gap_s = NaN; out.tau_s = NaN;
  out.meanTime_s = n > 0 ? ((m[o + F.th] / n) * SQ_SPLIT + m[o + F.tl] / n) / T_SCALE : NaN;
  const n1 = m[o + F.l1n], n2 = m[o + F.l2n];
  if (n1 > 0) out.gap_s = m[o + F.l1d] / n1 / DT_SCALE;
  if (n2 >= MIN_LAG_PAIRS && s2 > 0) {
    const c1 = (m[o + F.l1h] * SQ_SPLIT + m[o + F.l1l]) / V2 / n1 - mean * mean;
    const c2 = (m[o + F.l2h] * SQ_SPLIT + m[o + F.l2l]) / V2 / n2 - mean * mean;
    if (c1 > 0) {
      const lower = Math.min(R_MAX, c1 / s2);
      const r = Math.min(R_MAX, Math.max(lower, c2 / c1));
      const st = Math.min(s2, c1 / r);
      out.r = r;
      out.turbVar = st;
      out.noiseVar = s2 - st;
      out.turbShare = st / s2;
    }
    out.tau_s = out.r > 0 ? -out.gap_s / Math.log(out.r) : 0;
  }
  const nl = m[o + F.hn];
  out.nLate = nl;
  out.nEarly = nl > 0 ? n - nl : 0;
  out.vLate = nl > 0 ? m[o + F.hv] / VR_SCALE / nl : NaN;
  out.vEarly = out.nEarly > 0 ? (sum - m[o + F.hv] / VR_SCALE) / out.nEarly : NaN;
  return out;
}
