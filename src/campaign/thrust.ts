/**
 * Thrust coefficient at a wind speed: the campaign gives one value or a curve of [speed m/s, Ct] pairs, interpolated
 * linearly and held constant beyond its ends.
 */
export function thrustAt(ct: number | [number, number][], speed_ms: number): number {
  if (typeof ct === 'number') return ct;
  const pts = [...ct].sort((a, b) => a[0] - b[0]);
  if (!(speed_ms > pts[0][0])) return pts[0][1];
  for (let i = 1; i < pts.length; i++) {
    if (speed_ms <= pts[i][0]) {
      const [x0, y0] = pts[i - 1], [x1, y1] = pts[i];
      return y0 + ((y1 - y0) * (speed_ms - x0)) / (x1 - x0);
    }
  }
  return pts[pts.length - 1][1];
}
