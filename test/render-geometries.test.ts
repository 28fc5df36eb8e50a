/**
 * The single-instrument geometries in figures and in the report: the figures are drawn from the rows (series per
 * window, error bars), the report gets one section per geometry with its tables, links and notes, and every string
 * from the data is escaped. Images are checked by their SVG content, not by pixels (DEVELOPERS.md, Tests).
 */
import { describe, expect, it } from 'vitest';
import { nacelleFigures, profileFigures, trackFigures } from '../src/render/geometryFigures.ts';
import { reportSections } from '../src/pipeline/geometryStage.ts';
import { reportHtml } from '../src/render/report.ts';
import type { ProfilePoint } from '../src/profile/types.ts';
import type { NacelleWindow } from '../src/nacelle/types.ts';
import type { TrackPoint } from '../src/track/types.ts';
import type { RunManifest } from '../src/pipeline/manifest.ts';
import { emptyAccount } from '../src/qc/reasons.ts';

const win = (i: number) => ({ index: i, start_s: 1.8e9 + 600 * i, end_s: 1.8e9 + 600 * (i + 1) });
const point = (z: number, flag: ProfilePoint['flag'] = 'ok'): ProfilePoint => ({
  instrumentId: 'p<1>', height_m: z, sampleHeight_m: z, radius_m: 50, u_ms: 5, v_ms: 5, w_ms: 0, su_ms: 0.1, sv_ms: 0.1, sw_ms: 0.05, speed_ms: 7 + z / 100, sspeed_ms: 0.1,
  direction_deg: 225, sdirection_deg: 0.5, sectors: 12, samples: 600, rmse_ms: 0.1, r2: 0.99, chi2dof: 1, maxGap_deg: 30, flag, reason: '',
});
const profiles = [0, 1].map((i) => ({ instrumentId: 'p<1>', window: win(i), points: [point(40), point(80), point(120, 'too_few_azimuths')] }));
const nac: NacelleWindow[] = [0, 1].map((i) => ({
  instrumentId: 'n', window: win(i), nacelle_deg: 230, distance_m: 250, distance_D: 2.5, hubSpeed_ms: 8, shubSpeed_ms: 0.05, speedHeight_m: 100, hubSpeedShear_ms: 8.1, shubSpeedShear_ms: 0.05,
  alpha: 0.2, salpha: 0.01, direction_deg: 225, sdirection_deg: 0.3, yawMisalignment_deg: 5, syawMisalignment_deg: 0.3, induction_a: 0.25, inductionRatio: 0.995,
  freeStream_ms: 8.14, sfreeStream_ms: 0.05, samples: 1000, gates: [], flag: 'ok', reason: '',
}));
const track: TrackPoint[] = [0, 1].flatMap((i) => [200, 300].map((x) => ({
  instrumentId: 't', window: win(i), scan: -1, x_m: x, x_D: x / 100, axis: 'y' as const, freeStream_ms: 8, freeStreamSource: 'inflow reference (profile)', amplitude: 0.5,
  centre_m: 5 + x / 100, scentre_m: 0.5, width_m: 30, swidth_m: 1, centroid_m: 5, r2: 0.9, bins: 21, samples: 2000, directionBiasCentre_m: 1.2, directionBiasWidth_m: 0.4,
  flag: 'ok' as const, reason: '', profile: { c_m: [-10, 0, 10], deficit: [0.1, 0.5, 0.1], sdeficit: [0.01, 0.01, 0.01] },
})));

