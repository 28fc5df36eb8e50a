/**
 * Planes whose sample slabs overlap. A sample belongs to the first listed plane whose slab and grid hold it
 * (grid/planeTarget.ts), so where a horizontal plane crosses a cross plane's slab (or two slabs of one kind
 * overlap) the later plane's cells get only the samples outside the overlap: a row of cells can be left with none.
 * Each plane as a box in its rotor frame: a cross plane x in [x - t/2, x + t/2], y and z its extents; a horizontal
 * plane x its extent, y, z in [z - t/2, z + t/2]. Only planes of one frame (turbine) and one height reference are
 * compared (others' boxes are not comparable without the wind direction and terrain).
 */
import type { PlaneSpec } from './types.ts';

interface Box { x: [number, number]; y: [number, number]; z: [number, number] }

function box(p: PlaneSpec): Box {
  const h = p.thickness_m / 2;
  return p.orientation === 'cross'
    ? { x: [p.x_m - h, p.x_m + h], y: [p.y.min, p.y.max], z: [p.second.min, p.second.max] }
    : { x: [p.second.min, p.second.max], y: [p.y.min, p.y.max], z: [p.z_m - h, p.z_m + h] };
}

function cut(a: [number, number], b: [number, number]): [number, number] | null {
  const lo = Math.max(a[0], b[0]), hi = Math.min(a[1], b[1]);
  return hi > lo ? [lo, hi] : null;
}

const f = (v: number) => String(Math.round(v * 10) / 10);

/** One warning per overlapping pair, naming both planes, the overlap and which plane keeps its samples. */
export function planeOverlapWarnings(planes: readonly PlaneSpec[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < planes.length; i++) for (let j = i + 1; j < planes.length; j++) {
    const a = planes[i], b = planes[j];
    if ((a.turbineIndex ?? 0) !== (b.turbineIndex ?? 0) || (a.heights ?? 'base') !== (b.heights ?? 'base')) continue;
    const A = box(a), B = box(b);
    const x = cut(A.x, B.x), y = cut(A.y, B.y), z = cut(A.z, B.z);
    if (!x || !y || !z) continue;
    out.push(`planes ${a.id} and ${b.id} overlap (rotor frame x ${f(x[0])} to ${f(x[1])} m, y ${f(y[0])} to ${f(y[1])} m, z ${f(z[0])} to ${f(z[1])} m): `
      + `a sample there goes to ${a.id} only (listed first), so ${b.id}'s cells there get fewer samples or none; list the planes so the one that matters there comes first, or make the slabs thinner`);
  }
  return out;
}
