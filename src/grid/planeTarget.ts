/**
 * The plane target: cross planes (at a downstream distance x, spanning y and height z) and horizontal planes (at a
 * height z, spanning y and x) in the rotor frame of each window. A sample belongs to the first plane whose
 * thickness holds it and whose grid contains it; its key is (cellOffset[plane] + cell) * instrumentCount +
 * instrument, and it is accumulated with its rotor-frame beam vector and its in-plane position (y, and z or x).
 *
 * Each plane has its own frame origin (geometry/site.ts): the tower base of its turbine, or the site origin; the
 * axes turn with the window's wind direction D (from) for every plane alike: x = downstream = -(sin D, cos D) in
 * (east, north), y = to the left looking downstream (geometry/frames.ts states the same transform). Heights z are
 * measured per plane from the frame origin ("base"), from the ground under the sample ("terrain": terrain-following
 * planes) or along the site-frame up axis ("site").
 */
import { REJECT_INDEX } from '../qc/reasons.ts';
import { ADD_FIELDS, type CellAccumulator } from './accumulator.ts';
import type { GridSpec } from './grid.ts';
import { FRAME, reachSlab, SAMPLE, type SampleTarget, type WindowFrame } from './target.ts';

export interface PlaneTargetSpec {
  orientation: 'cross' | 'horizontal';
  /** Cross plane: downstream distance x, metres; horizontal plane: height z above the origin, metres. */
  level_m: number;
  thickness_m: number;
  grid: GridSpec;
  /** Frame origin in the site frame, metres; default: the target's origin. */
  origin?: readonly [number, number, number];
  /** Heights from the frame origin (default), the ground under each sample, or the site-frame up axis. */
  heights?: 'base' | 'terrain' | 'site';
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
  /** Per plane: frame origin east, north; the height base (origin up, or 0 for site heights); 1 for terrain heights. */
  private readonly oE: Float64Array;
  private readonly oN: Float64Array;
  private readonly zBase: Float64Array;
  private readonly onTerrain: Uint8Array;
  /** The values handed to the accumulator (CellAccumulator.addValues), reused for every sample. */
  private readonly values = new Float64Array(ADD_FIELDS);

  constructor(
    planes: PlaneTargetSpec[],
    private readonly instrumentCount: number,
    /** Rotor-frame origin (tower base) in the site frame of planes that give none, metres. */
    origin: readonly [number, number, number],
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
    this.oE = Float64Array.from(planes, (p) => (p.origin ?? origin)[0]);
    this.oN = Float64Array.from(planes, (p) => (p.origin ?? origin)[1]);
    this.zBase = Float64Array.from(planes, (p) => (p.heights === 'site' ? 0 : (p.origin ?? origin)[2]));
    this.onTerrain = Uint8Array.from(planes, (p) => (p.heights === 'terrain' ? 1 : 0));
    this.keyCount = this.off[planes.length] * instrumentCount;
  }

  /** Ranges along a straight beam that can meet a plane's slab (SampleTarget.reach): the same arithmetic as add(). */
  reach(f: WindowFrame, oe: number, on: number, ou: number, ne: number, nn: number, nu: number, out: Float64Array): void {
    out[0] = Infinity; out[1] = -Infinity;
    const dE = f[FRAME.dE], dN = f[FRAME.dN];
    for (let p = 0; p < this.P; p++) {
      if (this.onTerrain[p] === 1) { out[0] = -Infinity; out[1] = Infinity; return; } // heights follow the ground
      if (this.cross[p] === 1) {
        // x(r) = (o + r n) . (dE, dN) - origin . (dE, dN)
        reachSlab(oe * dE + on * dN - (this.oE[p] * dE + this.oN[p] * dN), ne * dE + nn * dN, this.level[p] - this.half[p], this.level[p] + this.half[p], out);
      } else {
        reachSlab(ou - this.zBase[p], nu, this.level[p] - this.half[p], this.level[p] + this.half[p], out);
      }
    }
  }

  add(acc: CellAccumulator, f: WindowFrame, ins: number, s: Float64Array): boolean {
    const pe = s[SAMPLE.pe], pn = s[SAMPLE.pn], pu = s[SAMPLE.pu], ground = s[SAMPLE.ground];
    // Rotor-frame coordinates about the site origin; each plane subtracts its own origin's.
    const dE = f[FRAME.dE], dN = f[FRAME.dN];
    const X = pe * dE + pn * dN;
    const Y = -pe * dN + pn * dE;
    for (let p = 0; p < this.P; p++) {
      const x = X - (this.oE[p] * dE + this.oN[p] * dN);
      const y = Y - (-this.oE[p] * dN + this.oN[p] * dE);
      const z = pu - (this.onTerrain[p] === 1 ? ground : this.zBase[p]);
      const cross = this.cross[p] === 1;
      const off = (cross ? x : z) - this.level[p];
      if (off > this.half[p] || off < -this.half[p]) continue;
      const second = cross ? z : x;
      const iy = Math.floor((y - this.yLo[p]) / this.dy[p]);
      if (iy < 0 || iy >= this.ny[p]) continue;
      const iz = Math.floor((second - this.zLo[p]) / this.dz[p]);
      if (iz < 0 || iz >= this.nz[p]) continue;
      // Beam unit vector in the window's rotor frame.
      const ne = s[SAMPLE.ne], nn = s[SAMPLE.nn];
      const rx = ne * dE + nn * dN, ry = -ne * dN + nn * dE;
      // Time and window middle feed the uncertainty budget's sums (NaN middle for a whole-record window).
      const v = this.values;
      v[0] = s[SAMPLE.vr]; v[1] = rx; v[2] = ry; v[3] = s[SAMPLE.nu]; v[4] = y; v[5] = second; v[6] = s[SAMPLE.t]; v[7] = (f[FRAME.start] + f[FRAME.end]) / 2;
      acc.addValues((this.off[p] + iy + iz * this.ny[p]) * this.instrumentCount + ins, v);
      return true;
    }
    return false;
  }
}
