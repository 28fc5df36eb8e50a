/**
 * Thrust coefficient from the campaign: a single value, or a curve [[wind speed m/s, Ct], ...] interpolated
 * linearly at the hub-height inflow speed and held constant beyond its ends.
 */
export function thrustCoefficientAt(ct: number | [number, number][], speed_ms: number): { ct: number; source: 'value' | 'curve' } {
  if (typeof ct === 'number') return { ct, source: 'value' };
  const c = [...ct].sort((a, b) => a[0] - b[0]);
  if (!Number.isFinite(speed_ms)) return { ct: NaN, source: 'curve' };
  if (speed_ms <= c[0][0]) return { ct: c[0][1], source: 'curve' };
  for (let i = 1; i < c.length; i++) {
    if (speed_ms <= c[i][0]) {
      const t = (speed_ms - c[i - 1][0]) / (c[i][0] - c[i - 1][0]);
      return { ct: c[i - 1][1] + t * (c[i][1] - c[i - 1][1]), source: 'curve' };
    }
  }
  return { ct: c[c.length - 1][1], source: 'curve' };
}
