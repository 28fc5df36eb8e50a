/**
 * Campaign-file validation: a table of invalid documents and the key path, rule and value each error must name;
 * defaults filled in; the published JSON Schema kept in step with the validator.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { campaignJsonSchema, parseCampaignText, resolveCampaign } from '../src/campaign/load.ts';
import { ConfigError } from '../src/errors.ts';
import { tinyCampaignObject } from './helpers/tinyCampaign.ts';

const base = () => structuredClone(tinyCampaignObject()) as Record<string, any>;

describe('campaign validation errors name the key path, the rule and the value', () => {
  const cases: [string, (c: Record<string, any>) => void, RegExp][] = [
    ['rotor diameter negative', (c) => (c.turbine.rotorDiameter_m = -5), /turbine\.rotorDiameter_m: .*(too small|>0|positive)/i],
    ['unknown key', (c) => (c.turbine.hubheight = 3), /turbine\.hubheight: unknown key; did you mean "hubHeight_m"\?/],
    ['instrument kind misspelt', (c) => (c.instruments[1].kind = 'pulse'), /instruments\[1\]\.kind: .*(pulsed|cw).*"pulse"/],
    ['duplicate instrument id', (c) => (c.instruments[2].id = 'a'), /instruments\[2\]\.id: instrument ids must be unique \(got "a"\)/],
    ['no position', (c) => delete c.instruments[0].position_m, /instruments\[0\]: needs position_m/],
    ['cross plane without distance', (c) => delete c.planes[0].x_D, /planes\[0\]: a cross plane needs exactly one of x_m or x_D/],
    ['extent reversed', (c) => (c.planes[0].y = { min: 100, max: -100 }), /planes\[0\]\.y: max must be greater than min/],
    ['window length zero', (c) => (c.windows = { kind: 'fixed', length_s: 0 }), /windows\.length_s/],
    ['wind direction out of range', (c) => (c.windDirection = { kind: 'fixed', deg: 400 }), /windDirection\.deg: .*(360|big)/i],
    ['CNR window inverted', (c) => (c.qc = { cnr_db: { min: 0, max: -10 } }), /qc\.cnr_db: max must be greater than min/],
    // qc.cnr_db: the data-driven limit's keys (src/qc/cnrLimits.ts); each error names its key on one line.
    ['CNR min neither a number nor auto', (c) => (c.qc = { cnr_db: { min: 'automatic' } }), /qc\.cnr_db\.min: .*"automatic"/],
    ['CNR auto key misspelt', (c) => (c.qc = { cnr_db: { auto: { rowsPerInstrumnet: 5000 } } }), /qc\.cnr_db\.auto\.rowsPerInstrumnet: unknown key; did you mean "rowsPerInstrument"\?/],
    ['CNR auto row budget too small', (c) => (c.qc = { cnr_db: { auto: { rowsPerInstrument: 10 } } }), /qc\.cnr_db\.auto\.rowsPerInstrument: .*1000.*\(got 10\)/],
    ['CNR auto junk cost below 1', (c) => (c.qc = { cnr_db: { auto: { junkCost: 0.5 } } }), /qc\.cnr_db\.auto\.junkCost: .*1.*\(got 0\.5\)/],
    ['CNR auto time block not positive', (c) => (c.qc = { cnr_db: { auto: { timeBlock_s: 0 } } }), /qc\.cnr_db\.auto\.timeBlock_s/],
    ['CNR auto fallback above the ceiling', (c) => (c.qc = { cnr_db: { max: 5, auto: { fallback_db: 8 } } }), /qc\.cnr_db\.auto\.fallback_db: must be below qc\.cnr_db\.max \(got 8\)/],
    ['latitude without origin', (c) => { delete c.instruments[0].position_m; c.instruments[0].position_wgs84 = { lat_deg: 52, lon_deg: 10, alt_m: 40 }; }, /instruments\[0\]\.position_wgs84: needs site\.origin_wgs84/],
    ['name with a slash', (c) => (c.name = 'a/b'), /name: letters, digits/],
  ];
  for (const [what, edit, message] of cases) {
    it(what, () => {
      const c = base();
      edit(c);
      let err: unknown;
      try {
        resolveCampaign(c, 'camp.yaml');
      } catch (e) {
        err = e;
      }
      expect(err).toBeInstanceOf(ConfigError);
      expect((err as Error).message).toMatch(/^camp\.yaml: /);
      expect((err as Error).message).toMatch(message);
    });
  }

  it('YAML syntax errors name the line', () => {
    expect(() => parseCampaignText('name: x\nturbine: [1, 2\n', 'c.yaml')).toThrow(/c\.yaml:\d+:\d+: not valid YAML/);
  });
});

describe('defaults and resolution', () => {
  it('fills documented defaults and resolves planes in metres and paths against the campaign folder', () => {
    const c = resolveCampaign(base(), '/data/site/campaign.yaml');
    // The CNR limit is estimated from the data by default (auto); the documented defaults of its settings.
    expect(c.qc.cnr_db).toEqual({
      min: 'auto', max: 5,
      auto: { rowsPerInstrument: 15000, timeBlock_s: 600, junkCost: 10, minSamples: 2000, fallback_db: -35, withoutEvidence_db: -27 },
    });
    expect(c.qc.robust).toEqual({ enabled: true, k: 3.5, minSamples: 5 });
    expect(c.retrieval.maxAmplification).toBe(3);
    expect(c.instruments[0].kind).toBe('pulsed');
    expect(c.instruments[2].calibration).toEqual({ heading_deg: 1.5, pitch_deg: 0, roll_deg: 0, rangeOffset_m: 0 });
    expect(c.planes[0].x_m).toBe(600); // 5 rotor diameters of 120 m
    expect(c.instruments[0].files[0]).toBe('/data/site/data/a.csv');
  });

  it('a fixed CNR limit keeps working as before (qc.cnr_db.min a number)', () => {
    const c = base();
    c.qc = { cnr_db: { min: -24, max: 3 } };
    expect(resolveCampaign(c, 'x.yaml').qc.cnr_db).toMatchObject({ min: -24, max: 3 });
  });

  it('places an instrument given in WGS84 in the site frame', () => {
    const c = base();
    c.site = { origin_wgs84: { lat_deg: 52, lon_deg: 10, alt_m: 40 } };
    delete c.instruments[0].position_m;
    // 0.01 degree of latitude north of the origin at the same height.
    c.instruments[0].position_wgs84 = { lat_deg: 52.01, lon_deg: 10, alt_m: 40 };
    const r = resolveCampaign(c, 'x.yaml');
    // Reference: WGS84 meridian radius of curvature M = a(1-e^2)/(1-e^2 sin^2 lat)^1.5 (a = 6378137 m,
    // e^2 = 0.00669437999014; NIMA TR8350.2), arc = M * dlat = 1113.2 m at 52 deg N. Tolerance 0.5 m covers the
    // chord-vs-arc difference (<0.01 m) and the curvature drop of the chord (~0.1 m in up).
    const lat = (52.005 * Math.PI) / 180, e2 = 0.00669437999014, a = 6378137;
    const M = (a * (1 - e2)) / (1 - e2 * Math.sin(lat) ** 2) ** 1.5;
    expect(r.instruments[0].position[1]).toBeCloseTo(M * ((0.01 * Math.PI) / 180), 0);
    expect(Math.abs(r.instruments[0].position[0])).toBeLessThan(0.01);
  });
});

describe('the published JSON Schema', () => {
  it('matches the validator (regenerate with `wakeplane schema --write schema/campaign.schema.json`)', () => {
    const committed = JSON.parse(readFileSync(join(import.meta.dirname, '..', 'schema', 'campaign.schema.json'), 'utf8'));
    expect(committed).toEqual(campaignJsonSchema());
  });
});
