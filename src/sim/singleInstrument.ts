/**
 * The simulator's single-instrument geometries: the turbine series (made before the samples, since instruments on
 * the nacelle turn with it), inclinometer series, the scan patterns of profilers (VAD cone or DBS beams), nacelle
 * instruments (fixed beams relative to the nacelle axis) and trackers (a sector swept in azimuth or elevation), and
 * their truth (truth/geometry_truth.json).
 *
 * Nacelle direction: the true one is the window's wind direction plus its yaw offset plus a slow wander (the turbine
 * series rows carry it with 0.5 degree noise, as a yaw sensor would); samples are turned with the series as written
 * (geometry/nacelle.ts, the same code as the ingest), so a round trip sees the nacelle the processing sees. Where
 * the series has a gap (simulation.turbineSeriesGap_s) the instrument still measures, turned with the true nacelle.
 */
import type { Campaign, Instrument, Vec3 } from '../campaign/types.ts';
import { ConfigError } from '../errors.ts';
import { NacelleFrame, NacelleMiss } from '../geometry/nacelle.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import type { Series } from '../io/series.ts';
import { isoTime } from '../io/time.ts';
import { gaussian, mulberry32 } from '../math/random.ts';
import { wakeAt, type WakeTruthParams } from './flow.ts';
import type { SimSettings } from './settings.ts';
import { join } from 'node:path';

interface Truth { start_s: number; direction_deg: number; yaw_deg: number; params: WakeTruthParams }

/** The turbine series as written (rows every 60 s, with the gap if asked) and the true nacelle direction (no gap). */
export function turbineSeriesOf(c: Campaign, s: SimSettings, truths: Truth[], L: number): Series & { truth: Series } {
  const rnd = mulberry32(s.seed ^ 0x7a11);
  const D = c.turbine.rotorDiameter_m, area = (Math.PI * D * D) / 4;
  const t: number[] = [], yaw: number[] = [], power: number[] = [], trueYaw: number[] = [];
  for (const wt of truths)
    for (let m = 0; m < L / 60; m++) {
      const time = wt.start_s + m * 60 + 30;
      const g = (wt.yaw_deg * Math.PI) / 180;
      const p = Math.min(3600, (0.5 * 1.225 * area * wt.params.hubSpeed ** 3 * 0.45 * Math.cos(g) ** 3) / 1000);
      const psi = (wt.direction_deg + wt.yaw_deg + 360) % 360;
      t.push(time); trueYaw.push(psi);
      yaw.push(Number((((psi + 0.5 * gaussian(rnd)) % 360 + 360) % 360).toFixed(2)));
      power.push(Number(p.toFixed(1)));
    }
  const keep = t.map((_, i) => i).filter((i) => {
    const gap = s.turbineSeriesGap_s;
    if (!gap) return true;
    const rel = t[i] - truths[0].start_s;
    return !(rel >= gap[0] && rel < gap[0] + gap[1]);
  });
  const pickF = (a: number[]) => Float64Array.from(keep, (i) => a[i]);
  return {
    file: c.turbine.series?.file ?? '', time: pickF(t), values: { yaw_deg: pickF(yaw), power_kw: pickF(power) },
    truth: { file: '', time: Float64Array.from(t), values: { yaw_deg: Float64Array.from(trueYaw) } },
  };
}

/** An inclinometer series every 10 s: tilt 0.4 + 0.3 sin(2 pi t / 300) degrees, roll -0.2 + 0.15 sin(2 pi t / 420). */
export function inclinometerSeries(t0: number, t1: number, phase: number): Series {
  const t: number[] = [];
  for (let x = t0 - 10; x <= t1 + 10; x += 10) t.push(Math.round(x * 1000) / 1000);
  const tilt = t.map((x) => Number((0.4 + 0.3 * Math.sin((2 * Math.PI * x) / 300 + phase)).toFixed(3)));
  const roll = t.map((x) => Number((-0.2 + 0.15 * Math.sin((2 * Math.PI * x) / 420 + phase)).toFixed(3)));
  return { file: '', time: Float64Array.from(t), values: { tilt_deg: Float64Array.from(tilt), roll_deg: Float64Array.from(roll) } };
}

type MeasureRay = (time: number, az: number, el: number, ranges: number[], nSite?: Vec3, origin?: Vec3, cnrRef_m?: number) => void;

function need<T>(c: Campaign, ins: Instrument, key: string, v: T | undefined): T {
  if (v === undefined) throw new ConfigError(c.sourceFile, `instruments[${ins.index}].${key}`, 'the simulator needs the scan pattern of this instrument');
  return v;
}

