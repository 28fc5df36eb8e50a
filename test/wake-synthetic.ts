/**
 * Synthetic inputs for the wake tests: a FieldResult with a known Gaussian wake in a power-law shear, and a minimal
 * resolved Campaign. Not a test file (no .test.ts suffix).
 */
import type { FieldResult } from '../src/retrieval/types.ts';
import type { Campaign } from '../src/campaign/types.ts';
import type { GridSpec } from '../src/grid/grid.ts';

export const D = 120, H = 100;

export interface SyntheticWake { A: number; yc: number; zc: number; sy: number; sz: number }

export const shear = (z: number) => 8 * Math.pow(z / H, 0.2);

export function syntheticField(opts: {
  wake?: SyntheticWake | null;
  grid?: GridSpec;
  x_m?: number;
  planeIndex?: number;
  window?: number;
  direction_deg?: number;
  /** Deterministic noise amplitude on u, m/s. */
  noise?: number;
  /** Return true to mask the cell (iy, iz). */
  mask?: (iy: number, iz: number) => boolean;
  inflow?: (z: number) => number;
}): FieldResult {
  const g = opts.grid ?? { ny: 61, nz: 25, y0: -300, z0: 10, dy: 10, dz: 10 };
  const n = g.ny * g.nz;
  const u = new Float64Array(n), su = new Float64Array(n).fill(0.1);
  const inflow = opts.inflow ?? shear;
  const w = opts.wake === undefined ? { A: 0.3, yc: 25, zc: 100, sy: 50, sz: 40 } : opts.wake;
  for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) {
    const y = g.y0 + iy * g.dy, z = g.z0 + iz * g.dz, k = iy + iz * g.ny;
    const d = w ? w.A * Math.exp(-((y - w.yc) ** 2) / (2 * w.sy ** 2) - ((z - w.zc) ** 2) / (2 * w.sz ** 2)) : 0;
    u[k] = inflow(z) * (1 - d) + (opts.noise ?? 0) * Math.sin(12.9898 * iy + 78.233 * iz + 3.1 * (opts.window ?? 0));
    if (opts.mask?.(iy, iz)) { u[k] = NaN; su[k] = NaN; }
  }
  const nanArr = () => new Float64Array(n).fill(NaN);
  const win = opts.window ?? 0;
  return {
    planeId: `x${opts.x_m ?? 600}`, planeIndex: opts.planeIndex ?? 0, orientation: 'cross', x_m: opts.x_m ?? 600, z_m: NaN,
    window: { index: win, start_s: 1_800_000_000 + 600 * win, end_s: 1_800_000_000 + 600 * (win + 1) },
    direction_deg: opts.direction_deg ?? 270, grid: g, u, v: new Float64Array(n), w: new Float64Array(n), su, sv: su.slice(), sw: su.slice(),
    dopU: nanArr(), dopV: nanArr(), dopW: nanArr(), cond: nanArr(), minCrossing_deg: nanArr(), yEff: nanArr(), zEff: nanArr(),
    samples: new Uint32Array(n).fill(50), instruments: new Uint8Array(n).fill(3),
    maskU: new Uint8Array(n), maskV: new Uint8Array(n), maskW: new Uint8Array(n), assumptions: [],
  };
}

export function syntheticCampaign(over: { inflow?: unknown; thrustCoefficient?: unknown; yawBin_deg?: number } = {}): Campaign {
  return {
    name: 'demo', turbine: { id: 'T1', position: [0, 0, 0], hubHeight_m: H, rotorDiameter_m: D, thrustCoefficient: over.thrustCoefficient ?? 0.8 },
    inflow: over.inflow ?? { kind: 'plane', law: 'power' },
    wake: { yawBin_deg: over.yawBin_deg ?? 5, turbulenceIntensity: 0.1 },
  } as unknown as Campaign;
}
