/**
 * The error function erf(x) = (2 / sqrt(pi)) integral_0^x exp(-t^2) dt (JavaScript has none).
 *
 * |x| < 3: Maclaurin series erf(x) = (2/sqrt(pi)) sum_n (-1)^n x^(2n+1) / (n! (2n+1)) (Abramowitz & Stegun 1964,
 * eq. 7.1.5); the largest term is about exp(x^2) < 1e4, so about 12 significant digits survive the cancellation.
 * |x| >= 3: continued fraction erfc(x) = exp(-x^2)/sqrt(pi) * 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + ...))))
 * (A&S eq. 7.1.14), evaluated bottom-up with 60 levels, ample for x >= 3. Absolute error below 1e-12.
 */
const TWO_OVER_SQRT_PI = 2 / Math.sqrt(Math.PI);

export function erf(x: number): number {
  if (Number.isNaN(x)) return NaN;
  const ax = Math.abs(x);
  if (ax < 3) {
    const x2 = x * x;
    let term = x; // (-1)^n x^(2n+1) / n!
    let sum = x;
    for (let n = 1; n < 200; n++) {
      term *= -x2 / n;
      const add = term / (2 * n + 1);
      sum += add;
      if (Math.abs(add) < 1e-17 * Math.abs(sum)) break;
    }
    return TWO_OVER_SQRT_PI * sum;
  }
  if (ax > 6.5) return Math.sign(x); // erfc(6.5) < 1e-19
  let f = ax;
  for (let k = 60; k >= 1; k--) f = ax + k / 2 / f;
  const erfc = Math.exp(-ax * ax) / Math.sqrt(Math.PI) / f;
  return Math.sign(x) * (1 - erfc);
}