/** Writes the rays of one profiler, nacelle instrument or tracker over [start, end) through measureRay. */
export function scanSingleInstrument(
  ins: Instrument, c: Campaign, span: { start_s: number; end_s: number }, turbine: (Series & { truth: Series }) | undefined,
  orientation: Series | undefined, measureRay: MeasureRay,
): void {
  let t = span.start_s;
  const end = span.end_s;
  let frame: NacelleFrame | undefined, truthFrame: NacelleFrame | undefined;
  if (ins.beamFrame === 'nacelle') {
    if (!turbine) throw new ConfigError(c.sourceFile, 'turbine.series', 'instruments on the nacelle need the turbine series');
    frame = new NacelleFrame(turbine, ins.nacelle?.maxGap_s ?? 120, ins.calibration, c.turbine.position, ins.mount, false, orientation);
    truthFrame = new NacelleFrame(turbine.truth, 1e9, ins.calibration, c.turbine.position, ins.mount, false, orientation);
  }
  const nb = new Float64Array(6);
  // Short-range instruments: the carrier-to-noise ratio falls from about -4 dB at 30 % of the longest gate.
  let cnrRef = 250;
  const ray = (time: number, az: number, el: number, ranges: number[]) => {
    const reportedAz = ((az % 360) + 360) % 360;
    cnrRef = 0.3 * Math.max(...ranges);
    if (!frame) return measureRay(time, reportedAz, el, ranges, undefined, undefined, cnrRef);
    // The sample is turned with the series as written; in a series gap, with the true nacelle direction.
    if (frame.beam(time, reportedAz, el, nb) !== NacelleMiss.none) truthFrame!.beam(time, reportedAz, el, nb);
    measureRay(time, reportedAz, el, ranges, [nb[0], nb[1], nb[2]], [nb[3], nb[4], nb[5]], cnrRef);
  };
  if (ins.role === 'profiler') {
    const p = need(c, ins, 'profile.pattern', ins.profile!.pattern);
    while (t < end) {
      for (const az of p.azimuths_deg) { if (t >= end) break; ray(t, az, p.elevation_deg, p.ranges_m); t += p.ray_s; }
      if (p.vertical && t < end) { ray(t, 0, 90, p.ranges_m); t += p.ray_s; }
    }
  } else if (ins.role === 'nacelle') {
    const n = ins.nacelle!;
    while (t < end) for (const b of n.beams) { if (t >= end) break; ray(t, b.azimuth_deg, b.elevation_deg, n.ranges_m); t += n.ray_s; }
  } else if (ins.role === 'tracker') {
    const p = need(c, ins, 'track.pattern', ins.track!.pattern);
    const horizontal = ins.track!.sector === 'horizontal';
    const sweep = horizontal ? p.azimuth_deg : p.elevation_deg;
    const steps = Math.floor((sweep.max - sweep.min) / sweep.step + 1e-9) + 1;
    while (t < end)
      for (let k = 0; k < steps && t < end; k++) {
        const a = sweep.min + k * sweep.step;
        ray(t, horizontal ? a : p.azimuth_deg.min, horizontal ? p.elevation_deg.min : a, p.ranges_m);
        t += p.ray_s;
      }
  }
}

/** The truth of the single-instrument geometries per simulated state (truth/geometry_truth.json). */
export function writeGeometryTruth(c: Campaign, s: SimSettings, truths: Truth[], L: number, turbine?: Series & { truth: Series }): void {
  const H = c.turbine.hubHeight_m;
  const windows = truths.map((wt) => {
    const p = wt.params;
    const profilers = c.instruments.filter((i) => i.role === 'profiler').map((ins) => {
      const h = ins.profile!.heights_m;
      const zs: number[] = [];
      for (let z = h.min; z <= h.max + 1e-9; z += h.step) zs.push(z);
      return {
        instrument: ins.id,
        heights: zs.map((z) => ({
          z_m: z, speed_ms: p.hubSpeed * Math.pow(z / H, p.shearExponent),
          direction_deg: (wt.direction_deg + ((s.veer_degPer100m ?? 0) * (z - H)) / 100 + 360) % 360,
        })),
      };
    });
    const trackers = c.instruments.filter((i) => i.role === 'tracker').map((ins) => {
      const x = ins.track!.x_m, xs: number[] = [];
      for (let v = x.min; v <= x.max + 1e-9; v += x.step) xs.push(v);
      return { instrument: ins.id, wake: xs.map((xv) => ({ x_m: xv, ...wakeAt(xv, p) })) };
    });
    let nacelle = NaN;
    if (turbine) {
      let sn = 0, cs = 0;
      const T = turbine.truth.time, Y = turbine.truth.values.yaw_deg;
      for (let i = 0; i < T.length; i++) if (T[i] >= wt.start_s && T[i] < wt.start_s + L) { sn += Math.sin((Y[i] * Math.PI) / 180); cs += Math.cos((Y[i] * Math.PI) / 180); }
      nacelle = ((Math.atan2(sn, cs) * 180) / Math.PI + 360) % 360;
    }
    return {
      window_start: isoTime(wt.start_s), direction_deg: wt.direction_deg, yaw_offset_deg: wt.yaw_deg, nacelle_deg: nacelle,
      hubSpeed_ms: p.hubSpeed, shearExponent: p.shearExponent, veer_degPer100m: s.veer_degPer100m, ct: p.ct, profilers, trackers,
    };
  });
  writeFileAtomic(join(c.baseDir, 'truth', 'geometry_truth.json'), JSON.stringify({
    note: 'simulator truth of the single-instrument geometries: free-stream profile (no induction), nacelle direction (mean of the true direction), wake centres (rotor frame, y positive to the left looking downstream)',
    windows,
  }, null, 2) + '\n');
}
