/**
 * Synthetic inputs for the render and report tests: an invented campaign, analytic FieldResults, wake rows and a
 * wake analysis, and a run manifest. Nothing here runs the pipeline; the numbers are plausible, not physical truth.
 */
import { resolveCampaign } from '../src/campaign/load.ts';
import type { Campaign, PlaneSpec } from '../src/campaign/types.ts';
import { gridSpecOf } from '../src/grid/grid.ts';
import type { OutputRecord, RunManifest } from '../src/pipeline/manifest.ts';
import { emptyAccount } from '../src/qc/reasons.ts';
import { MaskReason, type FieldResult } from '../src/retrieval/types.ts';
import type { CentreEstimate, Stat, WakeAnalysis, WakePlaneWindow } from '../src/wake/types.ts';

export const EVIL = '<script>alert("x")</script>';

export function fixtureCampaign(): Campaign {
  return resolveCampaign(
    {
      name: 'testfield-alpha',
      description: `Invented campaign for tests ${EVIL} & more`,
      turbine: { id: 'T-invented', position_m: [0, 0, 0], hubHeight_m: 90, rotorDiameter_m: 120 },
      instruments: [
        { id: 'lid-a', position_m: [-300, 220, 0] },
        { id: 'lid-b', position_m: [-300, -220, 0] },
        { id: 'lid-c', position_m: [350, 650, 0] },
      ],
      planes: [
        { id: 'P5D', x_D: 5, y: { min: -150, max: 150 }, z: { min: 10, max: 170 }, cell_m: [7.5, 5] },
        { id: 'H90', orientation: 'horizontal', z_m: 90, y: { min: -150, max: 150 }, xRange: { min: 240, max: 1200 }, cell_m: [10, 30] },
      ],
      windDirection: { kind: 'fixed', deg: 270 },
    },
    '<memory>',
  );
}

export interface FieldShape {
  /** Wake centre, metres. */
  yc: number;
  zc: number;
  sy: number;
  sz: number;
  amplitude: number;
  /** Solid-body swirl rate about (swirlY, swirlZ), rad/s: v = -omega (z - swirlZ), w = omega (y - swirlY). */
  omega: number;
  swirlY: number;
  swirlZ: number;
}

export const DEFAULT_SHAPE: FieldShape = { yc: 15, zc: 95, sy: 35, sz: 28, amplitude: 0.45, omega: 0.02, swirlY: 0, swirlZ: 90 };

/** Inflow law of the fixture: 8 m/s at 90 m, shear exponent 0.2. */
export const inflow = (z: number) => 8 * (z / 90) ** 0.2;

