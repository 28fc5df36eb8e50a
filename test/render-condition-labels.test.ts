/**
 * Condition-bin keys (pipeline/ensembles.ts: "variable in [lo, hi)") in figure titles as people read them. Wording
 * only, checked against the keys the ensemble code writes; the keys themselves stay in tables and the manifest.
 */
import { describe, expect, it } from 'vitest';
import { conditionBinText, windowLabel, windowTimes } from '../src/render/labels.ts';

describe('condition bins in figure wording', () => {
  it('names the variable and its unit, with a minus sign for negative edges', () => {
    expect(conditionBinText('yaw_offset_deg in [-15, -5)')).toBe('yaw offset \u221215° to \u22125°');
    expect(conditionBinText('hub_speed_ms in [6, 8)')).toBe('hub wind speed 6 to 8\u00a0m/s');
    expect(conditionBinText('wind_direction_deg in [250, 290)')).toBe('wind from 250° to 290°');
    expect(conditionBinText('turbulence_intensity in [0.05, 0.1)')).toBe('turbulence intensity 0.05 to 0.1');
  });

  it('a column of a series keeps its name and says which series; several variables are joined', () => {
    expect(conditionBinText('turbine.power_kw in [500, 1000); yaw_offset_deg in [5, 15)'))
      .toBe('power_kw (turbine) 500 to 1000 \u00b7 yaw offset 5° to 15°');
    expect(conditionBinText('inflow.veer_deg in [0, 10)')).toBe('veer_deg (inflow) 0° to 10°');
  });

  it('leaves text that is not a key as it is, and titles ensembles with it', () => {
    expect(conditionBinText('morning toggles')).toBe('morning toggles');
    const w = { index: 2, start_s: NaN, end_s: NaN, kind: 'ensemble' as const, label: 'yaw_offset_deg in [-5, 5)', members: [[0, 600], [600, 1200]] as [number, number][] };
    expect(windowLabel(w)).toBe('yaw offset \u22125° to 5° (2\u00a0windows)');
    expect(windowTimes(w)).toBe('yaw offset \u22125° to 5°');
  });
});
