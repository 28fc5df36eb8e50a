/**
 * Planning per geometry: two plane scanners (dual-Doppler) and horizontal planes are planned for u and v over the
 * right region, the layout search ranks two-scanner layouts, and profilers and nacelle instruments get their own
 * figures. Outside sources: ../shared/REFERENCES.md section 2 (two horizontal beams crossing at gamma: amplification
 * along the bisector 1/(sqrt2 cos(gamma/2)), across it 1/(sqrt2 sin(gamma/2)); table values [numpy]); cone
 * amplification derived in the test from the normal matrix of N evenly spaced beams.
 */
import { describe, expect, it } from 'vitest';
import { resolveCampaign } from '../src/campaign/load.ts';
import { planCampaign } from '../src/plan/index.ts';

/** Two scanners at hub height (horizontal beams) seeing the cell (x = 300, y = 0) of a horizontal plane at 100 m. */
function dual(halfAngle_deg: number, extra: Record<string, unknown>[] = [], candidates?: Record<string, unknown>) {
  const a = (halfAngle_deg * Math.PI) / 180, L = 250;
  // Wind from 270: downstream = east. Scanners upstream of the cell on either side, symmetric about x.
  const pos = (s: number) => [300 - L * Math.cos(a), s * L * Math.sin(a), 100];
  return resolveCampaign({
    name: 'p', turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 100 },
    instruments: [{ id: 'a', position_m: pos(1) }, { id: 'b', position_m: pos(-1) }, ...extra],
    planes: [{ id: 'h', orientation: 'horizontal', z_m: 100, y: { min: -10, max: 10 }, xRange: { min: 290, max: 310 }, cell_m: [20, 20] }],
    windDirection: { kind: 'fixed', deg: 270 },
    plan: { minCrossing_deg: 10, ...(candidates ? { candidates } : {}) },
  }, '<memory>');
}

describe('two scanners on a horizontal plane', () => {
  it('amplifications equal the two-beam values of REFERENCES.md 2 and the plane is planned for u and v', () => {
    // gamma = 90: along 1, across 1; gamma = 30: along 0.732051, across 2.732051 (REFERENCES.md 2 table [numpy]).
    for (const [gamma, along, across, trusted] of [[90, 1, 1, 1], [30, 0.732051, 2.732051, 1], [15, 0.713208, 5.417355, 0]] as const) {
      const r = planCampaign(dual(gamma / 2));
      const t = r.planes[0].trust;
      // 1e-6: the table's digits.
      expect(t.dopU[0]).toBeCloseTo(along, 6);
      expect(t.dopV[0]).toBeCloseTo(across, 6);
      expect(r.summary.planes[0].components).toBe('uv');
      expect(r.summary.planes[0].region).toBe('rotor shadow band');
      // Trusted when u and v pass (maxAmplification 3): w is not asked of two scanners.
      expect(r.planes[0].trust.passTarget[0]).toBe(trusted);
      expect(r.summary.plane.all).toBe(trusted);
    }
  });

  it('ranks two-scanner layouts by the resolved share of the region', () => {
    const r = planCampaign(dual(7.5, [], { b: [[300 - 250 * Math.cos(Math.PI / 4), -250 * Math.sin(Math.PI / 4)]] }));
    expect(r.layout!.baseline.rotor.all).toBe(0);
    expect(r.layout!.ranked[0].rotor.all).toBe(1);
    expect(r.summary.layout!.gain.rotorAll).toBe(1);
  });

  it('leaves profilers, nacelle instruments and trackers out of the plane trust and plans them apart', () => {
    const c = dual(45, [
      { id: 'v', role: 'profiler', position_m: [-300, 0, 0], profile: { mode: 'vad', heights_m: { min: 40, max: 160, step: 40 }, pattern: { elevation_deg: 60, azimuths_deg: Array.from({ length: 12 }, (_, k) => 30 * k), ranges_m: [46, 92, 139, 185] } } },
    ]);
    const r = planCampaign(c);
    expect(r.instruments.map((i) => i.id)).toEqual(['a', 'b']);
    expect(r.planes[0].beams).toHaveLength(2);
    const g = r.geometries.find((x) => x.instrumentId === 'v')!;
    // N = 12 evenly spaced beams on a cone at phi: A^T A = diag(N cos^2 phi / 2, N cos^2 phi / 2, N sin^2 phi), so
    // the amplification is 1/(cos phi sqrt(N/2)) = 0.8165 for u, v and 1/(sin phi sqrt N) = 0.3333 for w (phi = 60).
    expect(Number(g.rows[0].dop_u)).toBeCloseTo(1 / (0.5 * Math.sqrt(6)), 2);
    expect(Number(g.rows[0].dop_w)).toBeCloseTo(1 / ((Math.sqrt(3) / 2) * Math.sqrt(12)), 2);
    // Heights 40, 80, 120, 160: gates at r sin 60 = 39.8, 79.7, 120.4, 160.2 m fall one in each.
    expect(g.rows.map((x) => x.gates)).toEqual([1, 1, 1, 1]);
  });
});

describe('cross planes with three scanners', () => {
  it('are still planned for u, v and w over the rotor disk', () => {
    const c = resolveCampaign({
      name: 'p3', turbine: { position_m: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 100 },
      instruments: [{ id: 'a', position_m: [200, 400, 1] }, { id: 'b', position_m: [200, -400, 1] }, { id: 'c', position_m: [1200, 0, 1] }],
      planes: [{ id: 'x', x_m: 400, y: { min: -60, max: 60 }, z: { min: 40, max: 160 }, cell_m: [30, 30] }],
      windDirection: { kind: 'fixed', deg: 270 },
    }, '<memory>');
    const s = planCampaign(c).summary;
    expect(s.planes[0].components).toBe('uvw');
    expect(s.planes[0].region).toBe('rotor disk');
  });
});
