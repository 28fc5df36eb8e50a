/**
 * Footprint of a probe volume on a measurement plane.
 *
 * The probe is a segment of length L (the FWHM of the range weighting) along the beam unit vector n, centred on the
 * measurement point. Its orthogonal projection on a plane with unit normal m is the segment L (n - (n.m) m), whose
 * length is L sqrt(1 - (n.m)^2) = L |sin(angle between n and m)|: a beam along the normal smears nothing across the
 * plane, a beam lying in the plane smears its whole length. Along the in-plane unit axes e1, e2 (orthonormal with m)
 * the projection spans L |n.e1| and L |n.e2|; dividing by the cell sizes gives the span in cells, and the larger of
 * the two is compared with the allowed number of cells. (Vector algebra; the beam's lateral width, centimetres, is
 * neglected.)
 */
import type { Vec3 } from '../campaign/types.ts';

export interface Footprint {
  /** Length of the projected probe on the plane, metres. */
  length_m: number;
  /** Largest span of the projection in cells along either plane axis. */
  cells: number;
}

export function probeFootprint(n: ArrayLike<number>, probe_m: number, normal: Vec3, axis1: Vec3, axis2: Vec3, cell1_m: number, cell2_m: number): Footprint {
  const dn = n[0] * normal[0] + n[1] * normal[1] + n[2] * normal[2];
  const d1 = n[0] * axis1[0] + n[1] * axis1[1] + n[2] * axis1[2];
  const d2 = n[0] * axis2[0] + n[1] * axis2[1] + n[2] * axis2[2];
  return {
    length_m: probe_m * Math.sqrt(Math.max(0, 1 - dn * dn)),
    cells: Math.max((probe_m * Math.abs(d1)) / cell1_m, (probe_m * Math.abs(d2)) / cell2_m),
  };
}