export function fixtureField(plane: PlaneSpec, window: number, shape: FieldShape = DEFAULT_SHAPE): FieldResult {
  const g = gridSpecOf(plane);
  const n = g.ny * g.nz;
  const f = (k: number) => new Float64Array(n).fill(k);
  const r: FieldResult = {
    planeId: plane.id, planeIndex: plane.index, orientation: plane.orientation, x_m: plane.x_m, z_m: plane.z_m,
    window: { index: window, start_s: 1_780_000_200 + window * 600, end_s: 1_780_000_800 + window * 600 },
    direction_deg: 270, grid: g,
    u: f(NaN), v: f(NaN), w: f(NaN), su: f(NaN), sv: f(NaN), sw: f(NaN), dopU: f(NaN), dopV: f(NaN), dopW: f(NaN),
    yEff: f(NaN), zEff: f(NaN),
    cond: f(NaN), minCrossing_deg: f(NaN), samples: new Uint32Array(n), instruments: new Uint8Array(n),
    maskU: new Uint8Array(n), maskV: new Uint8Array(n), maskW: new Uint8Array(n), assumptions: ['w = 0 in two-instrument cells'],
  };
  for (let iz = 0; iz < g.nz; iz++) {
    for (let iy = 0; iy < g.ny; iy++) {
      const i = iy + iz * g.ny;
      const y = g.y0 + iy * g.dy, s = g.z0 + iz * g.dz;
      const z = plane.orientation === 'cross' ? s : plane.z_m;
      const lateral = plane.orientation === 'cross' ? (s - shape.zc) ** 2 / (2 * shape.sz ** 2) : 0;
      const amp = plane.orientation === 'cross' ? shape.amplitude : shape.amplitude * Math.exp(-s / 900);
      const sy = plane.orientation === 'cross' ? shape.sy : shape.sy * (0.6 + s / 1200);
      r.u[i] = inflow(z) * (1 - amp * Math.exp(-((y - shape.yc) ** 2) / (2 * sy ** 2) - lateral));
      r.v[i] = -shape.omega * (s - shape.swirlZ);
      r.w[i] = shape.omega * (y - shape.swirlY);
      r.su[i] = 0.08 + 0.0004 * Math.abs(y);
      r.dopU[i] = 0.9 + (y / 150) ** 2;
      r.dopV[i] = 1.1 + 0.5 * Math.abs(y / 150);
      r.dopW[i] = plane.orientation === 'cross' ? 0.8 + 60 / s : NaN;
      r.samples[i] = 40 + Math.round(30 * Math.cos(y / 60) ** 2);
      r.instruments[i] = 3;
      if (plane.orientation === 'cross' && s < 20) {
        for (const a of [r.u, r.v, r.w, r.su, r.dopU, r.dopV, r.dopW]) a[i] = NaN;
        r.samples[i] = 0;
        r.instruments[i] = 0;
        r.maskU[i] = r.maskV[i] = r.maskW[i] = MaskReason.noData;
      } else if (y < -120 && s > 130) {
        r.u[i] = NaN;
        r.maskU[i] = MaskReason.amplification;
        r.dopU[i] = 3.6;
      } else if (y > 125 && s < 50) {
        r.w[i] = NaN;
        r.maskW[i] = MaskReason.assumedZero;
        r.instruments[i] = 2;
      }
      if (plane.orientation === 'horizontal') {
        r.w[i] = NaN;
        r.maskW[i] = MaskReason.singular;
      }
    }
  }
  return r;
}

const est = (method: CentreEstimate['method'], y: number, z: number, ok = true): CentreEstimate => ({ method, y_m: y, z_m: z, sy_m: 1.5, sz_m: 1.2, ok });

