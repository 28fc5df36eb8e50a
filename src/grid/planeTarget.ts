/**
 * The plane target: cross planes (at a downstream distance x, spanning y and height z) and horizontal planes (at a
 * height z, spanning y and x) in the rotor frame of each window. A sample belongs to the first plane whose
 * thickness holds it and whose grid contains it; its key is (cellOffset[plane] + cell) * instrumentCount +
 * instrument, and it is accumulated with its rotor-frame beam vector and its in-plane position (y, and z or x).
 *
 * Rotor frame of a window with wind direction D (from): x = downstream = -(sin D, cos D) in (east, north), y = to the
 * left looking downstream, z up; origin at the tower base (geometry/frames.ts states the same transform).
 */
import { REJECT_INDEX } from '../qc/reasons.ts';
import type { CellAccumulator } from './accumulator.ts';
import type { GridSpec } from './grid.ts';
import type { SampleTarget, WindowFrame } from './target.ts';

export interface PlaneTargetSpec {
  orientation: 'cross' | 'horizontal';
  /** Cross plane: downstream distance x, metres; horizontal plane: height z above the origin, metres. */
  level_m: number;
  thickness_m: number;
  grid: GridSpec;
}

export class PlaneTarget implements SampleTarget {
  readonly id = 'planes';
  readonly keyCount: number;
  readonly outsideReason = REJECT_INDEX.outside_planes;
  private readonly P: number;
  private readonly cross: Uint8Array;
  private readonly level: Float64Array;
  private readonly half: Float64Array;
  private readonly off: Uint32Array;
  private readonly yLo: Float64Array;
  private readonly dy: Float64Array;
  private readonly zLo: Float64Array;
  private readonly dz: Float64Array;
  private readonly ny: Int32Array;
  private readonly nz: Int32Array;

  constructor(
    planes: PlaneTargetSpec[],
    private readonly instrumentCount: number,
    /** Rotor-frame origin (tower base) in the site frame, metres. */
    private readonly origin: readonly [number, number, number],
  ) {
    this.P = planes.length;
    this.cross = Uint8Array.from(planes, (p) => (p.orientation === 'cross' ? 1 : 0));
    this.level = Float64Array.from(planes, (p) => p.level_m);
    this.half = Float64Array.from(planes, (p) => p.thickness_m / 2);
    this.off = new Uint32Array(planes.length + 1);
    planes.forEach((p, j) => (this.off[j + 1] = this.off[j] + p.grid.ny * p.grid.nz));
    // Grid constants, for the cell index inline (the same arithmetic as grid.ts cellIndex).
    this.yLo = Float64Array.from(planes, (p) => p.grid.y0 - p.grid.dy / 2);
    this.dy = Float64Array.from(planes, (p) => p.grid.dy);
    this.zLo = Float64Array.from(planes, (p) => p.grid.z0 - p.grid.dz / 2);
    this.dz = Float64Array.from(planes, (p) => p.grid.dz);
    this.ny = Int32Array.from(planes, (p) => p.grid.ny);
    this.nz = Int32Array.from(planes, (p) => p.grid.nz);
    this.keyCount = this.off[planes.length] * instrumentCount;
  }

  add(acc: CellAccumulator, f: WindowFrame, ins: number, vr: number, ne: number, nn: number, nu: number, pe: number, pn: number, pu: number): boolean {
    const de = pe - this.origin[0], dn = pn - this.origin[1];
    const z = pu - this.origin[2];
    const x = de * f.dE + dn * f.dN;
    const y = -de * f.dN + dn * f.dE;
    for (let p = 0; p < this.P; p++) {
      const cross = this.cross[p] === 1;
      const off = (cross ? x : z) - this.level[p];
      if (off > this.half[p] || off < -this.half[p]) continue;
      const second = cross ? z : x;
      const iy = Math.floor((y - this.yLo[p]) / this.dy[p]);
      if (iy < 0 || iy >= this.ny[p]) continue;
      const iz = Math.floor((second - this.zLo[p]) / this.dz[p]);
      if (iz < 0 || iz >= this.nz[p]) continue;
      // Beam unit vector in the window's rotor frame.
      const rx = ne * f.dE + nn * f.dN, ry = -ne * f.dN + nn * f.dE;
      acc.add((this.off[p] + iy + iz * this.ny[p]) * this.instrumentCount + ins, vr, rx, ry, nu, y, second);
      return true;
    }
    return false;
  }
}
