/**
 * The figures of the data-driven CNR limit (src/render/cnrLimitFigure.ts), read back from the SVG: one dashed
 * vertical line per instrument at its chosen limit on the CNR axis, the evidence curves, no overlapping text.
 */
import { describe, expect, it } from 'vitest';
import { estimateCnrLimit } from '../src/qc/cnrLimit.ts';
import type { InstrumentCnrLimit } from '../src/qc/cnrLimits.ts';
import { cnrLimitFigures } from '../src/render/cnrLimitFigure.ts';
import { junkSamples } from './helpers/junkSamples.ts';
import { overlaps, svgTexts } from './helpers/svgText.ts';

function limitOf(level: number, seed: number): InstrumentCnrLimit {
  const { decision: d } = estimateCnrLimit(junkSamples({ junkBelow_db: level, rows: 20000, seed }));
  return { min_db: d.min_db, max_db: 5, status: d.status, note: '', classes: d.classes };
}

describe('CNR limit figures', () => {
  const per = { west: limitOf(-21, 1), east: limitOf(-26, 2) };
  const figs = cnrLimitFigures(per);

  it('two figures (inconsistent share and scatter), each with a dashed vertical line per instrument at its limit', () => {
    expect(figs.map((f) => f.what)).toEqual(['inconsistent', 'scatter']);
    const lo = Math.min(...Object.values(per).map((l) => Math.min(l.min_db, l.classes![0].lo_db)));
    const hi = Math.max(...Object.values(per).map((l) => l.classes![l.classes!.length - 1].hi_db));
    const d0 = Math.floor(lo) - 1, d1 = Math.ceil(hi) + 1;
    for (const f of figs) {
      const dashed = [...f.svg.matchAll(/<path class="series-line" d="M([-0-9.]+),([-0-9.]+)L([-0-9.]+),([-0-9.]+)"[^>]*stroke-dasharray="6 4"/g)].map((m) => m.slice(1, 5).map(Number));
      expect(dashed.length).toBe(2);
      // The plot area of linePlot.ts: left edge 72, width 470 (its defaults); x = 72 + 470 (v - d0) / (d1 - d0).
      // Coordinates are written to 2 decimals: 0.01 units.
      dashed.forEach(([x1, , x2], k) => {
        expect(x1).toBe(x2); // vertical: exact, the same number written twice
        const limit = Object.values(per)[k].min_db;
        expect(Math.abs(x1 - (72 + (470 * (limit - d0)) / (d1 - d0)))).toBeLessThan(0.01);
      });
      expect(overlaps(svgTexts(f.svg))).toEqual([]);
    }
    expect(per.west.min_db).toBe(-21); // the evidence behind the figure found both breaks (see qc-cnr-limit.test.ts)
    expect(per.east.min_db).toBe(-26);
  });

  it('no figure when no instrument has an evidence curve (fixed limits)', () => {
    expect(cnrLimitFigures({ a: { min_db: -27, max_db: 5, status: 'fixed', note: '' } })).toEqual([]);
  });
});