export function fixtureWake(field: FieldResult, shape: FieldShape = DEFAULT_SHAPE): WakePlaneWindow {
  const g = field.grid;
  const n = g.ny * g.nz;
  const deficit = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const iz = Math.floor(i / g.ny);
    const z = field.orientation === 'cross' ? g.z0 + iz * g.dz : field.z_m;
    deficit[i] = 1 - field.u[i] / inflow(z);
  }
  const heights = [25, 45, 65, 85, 105, 125, 145, 165];
  const nan = NaN;
  const profile = { coord_m: [], u_ms: [], su_ms: [], deficit: [], model: [] };
  const cross = field.orientation === 'cross';
  return {
    planeId: field.planeId, planeIndex: field.planeIndex, orientation: field.orientation, x_m: field.x_m, x_D: field.x_m / 120,
    window: field.window, direction_deg: 270, windDirection_deg: 270, nacelle_deg: 278, yawOffset_deg: 8, power_kW: 2100,
    inflow: {
      source: 'plane', law: 'power', zRef_m: 90, uRef_ms: 8, alpha: 0.2, uStar_ms: nan, z0_m: nan, hubSpeed_ms: 8,
      heights_m: heights, speeds_ms: heights.map((h, k) => inflow(h) + 0.05 * Math.sin(k * 1.7)), counts: heights.map(() => 12),
      rmse_ms: 0.04, r2: 0.98, direction_deg: nan, ok: true, note: 'cells |y - y_c| > 1 D only',
    },
    grid: g, deficit, maxDeficit: shape.amplitude, validCells: n - g.ny,
    gaussian: cross
      ? {
          params: { amplitude: shape.amplitude, yc_m: shape.yc, zc_m: shape.zc, sigmaY_m: shape.sy, sigmaZ_m: shape.sz, offset: 0 },
          stderr: { amplitude: 0.002, yc_m: 0.2, zc_m: 0.15, sigmaY_m: 0.2, sigmaZ_m: 0.16, offset: nan },
          covariance: [], fitOffset: false, n: n - g.ny, dof: n - g.ny - 5, ssr: 0.25, rmse: 0.02, r2: 0.99, iterations: 9, converged: true,
        }
      : null,
    centre: est('gaussian', shape.yc, shape.zc, cross),
    diskCentre: est('min-power-disk', shape.yc - 6, shape.zc - 3, cross),
    centroid: est('deficit-centroid', shape.yc + 2, shape.zc, cross),
    disagreement_m: 6.7, disagreement_D: 0.056,
    rews: { axis_ms: 6.2, centre_ms: 5.9, axisCoverage: 1, centreCoverage: 1, segments: 10 },
    hubDeficit: 0.4, centreDeficit: shape.amplitude, momentumDeficit_m4s2: 1e6, momentumRatio: 0.93, ct: 0.8,
    horizontal: profile, vertical: profile,
    ...(cross ? {} : { horizontalTrack: { x_m: [255, 435, 615, 795, 975, 1155], yc_m: [14, 16, 17, 19, 22, 24], syc_m: [1, 1, 1, 1, 1, 1], sigmaY_m: [25, 30, 34, 38, 42, 46], amplitude: [0.4, 0.35, 0.3, 0.26, 0.22, 0.19] } }),
    flag: cross ? 'ok' : 'horizontal_plane',
    reason: cross ? '' : 'horizontal plane: see the per-row track',
  };
}

const stat = (mean: number, ci95: number, n = 4): Stat => ({ mean, sd: ci95, n, ci95 });

export function fixtureAnalysis(rows: WakePlaneWindow[]): WakeAnalysis {
  // Model values at x/D = 3, 5, 7, 10 from REFERENCES.md section 4 (Ct = 0.8, k* = 0.022).
  const xs = [3, 5, 7, 10];
  const sig = [0.320404, 0.364404, 0.408404, 0.474404];
  const C = [0.839071, 0.503077, 0.367183, 0.254566];
  const fine = Array.from({ length: 41 }, (_, k) => 3 + (7 * k) / 40);
  const points = xs.map((x, k) => ({
    planeId: `P${x}D`, x_m: x * 120, x_D: x,
    amplitude: stat(C[k] * 0.55, 0.03), sigmaY_m: stat(sig[k] * 120 * 1.05, 2), sigmaZ_m: stat(sig[k] * 120 * 0.95, 2),
    sigma_D: stat(sig[k], 0.015), yc_m: stat(4 + 2 * x, 3), zc_m: stat(92 - 0.4 * x, 2), centreDeficit: stat(C[k] * 0.5, 0.03),
    hubDeficit: stat(C[k] * 0.48, 0.03), momentumRatio: stat(0.95, 0.05), hubSpeed_ms: 8, ct: 0.8,
  }));
  const gammas = [-20, -10, 0, 10, 20];
  return {
    rotorDiameter_m: 120, hubHeight_m: 90, rows,
    downstream: {
      points,
      gaussianFit: {
        kStar: 0.022, eps: 0.254, kStarSE: 0.001, epsSE: 0.006, kStarCI95: [0.018, 0.026], epsCI95: [0.23, 0.28], epsTheory: 0.2543,
        ct: 0.8, ctSource: 'value', hubSpeed_ms: 8, nPlanes: 4, dof: 2, rmse: 0.004, residuals: [], ok: true, note: '',
      },
      topHat: {
        k: 0.075, ct: 0.8, kNote: 'fitted to the centreline deficits of 4 planes', kDefault: 0.04, turbulenceIntensity: 0.1, kFit: 0.075, kFitSE: 0.004,
        kFitCI95: [0.062, 0.088], fitPlanes: 4, fitRmse: 0.01, fitOk: true, fitNote: '', kSource: 'fit',
      },
      gaussianCurve: { x_D: fine, deficit: fine.map((x) => 1 - Math.sqrt(1 - 0.8 / (8 * (0.022 * x + 0.254) ** 2))), width_D: fine.map((x) => 0.022 * x + 0.254) },
      topHatCurve: { x_D: fine, deficit: fine.map((x) => (1 - Math.sqrt(0.2)) / (1 + (0.075 * x) / 0.5) ** 2), width_D: fine.map((x) => 0.5 + 0.075 * x) },
    },
    steering: {
      bins: gammas.map((g) => ({
        planeId: 'P5D', x_m: 600, x_D: 5, gammaCentre_deg: g, gammaLo_deg: g - 2.5, gammaHi_deg: g + 2.5, gammaMean_deg: g + 0.4, n: 6,
        yc_m: 0.0128 * 120 * g + 3, sd_m: 6, ci95_m: 5, yc_D: (0.0128 * 120 * g + 3) / 120, deflection_m: 0.0128 * 120 * g, deflectionCi95_m: 7, ct: 0.8, jimenez_m: 0.02 * 120 * g, bastankhah_m: 0.0128 * 120 * g,
      })),
      curves: [{ planeId: 'P5D', x_D: 5, gamma_deg: [-25, -15, -5, 5, 15, 25], jimenez_m: [-25, -15, -5, 5, 15, 25].map((g) => 0.02 * 120 * g), bastankhah_m: [-25, -15, -5, 5, 15, 25].map((g) => 0.0128 * 120 * g) }],
      ct: 0.8, turbulenceIntensity: 0.1, note: '',
    },
    notes: ['Fixture analysis for rendering tests.'],
  };
}

