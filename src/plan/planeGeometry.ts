/**
 * Where the cells of a plane are: cell centres in the rotor frame and the site frame, the plane's unit normal and
 * in-plane axes (rotor frame), and which cells lie inside the rotor outline.
 *
 * Cross plane at downstream distance x_p: centre (x_p, y, z), normal x, axes (y, z).
 * Horizontal plane at height z_p: centre (x, y, z_p), normal z, axes (y, x).
 * Rotor outline (rotor frame, hub at (0, 0, H), radius R = D/2): in a cross plane the disk y^2 + (z - H)^2 <= R^2;
 * in a horizontal plane the band |y| <= sqrt(R^2 - (z_p - H)^2) (the rotor's shadow along the wind), empty when the
 * plane misses the rotor. A cell belongs to it when its centre does.
 */
import type { PlaneSpec, Vec3 } from '../campaign/types.ts';
import { fromRotor, type RotorFrame } from '../geometry/frames.ts';
import { gridSpecOf, type GridSpec } from '../grid/grid.ts';

export interface PlaneGeometry {
  plane: PlaneSpec;
  grid: GridSpec;
  /** Rotor-frame cell centres, x, y, z interleaved (3 per cell), metres. */
  rotor: Float64Array;
  /** Site-frame cell centres, east, north, up interleaved, metres. */
  site: Float64Array;
  /** Rotor-frame unit normal and in-plane axes (first axis = y, second axis = z or x). */
  normal: Vec3;
  axis1: Vec3;
  axis2: Vec3;
  /** 1 where the cell centre lies inside the rotor outline. */
  inRotor: Uint8Array;
}

export function planeGeometry(plane: PlaneSpec, frame: RotorFrame, hubHeight_m: number, rotorDiameter_m: number): PlaneGeometry {
  const grid = gridSpecOf(plane);
  const n = grid.ny * grid.nz;
  const rotor = new Float64Array(3 * n);
  const site = new Float64Array(3 * n);
  const inRotor = new Uint8Array(n);
  const R = rotorDiameter_m / 2;
  const cross = plane.orientation === 'cross';
  const bandHalf = cross ? NaN : R * R - (plane.z_m - hubHeight_m) ** 2;
  for (let iz = 0; iz < grid.nz; iz++)
    for (let iy = 0; iy < grid.ny; iy++) {
      const i = iy + iz * grid.ny;
      const y = grid.y0 + iy * grid.dy;
      const s = grid.z0 + iz * grid.dz;
      const q: Vec3 = cross ? [plane.x_m, y, s] : [s, y, plane.z_m];
      rotor[3 * i] = q[0]; rotor[3 * i + 1] = q[1]; rotor[3 * i + 2] = q[2];
      const p = fromRotor(frame, q);
      site[3 * i] = p[0]; site[3 * i + 1] = p[1]; site[3 * i + 2] = p[2];
      inRotor[i] = cross ? (y * y + (s - hubHeight_m) ** 2 <= R * R ? 1 : 0) : bandHalf >= 0 && y * y <= bandHalf ? 1 : 0;
    }
  return {
    plane,
    grid,
    rotor,
    site,
    normal: cross ? [1, 0, 0] : [0, 0, 1],
    axis1: [0, 1, 0],
    axis2: cross ? [0, 0, 1] : [1, 0, 0],
    inRotor,
  };
}
