/**
 * Small dense symmetric positive-definite algebra for the fits (p <= 6 parameters): Cholesky decomposition (the
 * Cholesky-Banachiewicz order, row by row; e.g. Golub & Van Loan 2013, Matrix Computations, sec. 4.2), solve and
 * inverse, with null when the matrix is not positive definite.
 *
 * The steps and the order of every sum are those of ml-matrix's CholeskyDecomposition (6.x), which the fits used
 * before: the results are the same numbers (test/wake-linalg.test.ts compares them), without a matrix object and
 * its bounds-checked accessors per step of each fit iteration.
 */

/** The lower-triangular factor L (n x n, row-major) of A = L L^T. */
export interface Cholesky {
  n: number;
  L: Float64Array;
}

/**
 * Cholesky decomposition of a symmetric positive-definite matrix, or null when it is not positive definite.
 * @throws Error when the matrix is not square or not exactly symmetric (a NaN counts as asymmetric), as ml-matrix does
 */
export function cholesky(a: number[][]): Cholesky | null {
  const n = a.length;
  for (let i = 0; i < n; i++) {
    if (a[i].length !== n) throw new Error('Matrix is not symmetric');
    for (let j = 0; j <= i; j++) if (a[i][j] !== a[j][i]) throw new Error('Matrix is not symmetric');
  }
  const L = new Float64Array(n * n);
  let positiveDefinite = true;
  for (let j = 0; j < n; j++) {
    let d = 0;
    for (let k = 0; k < j; k++) {
      let s = 0;
      for (let i = 0; i < k; i++) s += L[k * n + i] * L[j * n + i];
      s = (a[j][k] - s) / L[k * n + k];
      L[j * n + k] = s;
      d = d + s * s;
    }
    d = a[j][j] - d;
    positiveDefinite &&= d > 0;
    L[j * n + j] = Math.sqrt(Math.max(d, 0));
  }
  return positiveDefinite ? { n, L } : null;
}

/** Solves L L^T x = b in place in x (forward, then back substitution). */
function substitute(c: Cholesky, x: Float64Array | number[]): void {
  const { n, L } = c;
  for (let k = 0; k < n; k++) {
    for (let i = 0; i < k; i++) x[k] = x[k] - x[i] * L[k * n + i];
    x[k] = x[k] / L[k * n + k];
  }
  for (let k = n - 1; k >= 0; k--) {
    for (let i = k + 1; i < n; i++) x[k] = x[k] - x[i] * L[i * n + k];
    x[k] = x[k] / L[k * n + k];
  }
}

export function cholSolve(c: Cholesky, b: number[]): number[] {
  if (b.length !== c.n) throw new Error('Matrix dimensions do not match');
  const x = b.slice();
  substitute(c, x);
  return x;
}

export function invertSpd(a: number[][]): number[][] | null {
  const c = cholesky(a);
  if (!c) return null;
  const n = c.n;
  const cols: Float64Array[] = [];
  for (let j = 0; j < n; j++) {
    const e = new Float64Array(n);
    e[j] = 1;
    substitute(c, e);
    cols.push(e);
  }
  return Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => cols[j][i]));
}
