/**
 * Figures of the data-driven CNR limit (qc/cnrLimits.ts): per instrument, the share of samples inconsistent with
 * their neighbours and the robust scatter of the deviations against CNR, each with the chosen limit drawn as a
 * dashed vertical line in the instrument's colour. Files go to <runDir>/images/qc_cnr_<what>.svg and .png.
 */
import type { OutputRecord } from '../records/manifest.ts';
import type { InstrumentCnrLimit } from '../qc/cnrLimits.ts';
import { INCONSISTENT } from '../qc/cnrLimit.ts';
import { writeFigure, type FigureOptions } from './figure.ts';
import { linePlotSvg, type PlotSeries } from './linePlot.ts';
import { formatNumber } from './ticks.ts';
import { theme } from './theme.ts';

const STATUS_TEXT: Record<InstrumentCnrLimit['status'], string> = {
  break: 'estimated', 'no-break': 'no clear break: permissive', 'too-few-samples': 'too few samples', 'no-cnr': 'no CNR', fixed: 'fixed',
};

/** The two figures as SVG text (pure); none when no instrument has an evidence curve. */
export function cnrLimitFigures(per: Record<string, InstrumentCnrLimit>): { what: string; description: string; svg: string }[] {
  const withCurve = Object.entries(per).filter(([, l]) => (l.classes?.length ?? 0) > 0);
  if (!withCurve.length) return [];
  const build = (value: (c: NonNullable<InstrumentCnrLimit['classes']>[number]) => number, top: number) => {
    const series: PlotSeries[] = [];
    // Instruments with the same limit share one line position: their dashes interleave (each a 6-unit dash, then
    // the others' dashes and 2-unit gaps), so that every colour stays visible.
    const same = (a: number, b: number) => Math.abs(a - b) < 1e-9;
    withCurve.forEach(([id, l], k) => {
      const group = withCurve.filter(([, o]) => same(o.min_db, l.min_db));
      const m = group.length, j = group.findIndex(([gid]) => gid === id);
      const dash = m > 1 ? `6 ${8 * m - 6}` : '6 4';
      const colour = theme.series[k % theme.series.length];
      const cls = l.classes!;
      series.push({ label: `${id}: limit ${formatNumber(l.min_db, 1)}\u00a0dB (${STATUS_TEXT[l.status]})`, x: cls.map((c) => (c.lo_db + c.hi_db) / 2), y: cls.map(value), kind: 'both', marker: 'circle', colour });
      series.push({ label: `${id}: chosen limit`, x: [l.min_db, l.min_db], y: [0, top], kind: 'line', dash, ...(m > 1 ? { dashOffset: -8 * j } : {}), colour });
    });
    return series;
  };
  const lo = Math.min(...withCurve.map(([, l]) => Math.min(l.min_db, l.classes![0].lo_db)));
  const hi = Math.max(...withCurve.map(([, l]) => l.classes![l.classes!.length - 1].hi_db));
  const maxScatter = Math.max(...withCurve.flatMap(([, l]) => l.classes!.map((c) => c.scatter_ms)));
  const note = 'Deviation of each sample from the median of its stronger-signal neighbours (same instrument, place and direction, time block); classes of at least 200 samples from rows spread through every file (the first rows of compressed and NetCDF files).';
  return [
    {
      what: 'inconsistent',
      description: 'share of samples inconsistent with their neighbours against CNR, with the chosen CNR limit per instrument',
      svg: linePlotSvg({
        title: 'CNR limit from the data',
        subtitle: `share of samples more than ${INCONSISTENT} good-signal standard deviations from their neighbours`,
        xLabel: 'CNR (dB)',
        yLabel: 'inconsistent samples (%)',
        series: build((c) => 100 * c.inconsistentShare, 100),
        xDomain: [Math.floor(lo) - 1, Math.ceil(hi) + 1],
        yDomain: [0, 100],
        notes: [note],
      }),
    },
    {
      what: 'scatter',
      description: 'robust scatter of the radial-velocity deviations against CNR, with the chosen CNR limit per instrument',
      svg: linePlotSvg({
        title: 'Radial-velocity scatter against CNR',
        subtitle: '1.4826 \u00d7 median absolute deviation from the neighbours, per CNR class',
        xLabel: 'CNR (dB)',
        yLabel: 'scatter (m/s)',
        series: build((c) => c.scatter_ms, maxScatter * 1.05),
        xDomain: [Math.floor(lo) - 1, Math.ceil(hi) + 1],
        yDomain: [0, maxScatter * 1.05],
        notes: [note],
      }),
    },
  ];
}

export async function renderCnrLimitFigures(per: Record<string, InstrumentCnrLimit>, runDir: string, fig: FigureOptions = {}): Promise<OutputRecord[]> {
  const jobs = cnrLimitFigures(per).map((f) => writeFigure(f.svg, runDir, `qc_cnr_${f.what}`, { description: f.description }, fig));
  return (await Promise.all(jobs)).flat();
}
