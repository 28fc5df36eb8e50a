/**
 * Small dense symmetric linear algebra for the fits (p <= 6 parameters): Cholesky solve and inverse. Plain arrays,
 * row-major number[][]; no allocation-heavy matrix objects in the fit loop.
 */

/** Cholesky factor L (lower) of a symmetric positive-definite matrix, or null when not positive definite. */
export function cholesky(a: number[][]): number[][] | null {
  const n = a.length;
  const l = a.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i][j];
      for (let k = 0; k < j; k++) s -= l[i][k] * l[j][k];
      if (i === j) {
        if (!(s > 0)) return null;
        l[i][i] = Math.sqrt(s);
      } else l[i][j] = s / l[j][j];
    }
  }
  return l;
}

/** Solves L L^T x = b. */
export function cholSolve(l: number[][], b: number[]): number[] {
  const n = l.length;
  const y = new Array<number>(n);
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[i][k] * y[k];
    y[i] = s / l[i][i];
  }
  const x = new Array<number>(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= l[k][i] * x[k];
    x[i] = s / l[i][i];
  }
  return x;
}

/** Inverse of a symmetric positive-definite matrix, or null when singular. */
export function invertSpd(a: number[][]): number[][] | null {
  const l = cholesky(a);
  if (!l) return null;
  const n = a.length;
  const inv = a.map(() => new Array<number>(n).fill(0));
  for (let j = 0; j < n; j++) {
    const e = new Array<number>(n).fill(0);
    e[j] = 1;
    const col = cholSolve(l, e);
    for (let i = 0; i < n; i++) inv[i][j] = col[i];
  }
  return inv;
}
