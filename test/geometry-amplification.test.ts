/**
 * Error amplification kernels (src/geometry/amplification.ts) against published dual-Doppler error analysis,
 * numpy reference values (test/reference/wls_reference.py, output pasted beside each table) and a general-purpose
 * linear-algebra library (ml-matrix EVD and inverse).
 */
import { EigenvalueDecomposition, Matrix, inverse } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import {
  amplification2, amplification3, eigSym3, invertSym3, minCrossingAngle, normalMatrix,
} from '../src/geometry/amplification.ts';

const DEG = Math.PI / 180;

/** Two horizontal beams symmetric about the x axis (the bisector), crossing angle gamma. */
function twoBeams(gamma_deg: number): Float64Array {
  const h = (gamma_deg / 2) * DEG;
  return Float64Array.from([Math.cos(h), Math.sin(h), 0, Math.cos(h), -Math.sin(h), 0]);
}

describe('two horizontal beams (Stawiarski, Traeumner, Knigge & Calhoun 2013, JTECH 30(9); equations from memory)', () => {
  // REFERENCES.md section 2; test/reference/wls_reference.py prints (gamma: trace, along, across)
  //   90: 2.000000 1.000000 1.000000
  //   60: 2.666667 0.816497 1.414214
  //   30: 8.000000 0.732051 2.732051
  //   15: 29.856406 0.713208 5.417355
  const table: [number, number, number, number][] = [
    [90, 2, 1, 1], [60, 2.666667, 0.816497, 1.414214], [30, 8, 0.732051, 2.732051], [15, 29.856406, 0.713208, 5.417355],
  ];
  it.each(table)('gamma %d deg', (g, trace, along, across) => {
    const r = amplification2(twoBeams(g), 2);
    // Tolerance 1e-6 relative: the table is printed to 6 decimals.
    expect(Math.abs(r.inv[0] + r.inv[3] - trace) / trace).toBeLessThan(1e-6);
    expect(Math.abs(r.dop[0] - along)).toBeLessThan(1e-6);
    expect(Math.abs(r.dop[1] - across)).toBeLessThan(1e-6);
    // Closed forms: trace = 2 / sin^2 gamma; along = 1/(sqrt2 cos(gamma/2)); across = 1/(sqrt2 sin(gamma/2)); 1e-12.
    expect(r.inv[0] + r.inv[3]).toBeCloseTo(2 / Math.sin(g * DEG) ** 2, 10);
    expect(r.dop[0]).toBeCloseTo(1 / (Math.SQRT2 * Math.cos((g / 2) * DEG)), 12);
    expect(r.dop[1]).toBeCloseTo(1 / (Math.SQRT2 * Math.sin((g / 2) * DEG)), 12);
    expect(minCrossingAngle(twoBeams(g), 2)).toBeCloseTo(g, 9);
  });
  it('parallel beams are singular (infinite condition, NaN amplification)', () => {
    const r = amplification2(twoBeams(0), 2);
    expect(r.cond).toBe(Infinity);
    expect(r.dop[0]).toBeNaN();
  });
});

