/**
 * Settings of the built-in simulator (the `simulation` key of a campaign file). Only demo scenarios use it.
 */
import { z } from 'zod';
import { ConfigError } from '../errors.ts';

const finite = () => z.number().refine(Number.isFinite, 'must be a finite number');

export const simSettingsSchema = z
  .object({
    seed: z.number().int().default(1).describe('random seed; the same seed writes the same files'),
    start: z.string().default('2026-01-01T00:00:00Z').describe('ISO 8601 UTC start of the record'),
    windows: z.number().int().min(1).max(500).default(6).describe('number of states (direction, speed, yaw offset) to simulate'),
    step_s: finite().positive().optional().describe('duration of each state, s; default: the fixed window length'),
    hubSpeed_ms: finite().positive().default(8).describe('free-stream speed at hub height, m/s'),
    shearExponent: finite().default(0.14).describe('power-law shear exponent'),
    directionMean_deg: finite().default(270).describe('mean wind direction (from), degrees'),
    directionWander_deg: finite().min(0).default(2).describe('standard deviation of the per-window direction, degrees'),
    yawOffsets_deg: z.array(finite()).default([0]).describe('yaw offset per window (cycled), degrees, nacelle minus wind'),
    wakeGrowth_kstar: finite().positive().default(0.03).describe('Gaussian wake growth rate k* of the truth'),
    wakeAspect: finite().positive().default(1).describe('sigma_y / sigma_z of the truth wake'),
    wakeLateralOffset_m: finite().default(0).describe('lateral wake-centre offset at zero yaw, metres (e.g. from veer)'),
    swirl_ms: finite().min(0).default(0.5).describe('peak tangential swirl speed at 3 D, m/s, decaying as 3D/x'),
    turbulence_ms: finite().min(0).default(0.35).describe('per-ray random velocity fluctuation (each component), m/s'),
    turbulenceTimeScale_s: finite().min(0).default(0).describe('integral time scale of the fluctuation, s: 0 draws it independently for every gate; above 0 it is an Ornstein-Uhlenbeck process in time per instrument, shared by the gates of a ray; default 0'),
    rayRate_hz: finite().positive().default(4).describe('rays per second while dwelling on a point'),
    dwell_s: finite().positive().default(1).describe('dwell per scan point, s'),
    gatesBefore: z.number().int().min(0).default(3).describe('range gates recorded before the target gate'),
    gatesAfter: z.number().int().min(0).default(4).describe('range gates recorded after the target gate'),
    noise_ms: finite().min(0).default(0.12).describe('radial-velocity estimator noise at good CNR, m/s'),
    spikeFraction: finite().min(0).max(0.2).default(0.004).describe('fraction of samples replaced by spikes'),
    veer_degPer100m: finite().default(0).describe('veer: the wind direction turns clockwise by this per 100 m above the hub, degrees; default 0'),
    shearChange: finite().default(0).describe('the shear exponent changes by this per window (cycled +, 0, -), for nacelle-instrument checks; default 0'),
    turbineSeriesGap_s: z.tuple([finite().min(0), finite().positive()]).optional().describe('leave a gap in the turbine series: [start after the record start, length], s (bad-input tests)'),
    hardTargetRaysPerScan: z.number().int().min(0).default(2).describe('rays per scan aimed slightly below the horizon'),
    yawOffsetsByTurbine_deg: z
      .record(z.string(), z.array(finite()).min(1))
      .default({})
      .describe('several turbines: yaw offset per state (cycled) of each listed turbine id; the first turbine defaults to yawOffsets_deg, the others to 0'),
    speedWander: finite().min(0).default(0.03).describe('relative standard deviation of the per-state free-stream speed'),
    powerCoefficient: finite().positive().max(0.593).default(0.45).describe('power coefficient of the simulated turbines below rated'),
    ratedPower_kw: finite().positive().default(3600).describe('rated power of the simulated turbines, kW'),
    outageMinutes: z.number().int().min(0).default(0).describe('minutes of status 0 (unavailable) written at random into each turbine series'),
    terrain: z
      .object({
        amplitude_m: finite().min(0).default(12).describe('height of the rolling hills, metres'),
        wavelength_m: finite().positive().default(1500).describe('east-west wavelength of the hills, metres'),
        base_m: finite().default(0).describe('mean ground height in the site frame, metres'),
        spacing_m: finite().positive().default(20).describe('raster spacing written, metres'),
        extent_m: z.tuple([finite(), finite(), finite(), finite()]).describe('site-frame extent written: east min, east max, north min, north max, metres'),
      })
      .strict()
      .optional()
      .describe('invented rolling terrain: h = base + A sin(2 pi e / L) cos(2 pi n / (1.7 L)); written to site.terrain.file'),
  })
  .strict();

export type SimSettings = z.output<typeof simSettingsSchema>;

export function parseSimSettings(raw: unknown, file: string): SimSettings {
  const r = simSettingsSchema.safeParse(raw ?? {});
  if (!r.success) {
    const iss = r.error.issues[0]!;
    throw new ConfigError(file, `simulation.${iss.path.join('.')}`, iss.message);
  }
  return r.data;
}
