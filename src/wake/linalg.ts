/**
 * Small dense symmetric positive-definite algebra for the fits (p <= 6 parameters), on ml-matrix's Cholesky
 * decomposition: solve and inverse, with null when the matrix is not positive definite.
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix';

export type Cholesky = CholeskyDecomposition;

/** Cholesky decomposition of a symmetric positive-definite matrix, or null when it is not positive definite. */
export function cholesky(a: number[][]): Cholesky | null {
  const c = new CholeskyDecomposition(new Matrix(a));
  return c.isPositiveDefinite() ? c : null;
}

/** Solves A x = b with the decomposition of A. */
export function cholSolve(c: Cholesky, b: number[]): number[] {
  return c.solve(Matrix.columnVector(b)).getColumn(0);
}

/** Inverse of a symmetric positive-definite matrix, or null when it is not positive definite. */
export function invertSpd(a: number[][]): number[][] | null {
  const c = cholesky(a);
  return c ? c.solve(Matrix.eye(a.length)).to2DArray() : null;
}