describe('geometry figures', () => {
  it('draw one line per window, leave flagged heights out and name the sign conventions', () => {
    const figs = [...profileFigures(profiles), ...nacelleFigures(nac), ...trackFigures(track, 100)];
    expect(figs.map((f) => f.name)).toEqual(['profile_speed_p_1_', 'profile_direction_p_1_', 'nacelle_speed_n', 'nacelle_yaw_n', 'track_centre_t', 'track_deficit_t']);
    const speed = figs[0].svg;
    expect(speed).toContain('window 0');
    expect(speed).toContain('window 1');
    // Two ok heights per window: the flagged one is not drawn, and the instrument id is escaped in the title.
    expect(speed).toContain('p&lt;1&gt;');
    expect(figs[3].svg).toMatch(/nacelle minus wind direction/);
    expect(figs[4].svg).toMatch(/up to 1\.2 m/);
  });

  it('label their axes as the run\'s and planner\'s figures do: "°" for angles, one phrasing of height and distance (issue 15)', async () => {
    const { svgTexts } = await import('./helpers/svgText.ts');
    const { QUANTITY } = await import('../src/render/labels.ts');
    const { plainText } = await import('../src/render/richText.ts');
    const figs = [...profileFigures(profiles), ...nacelleFigures(nac), ...trackFigures(track, 100)];
    const labels = figs.flatMap((f) => svgTexts(f.svg).filter((t) => t.cls === 'axis-label').map((t) => t.text.replace(/\u00a0/g, ' ')));
    expect(labels.length).toBeGreaterThanOrEqual(12);
    for (const l of labels) {
      expect(l, l).not.toMatch(/\bdeg\b/);
      expect(l, l).not.toMatch(/\(-\)/); // dimensionless is "(–)" as in QUANTITY
    }
    expect(labels).toContain(plainText(QUANTITY.height));
    expect(labels).toContain(plainText(QUANTITY.downstream));
    expect(labels).toContain('y, lateral, positive to the left (m)'); // the tracker's deficit across the wake
    // The power-gain figure and the geometry tables of the report too.
    const { powerGainSvg } = await import('../src/render/powerGainFigure.ts');
    const gain = powerGainSvg({
      reference: 'R', edges: { direction_deg: [260, 270, 280], speed_ms: [0, 20] }, windows: [], assumptions: [], notes: [],
      gains: [{ turbine: 'T', level_deg: 20, result: { confidence: 0.95, bins: [{ gain: 0.02, gainLo: 0, gainHi: 0.04, directionLo: 260, directionHi: 270, speedLo: 0, speedHi: 20 }], combined: { gain: 0.02, lo: 0, hi: 0.04 } } }],
    } as unknown as Parameters<typeof powerGainSvg>[0])!;
    for (const t of svgTexts(gain).filter((x) => x.cls === 'axis-label')) expect(t.text, t.text).not.toMatch(/\bdeg\b/);
    const headers = reportSections({ profiles, profileBins: [], nacelle: nac, tracks: track, notes: [] }).flatMap((x) => (x.tables ?? []).flatMap((tb) => tb.columns ?? []));
    expect(headers.length).toBeGreaterThan(5);
    for (const h of headers) expect(h, h).not.toMatch(/\bdeg\b/);
  });
});

describe('report sections', () => {
  it('one section per geometry with a linked table and the relevant notes only', () => {
    const sections = reportSections({ profiles, profileBins: [], nacelle: nac, tracks: track, notes: ['nacelle instruments: w = 0 assumed', 'wake tracking: direction assumed'] });
    expect(sections.map((s) => s.title)).toEqual(['Wind profiles (VAD / DBS)', 'Nacelle instruments', 'Single-instrument wake tracking']);
    expect(sections[1].notes!.some((n) => n.startsWith('nacelle instruments'))).toBe(true);
    expect(sections[1].notes!.some((n) => n.startsWith('wake tracking'))).toBe(false);
    const m = {
      tool: { name: 'wakeplane', version: 't' }, campaign: { name: 'c', file: 'c.yaml', sha256: '0', description: '' }, startedAt: '', finishedAt: '', inputs: [], settings: {},
      samples: { total: emptyAccount(), perInstrument: {}, balanced: true }, windows: [], outputs: [], timings_s: {}, peakRss_bytes: 0, samplesPerSecond: 0, assumptions: [], warnings: [],
    } as unknown as RunManifest;
    const html = reportHtml(m, { geometry: sections });
    expect(html).toContain('id="geometry-0"');
    expect(html).toContain('profiles/p_1_.csv');
    expect(html).toContain('p&lt;1&gt;');
    expect(html).not.toContain('p<1>');
  });
});