describe('ground-level layout (REFERENCES.md section 2 [numpy])', () => {
  // Instruments at (0,0,0), (400,0,0), (200,350,0) m, target (200,150,h). test/reference/wls_reference.py prints
  // (h: DOP u, DOP v, DOP w, cond(A))
  //   10: 0.884590 0.763451 13.261114 17.373378
  //   50: 0.901388 0.782461 2.714286 3.469099
  //   100: 0.951972 0.839096 1.449842 1.728350
  //   150: 1.030776 0.925820 1.061595 1.156311
  //   1: 0.883891 0.762656 132.481574 173.746113
  //   2: 0.883912 0.762681 66.242751 86.872869
  //   5: 0.884060 0.762849 26.502599 34.748623
  const inst = [[0, 0, 0], [400, 0, 0], [200, 350, 0]];
  function rowsAt(h: number): Float64Array {
    const rows = new Float64Array(9);
    inst.forEach((p, i) => {
      const d = [200 - p[0], 150 - p[1], h - p[2]];
      const n = Math.hypot(d[0], d[1], d[2]);
      rows.set([d[0] / n, d[1] / n, d[2] / n], i * 3);
    });
    return rows;
  }
  const table: [number, number, number, number, number][] = [
    [10, 0.88459, 0.763451, 13.261114, 17.373378],
    [50, 0.901388, 0.782461, 2.714286, 3.469099],
    [100, 0.951972, 0.839096, 1.449842, 1.72835],
    [150, 1.030776, 0.92582, 1.061595, 1.156311],
    [1, 0.883891, 0.762656, 132.481574, 173.746113],
    [2, 0.883912, 0.762681, 66.242751, 86.872869],
    [5, 0.88406, 0.762849, 26.502599, 34.748623],
  ];
  it.each(table)('h = %d m', (h, du, dv, dw, cond) => {
    const r = amplification3(rowsAt(h), 3);
    // 1e-6 relative (6 printed decimals; the smallest value 0.76 gives 6.6e-7 relative rounding).
    expect(Math.abs(r.dop[0] / du - 1)).toBeLessThan(1e-6);
    expect(Math.abs(r.dop[1] / dv - 1)).toBeLessThan(1e-6);
    expect(Math.abs(r.dop[2] / dw - 1)).toBeLessThan(1e-6);
    expect(Math.abs(r.cond / cond - 1)).toBeLessThan(1e-6);
  });
  it('DOP w grows as the beams flatten (h falls), like 1/h near the ground', () => {
    let prev = 0;
    for (const h of [200, 150, 100, 50, 20, 10, 5, 2, 1]) {
      const dw = amplification3(rowsAt(h), 3).dop[2];
      expect(dw).toBeGreaterThan(prev);
      prev = dw;
    }
    // 1/h law: h * DOP_w tends to a constant (numpy: 1 -> 132.48, 2 -> 132.49; 0.1 % tolerance).
    const a = amplification3(rowsAt(1), 3).dop[2] * 1, b = amplification3(rowsAt(2), 3).dop[2] * 2;
    expect(Math.abs(a / b - 1)).toBeLessThan(1e-3);
  });
});

describe('3x3 symmetric kernels against ml-matrix (general-purpose reference library)', () => {
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648) * 2 - 1;
  const spd: Float64Array[] = [];
  for (let t = 0; t < 200; t++) {
    // B^T B + eps I: symmetric positive definite; a few nearly singular ones (eps 1e-6).
    const B = Array.from({ length: 9 }, rnd);
    const eps = t % 10 === 0 ? 1e-6 : 0.1;
    const N = normalMatrix(B, 3);
    N[0] += eps; N[4] += eps; N[8] += eps;
    spd.push(N);
  }
  const toM = (N: Float64Array) => new Matrix([[N[0], N[1], N[2]], [N[3], N[4], N[5]], [N[6], N[7], N[8]]]);

  it('eigSym3 equals the EVD eigenvalues (1e-10 of the largest: the trigonometric form loses a few digits)', () => {
    for (const N of spd) {
      const ref = new EigenvalueDecomposition(toM(N), { assumeSymmetric: true }).realEigenvalues.slice().sort((a, b) => a - b);
      const ours = eigSym3(N);
      const scale = ref[2];
      for (let i = 0; i < 3; i++) expect(Math.abs(ours[i] - ref[i]) / scale).toBeLessThan(1e-10);
    }
  });
  it('invertSym3 equals ml-matrix inverse (1e-14 * cond + 1e-12 of the largest entry: inversion error scales with cond)', () => {
    for (const N of spd) {
      const ref = inverse(toM(N)).to1DArray();
      const ours = invertSym3(N);
      const ev = eigSym3(N);
      const cond = ev[2] / ev[0];
      const scale = Math.max(...ref.map(Math.abs));
      for (let i = 0; i < 9; i++) expect(Math.abs(ours[i] - ref[i]) / scale).toBeLessThan(1e-14 * cond + 1e-12);
    }
  });
  it('invertSym3 flags an exactly singular matrix with NaN', () => {
    const N = normalMatrix([1, 0, 0, 0, 1, 0, 1, 1, 0], 3); // no z component: rank 2
    expect(invertSym3(N)[0]).toBeNaN();
  });
});
