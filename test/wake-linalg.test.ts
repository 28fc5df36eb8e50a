/**
 * The fits' Cholesky solve and inverse against a general-purpose reference library, ml-matrix (6.x,
 * CholeskyDecomposition): same order of operations, so the same numbers bit for bit, on well- and ill-conditioned
 * symmetric matrices, damped normal matrices as the Levenberg-Marquardt loop builds them, and matrices that are not
 * positive definite.
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { mulberry32 } from '../src/math/random.ts';
import { cholesky, cholSolve, invertSpd } from '../src/wake/linalg.ts';

function randomNormal(r: () => number, n: number, rows: number, scales: number[]): number[][] {
  const J = Array.from({ length: rows }, () => Array.from({ length: n }, (_, k) => (r() - 0.5) * scales[k]));
  const a = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (const row of J) for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) a[i][j] += row[i] * row[j];
  return a;
}

describe('Cholesky solve and inverse', () => {
  it('equal ml-matrix bit for bit (solve, inverse, positive-definiteness)', () => {
    const r = mulberry32(5);
    let notPd = 0;
    for (let t = 0; t < 3000; t++) {
      const n = 2 + (t % 5);
      const scales = Array.from({ length: n }, () => 10 ** (6 * r() - 3)); // conditioning up to ~1e12
      const a = randomNormal(r, n, t % 7 === 0 ? n - 1 : n + 3 + Math.floor(10 * r()), scales); // some rank-deficient
      if (t % 11 === 0) a[0][0] = -a[0][0]; // not positive definite
      const ref = new CholeskyDecomposition(new Matrix(a));
      const c = cholesky(a);
      expect(c !== null).toBe(ref.isPositiveDefinite());
      if (!c) { notPd++; continue; }
      const b = Array.from({ length: n }, () => r() - 0.5);
      expect(cholSolve(c, b)).toEqual(ref.solve(Matrix.columnVector(b)).getColumn(0)); // Object.is per element
      expect(invertSpd(a)).toEqual(ref.solve(Matrix.eye(n)).to2DArray());
    }
    expect(notPd).toBeGreaterThan(200); // both outcomes exercised
  });
  it('throws on an asymmetric or NaN matrix, as ml-matrix does', () => {
    expect(() => new CholeskyDecomposition(new Matrix([[1, NaN], [NaN, 1]]))).toThrow('Matrix is not symmetric');
    expect(() => cholesky([[1, NaN], [NaN, 1]])).toThrow('Matrix is not symmetric');
    expect(() => cholesky([[1, 2], [3, 1]])).toThrow('Matrix is not symmetric');
  });
});
