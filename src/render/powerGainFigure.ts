/**
 * Figure of the power gain of wake steering: per downstream turbine and yaw-offset level the gain of each
 * wind-direction bin (all speeds of the bin drawn at its centre, slightly apart) with its bootstrap percentile interval
 * (from its lower to its upper end: not symmetric about the gain), and the combined gain right of a dashed line,
 * beside a zero line.
 */
import type { PowerAnalysis } from '../power/analyse.ts';
import { linePlotSvg, type PlotSeries } from './linePlot.ts';
import { theme } from './theme.ts';

export function powerGainSvg(a: PowerAnalysis): string | undefined {
  if (!a.gains.some((g) => g.result.bins.some((b) => Number.isFinite(b.gain)))) return undefined;
  const series: PlotSeries[] = [];
  const dEdges = a.edges.direction_deg;
  const right = dEdges[dEdges.length - 1] + (dEdges[1] - dEdges[0]) * 0.75;
  a.gains.forEach((g, k) => {
    const bins = g.result.bins.filter((b) => Number.isFinite(b.gain));
    const colour = theme.series[k % theme.series.length];
    const lvl = Number.isFinite(g.level_deg) ? `, yaw offset ${g.level_deg}\u00b0` : '';
    series.push({
      label: `${g.turbine}${lvl}: per bin`, kind: 'points', marker: 'circle', colour, xOffset: (k - (a.gains.length - 1) / 2) * 0.35,
      x: bins.map((b) => (b.directionLo + b.directionHi) / 2 + (b.speedLo - a.edges.speed_ms[0]) * 0.05),
      y: bins.map((b) => 100 * b.gain),
      yInterval: [bins.map((b) => 100 * b.gainLo), bins.map((b) => 100 * b.gainHi)],
    });
    const c = g.result.combined;
    if (Number.isFinite(c.gain)) {
      series.push({ label: `${g.turbine}${lvl}: combined`, kind: 'points', marker: 'diamond', colour, xOffset: (k - (a.gains.length - 1) / 2) * 0.35, x: [right], y: [100 * c.gain], yInterval: [[100 * c.lo], [100 * c.hi]] });
    }
  });
  const conf = (100 * (a.gains[0]?.result.confidence ?? 0.95)).toFixed(0);
  return linePlotSvg({
    title: 'Power gain of wake steering',
    subtitle: `energy ratio to ${a.reference}, steered over baseline windows, minus one \u00b7 combined over the bins right of the dashed line`,
    xLabel: 'wind direction (from), bin centre (°)',
    yLabel: 'gain (%)',
    series,
    yReference: 0,
    yIncludeZero: true,
    xDivider: { at: dEdges[dEdges.length - 1] + (dEdges[1] - dEdges[0]) * 0.35, label: 'combined' },
    notes: [
      `Bars: bootstrap percentile intervals at ${conf} % (Efron & Tibshirani 1993); the bins' windows are in power/power_gain.csv.`,
      'The gains hold under the stated assumptions: stationary flow within a bin, a reference unaffected by the yaw offsets, available turbines only.',
    ],
  });
}
