/**
 * An ensemble of windows (merged kept-sample statistics, src/retrieval/cellStats.ts) against one window over the
 * pooled kept samples, with the robust filter applied per window (the property issue-level ensembles rely on).
 * The reference pools the raw samples each window's filter kept and retrieves them with the filter off, through
 * the independent-of-merging path retrieveWindow.
 */
import { describe, expect, it } from 'vitest';
import { createWindowSamples, pushSample, type WindowSamples } from '../src/grid/windowSamples.ts';
import { VR_SCALE } from '../src/grid/accumulator.ts';
import { mulberry32 } from '../src/math/random.ts';
import { FINE_SHIFT, emptyHistogramStats, robustStats } from '../src/qc/vrHistogram.ts';
import { accumulateSamples, emptyCellStats, mergeCellStats, retrieveStats, retrieveWindow, robustFilter } from '../src/retrieval/index.ts';
import type { PlaneGrid, RetrievalSettings } from '../src/retrieval/settings.ts';

const PLANE: PlaneGrid = {
  spec: { id: 'p', index: 0, orientation: 'cross', x_m: 600, z_m: NaN, y: { min: -20, max: 20 }, second: { min: 80, max: 100 }, cell_m: [20, 20], thickness_m: 20 },
  grid: { ny: 2, nz: 1, y0: -10, z0: 90, dy: 20, dz: 20 },
};
const I = 3;
const settings: RetrievalSettings = { maxAmplification: 5, minSamplesPerInstrument: 3, twoInstrumentAssumption: 'w-zero', robust: { enabled: true, k: 3.5, minSamples: 5 }, instrumentCount: I };
const WIN = { index: 0, start_s: 0, end_s: 600 };

function unit(az: number, el: number): [number, number, number] {
  const a = (az * Math.PI) / 180, e = (el * Math.PI) / 180;
  return [Math.cos(e) * Math.cos(a), Math.cos(e) * Math.sin(a), Math.sin(e)];
}

/** One window: per cell and instrument a fixed beam (slightly different per window), noisy v_r, optional spikes. */
function windowSamples(seed: number, spikes: boolean): WindowSamples {
  const r = mulberry32(seed);
  const s = createWindowSamples();
  const U = [8 + r(), 0.5 * r(), 0.3 * r()];
  for (let cell = 0; cell < 2; cell++) {
    const beams = [unit(35 + 3 * r(), 20 + r()), unit(-40 + 3 * r(), 18 + r()), unit(175 + 3 * r(), 25 + r())];
    beams.forEach((b, ins) => {
      const n = 30 + Math.floor(r() * 60);
      for (let k = 0; k < n; k++) {
        let g = 0;
        for (let j = 0; j < 12; j++) g += r();
        let vr = b[0] * U[0] + b[1] * U[1] + b[2] * U[2] + 0.3 * (g - 6);
        if (spikes && r() < 0.06) vr += (r() < 0.5 ? -1 : 1) * (5 + 10 * r());
        pushSample(s, 0, cell, ins, vr, b[0], b[1], b[2], cell * 20 - 10 + r(), 90 + r());
      }
    });
  }
  return s;
}

/** The samples a window's filter keeps (bin centre within k sigma of the bin-centre median of its group). */
function keptSamples(s: WindowSamples, k = settings.robust.k): { kept: WindowSamples; rejected: number[]; delta: number } {
  const acc = accumulateSamples(s, [PLANE], I);
  const kept = createWindowSamples();
  const rejected = new Array(2 * I).fill(0);
  let delta = 0;
  for (let i = 0; i < s.length; i++) {
    const key = s.cell[i] * I + s.instrument[i];
    const slot = acc.slotOf[key];
    const hs = robustStats(acc.hist, slot, k, emptyHistogramStats());
    delta = Math.max(delta, hs.width);
    const q = Math.round(s.vr[i] * VR_SCALE);
    const centre = ((q >> (FINE_SHIFT + acc.hist.level[slot])) + 0.5) * hs.width;
    if (hs.n >= 5 && Math.abs(centre - hs.median) > k * hs.sigma) { rejected[key]++; continue; }
    pushSample(kept, 0, s.cell[i], s.instrument[i], s.vr[i], s.nx[i], s.ny[i], s.nz[i], s.py[i], s.pz[i]);
  }
  return { kept, rejected, delta };
}

function pooled(list: WindowSamples[]): WindowSamples {
  const out = createWindowSamples();
  for (const s of list) for (let i = 0; i < s.length; i++) pushSample(out, s.plane[i], s.cell[i], s.instrument[i], s.vr[i], s.nx[i], s.ny[i], s.nz[i], s.py[i], s.pz[i]);
  return out;
}

function ensemble(list: WindowSamples[], k = settings.robust.k) {
  const total = emptyCellStats(2 * I, I);
  for (const s of list) mergeCellStats(total, robustFilter(accumulateSamples(s, [PLANE], I), { ...settings.robust, k }).stats);
  return retrieveStats(total, [PLANE], WIN, 270, settings)[0];
}

describe('ensemble = one window over the pooled kept samples', () => {
  it('nothing rejected: equal to rounding (1e-9 m/s: sums of a few hundred doubles)', () => {
    // Gaussian noise and a limit of 6 sigma: a rejection has probability ~2e-9 per sample, and none happens here.
    const wins = [1, 2, 3, 4].map((seed) => windowSamples(seed, false));
    const parts = wins.map((w) => keptSamples(w, 6));
    expect(parts.every((p) => p.rejected.every((x) => x === 0))).toBe(true);
    const e = ensemble(wins, 6);
    const ref = retrieveWindow(pooled(parts.map((p) => p.kept)), [PLANE], WIN, 270, { ...settings, robust: { ...settings.robust, enabled: false } }).fields[0];
    for (const c of [0, 1]) {
      for (const k of ['u', 'v', 'w', 'su', 'sv', 'sw'] as const) expect(Math.abs(e[k][c] - ref[k][c]), `${k}[${c}]`).toBeLessThan(1e-9);
      expect(e.samples[c]).toBe(ref.samples[c]);
    }
  });

  it('with outliers rejected per window: equal within the filter\'s stated bin-centre tolerance', () => {
    const wins = [5, 6, 7, 8, 9].map((seed) => windowSamples(seed, true));
    const parts = wins.map((w) => keptSamples(w));
    const totalRejected = parts.reduce((a, p) => a + p.rejected.reduce((x, y) => x + y, 0), 0);
    expect(totalRejected).toBeGreaterThan(20); // the case exercises the filter
    const e = ensemble(wins);
    const ref = retrieveWindow(pooled(parts.map((p) => p.kept)), [PLANE], WIN, 270, { ...settings, robust: { ...settings.robust, enabled: false } }).fields[0];
    // Kept sums subtract the rejected samples' bin centres (robustFilter.ts): each instrument mean moves by at most
    // (delta / 2) * rejected / kept; with amplification <= 5 and <= 40 % rejected-to-kept, |du| <= 5 * delta.
    const delta = Math.max(...parts.map((p) => p.delta));
    for (const c of [0, 1]) {
      for (const k of ['u', 'v', 'w'] as const) expect(Math.abs(e[k][c] - ref[k][c]), `${k}[${c}]`).toBeLessThan(5 * delta);
      // Variances likewise (the rejected squares by their bin centres): 1 % on the standard uncertainty.
      for (const k of ['su', 'sv', 'sw'] as const) expect(Math.abs(e[k][c] / ref[k][c] - 1), `${k}[${c}]`).toBeLessThan(0.01);
      expect(e.samples[c]).toBe(ref.samples[c]);
    }
  });
});
