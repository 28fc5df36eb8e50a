/**
 * Which wind components a layout is asked to resolve in a plane, and over which region its coverage is counted.
 *
 * Components: u, v and w in a cross plane seen by three or more plane scanners; u and v in a horizontal plane
 * (beams from ground-based scanners are close to horizontal there, so w stays poorly resolved whatever the layout:
 * the retrieval still reports it where its amplification allows) and wherever only two scanners serve the plane
 * (dual-Doppler: w = 0 assumed, retrieval.twoInstrumentAssumption w-zero; with 'none' two scanners resolve nothing).
 * Region: the rotor disk of a cross plane; the rotor's shadow band |y| <= sqrt(R^2 - (z - H)^2) of a horizontal plane
 * (planeGeometry.ts), the strip the wake crosses, not a disk.
 */
import type { PlaneSpec } from '../campaign/types.ts';

export function planeComponents(plane: Pick<PlaneSpec, 'orientation'>, scanners: number): 'uvw' | 'uv' {
  return plane.orientation === 'cross' && scanners >= 3 ? 'uvw' : 'uv';
}

export function planeRegion(plane: Pick<PlaneSpec, 'orientation'>): string {
  return plane.orientation === 'cross' ? 'rotor disk' : 'rotor shadow band';
}
