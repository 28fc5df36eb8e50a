/**
 * Campaigns with several turbines: the single `turbine` key stays the first of the list, planes belong to a
 * turbine's frame or the site frame, and the bad inputs of a site (a turbine listed twice, overlapping rotors, a
 * plane whose frame turbine does not exist, unknown ids elsewhere) stop with one line naming the key.
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import { planeOrigin, stateTurbine, turbineOfPlane } from '../src/campaign/turbines.ts';
import { ConfigError } from '../src/errors.ts';
import { tinyCampaignObject } from './helpers/tinyCampaign.ts';

const base = () => structuredClone(tinyCampaignObject()) as Record<string, any>;
const row = () => [
  { id: 'R1', position_m: [0, 0, 0], hubHeight_m: 90, rotorDiameter_m: 90 },
  { id: 'R2', position_m: [450, 0, 8], hubHeight_m: 90, rotorDiameter_m: 90, series: { file: 'r2.csv' } },
];

describe('turbine list', () => {
  it('keeps the single turbine key as the first turbine', () => {
    const c = resolveCampaign(base(), '/x/c.yaml');
    expect(c.turbines.map((t) => t.id)).toEqual(['T-test']);
    expect(c.turbine).toBe(c.turbines[0]);
    expect(c.planes[0].turbineIndex).toBe(0);
  });
  it('lists `turbine` first, then `turbines`, with absolute series paths', () => {
    const o = base();
    o.turbines = row().map((t) => ({ ...t, position_m: [t.position_m[0] + 1000, 500, t.position_m[2]] }));
    const c = resolveCampaign(o, '/x/c.yaml');
    expect(c.turbines.map((t) => [t.id, t.index])).toEqual([['T-test', 0], ['R1', 1], ['R2', 2]]);
    expect(c.turbines[2].series?.file).toBe('/x/r2.csv');
    expect(stateTurbine(c).id).toBe('T-test'); // the first with a series
  });
  it('puts planes in the frame they name, with heights from their reference', () => {
    const o = base();
    delete o.turbine;
    o.turbines = row();
    o.windows = { kind: 'fixed', length_s: 600 };
    o.planes = [
      { id: 'behind2', frame: 'R2', x_D: 3, y: { min: -90, max: 90 }, z: { min: 10, max: 170 }, cell_m: [30, 30] },
      { id: 'hub', frame: 'site', orientation: 'horizontal', heights: 'terrain', y: { min: -90, max: 90 }, xRange: { min: 0, max: 900 }, cell_m: [30, 30] },
      { id: 'abs', frame: 'site', orientation: 'horizontal', heights: 'site', y: { min: -90, max: 90 }, xRange: { min: 0, max: 900 }, cell_m: [30, 30] },
    ];
    const c = resolveCampaign(o, '/x/c.yaml');
    const [p0, p1, p2] = c.planes;
    expect([p0.turbineIndex, p0.origin, p0.x_m]).toEqual([1, [450, 0, 8], 270]); // 3 D of R2 (90 m)
    expect(turbineOfPlane(c, p0).id).toBe('R2');
    expect([p1.turbineIndex, p1.origin, p1.heights, p1.z_m]).toEqual([-1, [0, 0, 0], 'terrain', 90]); // hub height above ground
    expect(p2.z_m).toBe(90); // R1's base at site up 0 + hub height 90
    expect(planeOrigin(c, p1)).toEqual([0, 0, 0]);
    expect(stateTurbine(c).id).toBe('R2');
  });
});

describe('bad sites stop with one line naming the key', () => {
  const cases: [string, (c: Record<string, any>) => void, RegExp][] = [
    ['a turbine listed twice', (c) => { c.turbines = [{ ...c.turbine, position_m: [900, 0, 0] }]; }, /turbines\[0\]\.id: turbine ids must be unique \(a turbine is listed twice\) \(got "T-test"\)/],
    ['overlapping rotors', (c) => { c.turbines = [{ ...c.turbine, id: 'T2', position_m: [100, 0, 0] }]; }, /turbines\[0\]\.position_m: rotors overlap with turbine "T-test": towers 100\.0 m apart, less than the sum of the rotor radii 120\.0 m/],
    ['a plane whose frame turbine does not exist', (c) => { c.planes[0].frame = 'T9'; }, /planes\[0\]\.frame: no turbine with this id \(known: T-test, or "site"\) \(got "T9"\)/],
    ['no turbine at all', (c) => { delete c.turbine; }, /turbines: the campaign needs a turbine/],
    ['segment windows naming an unknown turbine', (c) => { c.windows = { kind: 'segments', levels_deg: [0], turbine: 'T9' }; }, /windows\.turbine: no turbine with this id/],
    ['a power reference that does not exist', (c) => { c.power = { reference: 'T9' }; }, /power\.reference: no turbine with this id \(known: T-test\) \(got "T9"\)/],
    ['a terrain crs wakeplane does not know', (c) => { c.site = { terrain: { file: 't.tif', crs: 'lambert' } }; }, /site\.terrain\.crs: must be "site" or "EPSG:<code>" \(got "lambert"\)/],
  ];
  for (const [what, edit, message] of cases) {
    it(what, () => {
      const c = base();
      edit(c);
      let err: unknown;
      try { resolveCampaign(c, 'camp.yaml'); } catch (e) { err = e; }
      expect(err).toBeInstanceOf(ConfigError);
      expect((err as Error).message).toMatch(/^camp\.yaml: /);
      expect((err as Error).message).toMatch(message);
      expect((err as Error).message).not.toMatch(/\n/);
    });
  }
});
