/**
 * Analytical single-wake models (dimensionless deficits 1 - u/U, distances in rotor diameters D).
 *
 * Top-hat (Jensen 1983, "A note on wind generator interaction", Risoe-M-2411; Katic, Hojstrup & Jensen 1986,
 * Proc. EWEC'86 [from memory]): inside the wake radius r_w = r0 + k x,
 *   dU/U = (1 - sqrt(1 - Ct)) / (1 + k x / r0)^2,  r0 = D / 2.
 * Its wake decay constant k follows from the inflow: Pena, Rethore & van der Laan (2016, Wind Energy 19, 763-776
 * [from memory]) take k = u_star / u_hub; with the neutral surface-layer relation sigma_u = 2.5 u_star (Panofsky &
 * Dutton 1984, Atmospheric Turbulence [from memory]) and I = sigma_u / u_hub this is k = I / 2.5 = 0.4 I.
 *
 * Gaussian (Bastankhah & Porte-Agel 2014, Renewable Energy 70, 116-123 [formulas from memory; equation numbers not re-checked]):
 *   dU/U = C(x) exp(-r^2 / (2 sigma^2)),  C = 1 - sqrt(1 - Ct / (8 (sigma/d0)^2)),  sigma/d0 = k* x/d0 + eps,
 *   eps = 0.2 sqrt(beta),  beta = 0.5 (1 + sqrt(1 - Ct)) / sqrt(1 - Ct).
 * C is real only where Ct / (8 (sigma/d0)^2) <= 1 (far wake); NaN before.
 */

/** Top-hat wake decay constant from the ambient turbulence intensity: k = 0.4 I (see the file header). */
export function topHatKFromTurbulence(ti: number): number {
  return 0.4 * ti;
}

export function topHatDeficit(x_D: number, ct: number, k: number): number {
  return (1 - Math.sqrt(1 - ct)) / (1 + 2 * k * x_D) ** 2;
}

/** Top-hat wake radius / D. */
export function topHatRadius_D(x_D: number, k: number): number {
  return 0.5 + k * x_D;
}

export function bpBeta(ct: number): number {
  return (0.5 * (1 + Math.sqrt(1 - ct))) / Math.sqrt(1 - ct);
}

export function bpEpsilon(ct: number): number {
  return 0.2 * Math.sqrt(bpBeta(ct));
}

export function gaussianSigma_D(x_D: number, kStar: number, eps: number): number {
  return kStar * x_D + eps;
}

/** Centreline deficit C for a given sigma/d0 (NaN where the square root is imaginary). */
export function gaussianAmplitude(sigma_D: number, ct: number): number {
  const a = 1 - ct / (8 * sigma_D * sigma_D);
  return a >= 0 ? 1 - Math.sqrt(a) : NaN;
}

/**
 * Wake-growth rate from ambient turbulence intensity, k* = 0.38 I + 0.004 (Niayifar & Porte-Agel 2016,
 * Energies 9, 741, eq. 13 [from memory]); used where no fitted k* is available.
 */
export function kStarFromTurbulence(ti: number): number {
  return 0.38 * ti + 0.004;
}

export interface TopHatFit {
  k: number;
  /** Standard error from the linearised least squares, sqrt(s^2 / sum J^2), s^2 = SSR / (n - 1). */
  se: number;
  /** 95 % interval, Student t with n - 1 degrees of freedom; [NaN, NaN] for one plane. */
  ci95: [number, number];
  n: number;
  rmse: number;
  ok: boolean;
  note: string;
}

/**
 * Least-squares fit of the top-hat decay constant k to measured centreline deficits d_i at distances x_i/D:
 * minimises sum (d_i - a_i / (1 + 2 k x_i)^2)^2 with a_i = 1 - sqrt(1 - Ct_i) (one Ct, or each plane's own), by Gauss-Newton from the median of the
 * per-point solutions k_i = (sqrt(a_i / d_i) - 1) / (2 x_i). One point gives k exactly (no interval). Deficits at or
 * above a_i (no decay) or not positive cannot be matched and are left out.
 */
export function fitTopHatK(x_D: number[], deficit: number[], ctIn: number | number[], tQuantile: (q: number, dof: number) => number): TopHatFit {
  // One Ct for all planes, or each plane's own (the windows pooled there); a NaN entry takes the first finite one.
  const cts = Array.isArray(ctIn) ? ctIn : x_D.map(() => ctIn);
  const ctAll = cts.find((c) => Number.isFinite(c)) ?? NaN;
  const aOf = (i: number) => 1 - Math.sqrt(1 - (Number.isFinite(cts[i]) ? cts[i] : ctAll));
  const xs: number[] = [], ds: number[] = [], as: number[] = [];
  for (let i = 0; i < x_D.length; i++) {
    if (Number.isFinite(x_D[i]) && x_D[i] > 0 && deficit[i] > 0 && deficit[i] < aOf(i)) {
      xs.push(x_D[i]);
      ds.push(deficit[i]);
      as.push(aOf(i));
    }
  }
  const a = as.length ? Math.max(...as) : 1 - Math.sqrt(1 - ctAll);
  const n = xs.length;
  const left = x_D.filter((x, i) => Number.isFinite(x) && Number.isFinite(deficit[i])).length - n;
  const leftNote = left > 0 ? `${left} plane${left === 1 ? '' : 's'} left out (centreline deficit not between 0 and 1 \u2212 \u221a(1 \u2212 Ct) = ${a.toFixed(3)})` : '';
  const none: TopHatFit = { k: NaN, se: NaN, ci95: [NaN, NaN], n, rmse: NaN, ok: false, note: '' };
  if (!(a > 0)) return { ...none, note: 'thrust coefficient not usable' };
  if (n === 0) return { ...none, note: 'no plane with a centreline deficit between 0 and 1 - sqrt(1 - Ct)' };
  const ks = xs.map((x, i) => (Math.sqrt(as[i] / ds[i]) - 1) / (2 * x)).sort((p, q) => p - q);
  let k = ks[Math.floor((n - 1) / 2)];
  for (let it = 0; it < 50 && n > 1; it++) {
    let jj = 0, jr = 0;
    for (let i = 0; i < n; i++) {
      const q = 1 + 2 * k * xs[i];
      const r = ds[i] - as[i] / (q * q);
      const j = (-4 * as[i] * xs[i]) / (q * q * q);
      jj += j * j;
      jr += j * r;
    }
    const step = jr / jj;
    let kn = k + step;
    if (!(kn > 0)) kn = k / 2;
    const done = Math.abs(kn - k) < 1e-12 * Math.max(1, Math.abs(k));
    k = kn;
    if (done) break;
  }
  let ssr = 0, jj = 0;
  for (let i = 0; i < n; i++) {
    const q = 1 + 2 * k * xs[i];
    ssr += (ds[i] - as[i] / (q * q)) ** 2;
    jj += ((4 * as[i] * xs[i]) / (q * q * q)) ** 2;
  }
  const rmse = Math.sqrt(ssr / n);
  const join = (...p: string[]) => p.filter(Boolean).join('; ');
  if (n === 1) return { k, se: NaN, ci95: [NaN, NaN], n, rmse, ok: k > 0, note: join('1 plane: k matches it exactly, no interval', leftNote) };
  const se = Math.sqrt(ssr / (n - 1) / jj);
  const t = tQuantile(0.975, n - 1);
  return { k, se, ci95: [k - t * se, k + t * se], n, rmse, ok: k > 0 && Number.isFinite(k), note: join(n < 4 ? `only ${n} planes: the interval is wide` : '', leftNote) };
}
