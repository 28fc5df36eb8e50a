/**
 * A small simulated campaign in a temporary folder, for pipeline tests: the demo's geometry with one plane,
 * coarse cells and a few windows, so a whole run takes about a second.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';

export function tinyCampaignObject(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    name: 'tiny-test',
    turbine: { id: 'T-test', position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 120, thrustCoefficient: 0.78, series: { file: 'data/turbine.csv' } },
    instruments: [
      { id: 'a', position_m: [560, 420, 1.5], files: ['data/a.csv'] },
      { id: 'b', position_m: [560, -420, 1.5], files: ['data/b.csv'] },
      { id: 'c', position_m: [1450, 0, 1.5], files: ['data/c.csv'], calibration: { heading_deg: 1.5 } },
    ],
    planes: [{ id: 'p5', x_D: 5, y: { min: -180, max: 180 }, z: { min: 10, max: 190 }, cell_m: [30, 30], thickness_m: 24 }],
    windows: { kind: 'fixed', length_s: 600 },
    windDirection: { kind: 'series', file: 'data/wind_direction.csv' },
    simulation: {
      seed: 7, start: '2026-03-01T12:00:00Z', windows: 3, hubSpeed_ms: 8, yawOffsets_deg: [0, 15, -15],
      rayRate_hz: 4, dwell_s: 1, wakeLateralOffset_m: 10,
    },
    ...overrides,
  };
}

export function writeTinyCampaign(overrides: Record<string, unknown> = {}): { dir: string; file: string } {
  const dir = mkdtempSync(join(tmpdir(), 'wakeplane-test-'));
  const file = join(dir, 'campaign.yaml');
  writeFileSync(file, stringify(tinyCampaignObject(overrides)));
  return { dir, file };
}