export function fixtureManifest(campaign: Campaign, outputs: OutputRecord[], overrides: Partial<RunManifest> = {}): RunManifest {
  const a = emptyAccount(), b = emptyAccount(), total = emptyAccount();
  Object.assign(a, { read: 1000, accepted: 900 });
  a.rejected.low_cnr = 60; a.rejected.outlier = 40;
  Object.assign(b, { read: 800, accepted: 700 });
  b.rejected.low_cnr = 50; b.rejected.bad_number = 50;
  Object.assign(total, { read: 1800, accepted: 1600 });
  total.rejected.low_cnr = 110; total.rejected.outlier = 40; total.rejected.bad_number = 50;
  return {
    tool: { name: 'wakeplane', version: '0.1.0' },
    campaign: { name: campaign.name, file: '/data/invented/campaign.yaml', sha256: 'ab'.repeat(32), description: campaign.description },
    startedAt: '2026-06-01T12:00:00.000Z', finishedAt: '2026-06-01T12:00:42.500Z',
    inputs: [{ file: 'data/lid-a.csv', instrument: 'lid-a', bytes: 123456, sha256: 'cd'.repeat(32) }],
    settings: { name: campaign.name, description: campaign.description, qc: campaign.qc, retrieval: campaign.retrieval },
    samples: { total, perInstrument: { 'lid-a': a, 'lid-b': b }, balanced: true },
    windows: [{ index: 0, start: '2026-06-01T12:00:00Z', end: '2026-06-01T12:10:00Z', start_s: 0, end_s: 600, kind: 'fixed', label: '', direction_deg: 270, samples: 1600, outliers: 3 }],
    outputs, timings_s: { read: 1.2, retrieve: 0.4, render: 2.1 }, peakRss_bytes: 200 * 2 ** 20, samplesPerSecond: 42000,
    assumptions: ['w = 0 in two-instrument cells'], warnings: [`plane P5D: wake leaves the plane in 1 window ${EVIL}`],
    ...overrides,
  };
}
