/**
 * The `simulate` command's engine: writes a campaign's raw line-of-sight samples, its wind-direction and turbine
 * series, and the truth beside them, deterministically from the seed in the campaign's `simulation` settings.
 *
 * Each instrument steps through the cell centres of every plane (planned for the mean wind direction), dwelling on
 * each and recording several rays per dwell, each ray with range gates before and after the target. A ray measures
 * the true wind (flow.ts) plus per-gate turbulence, averaged along the beam with the pulsed range weighting
 * (Gaussian pulse convolved with the gate), plus estimator noise that grows as the carrier-to-noise ratio falls.
 * Realistic faults are injected: low-CNR gates with meaningless velocities, ground hard-target returns from rays
 * aimed just below the horizon, and spikes.
 *
 * Files honour the campaign's column mapping and sign convention for each instrument (so the demo exercises them):
 * an instrument with a renamed time column gets ISO 8601 times, the others Unix seconds.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { Campaign, Instrument } from '../campaign/types.ts';
import { beamPoint, calibratedUnitVector, calibrationMatrix, steerTo } from '../geometry/beam.ts';
import { dirFromRotor, fromRotor, rotorFrame, toRotor } from '../geometry/frames.ts';
import { gridSpecOf } from '../grid/grid.ts';
import { openAtomicStream, writeFileAtomic, csvRow } from '../io/atomic.ts';
import { isoTime, parseTime } from '../io/time.ts';
import { ConfigError } from '../errors.ts';
import { trueVelocity, wakeAt, type WakeTruthParams } from './flow.ts';
import { parseSimSettings, type SimSettings } from './settings.ts';
import { mulberry32, gaussian } from '../math/random.ts';
import { pulsedWeight } from '../geometry/probe.ts';
import { thrustCoefficientAt } from '../campaign/thrust.ts';
import { planeOrigin } from '../campaign/turbines.ts';
import { siteTruth, siteVelocity, type GroundFn, type SiteState, type SiteTurbineTruth } from './siteFlow.ts';
import { writeSiteSeries, writeTerrainRaster, writeSiteTruth } from './siteOutputs.ts';
import type { Vec3 } from '../campaign/types.ts';
import type { Series } from '../io/series.ts';
import { inclinometerSeries, scanSingleInstrument, turbineSeriesOf, writeGeometryTruth } from './singleInstrument.ts';

export interface SimulationSummary {
  files: string[];
  rows: Record<string, number>;
  windows: number;
  truthDir: string;
}

interface WindowTruth {
  index: number;
  start_s: number;
  direction_deg: number;
  yaw_deg: number;
  params: WakeTruthParams;
  /** Several turbines or terrain: the state of the site and each turbine's wake and power. */
  site?: { state: SiteState; turbines: SiteTurbineTruth[] };
}

/** The invented terrain of the simulation (flat at site.groundLevel_m without simulation.terrain). */
export function simGround(c: Campaign, s: SimSettings): GroundFn {
  const t = s.terrain;
  if (!t || !c.site.terrain) return () => c.site.groundLevel_m;
  const k = (2 * Math.PI) / t.wavelength_m, k2 = k / 1.7;
  return (e, n) => t.base_m + t.amplitude_m * Math.sin(k * e) * Math.cos(k2 * n);
}

/** True when the simulation needs the site model (several turbines or terrain) rather than one turbine's frame. */
function usesSiteModel(c: Campaign): boolean {
  return c.turbines.length > 1 || c.site.terrain !== undefined;
}

/** Duration of one simulated state (direction, speed, yaw offset), s: simulation.step_s or the fixed window length. */
export function simStep(c: Campaign, s: SimSettings): number {
  if (s.step_s !== undefined) return s.step_s;
  if (c.windows.kind === 'fixed') return c.windows.length_s;
  throw new ConfigError(c.sourceFile, 'simulation.step_s', 'needed when the windows are not of fixed length');
}

export function windowTruths(c: Campaign, s: SimSettings): WindowTruth[] {
  const L = simStep(c, s);
  const t0 = parseTime(s.start);
  if (!Number.isFinite(t0)) throw new ConfigError(c.sourceFile, 'simulation.start', 'not an ISO 8601 time', s.start);
  // States start at the given time exactly (not aligned to anything): real schedules start at arbitrary times.
  const first = t0;
  const rnd = mulberry32(s.seed ^ 0x5eed);
  const out: WindowTruth[] = [];
  const site = usesSiteModel(c);
  const ground = simGround(c, s);
  for (let w = 0; w < s.windows; w++) {
    const direction = (s.directionMean_deg + s.directionWander_deg * gaussian(rnd) + 360) % 360;
    const yaw = s.yawOffsets_deg[w % s.yawOffsets_deg.length];
    const hubSpeed = s.hubSpeed_ms * (1 + s.speedWander * gaussian(rnd));
    if (site) {
      const yaws = c.turbines.map((t, k) => {
        const list = s.yawOffsetsByTurbine_deg[t.id] ?? (k === 0 ? s.yawOffsets_deg : [0]);
        return list[w % list.length];
      });
      const state: SiteState = { direction_deg: direction, hubSpeed_ms: hubSpeed, refHeight_m: c.turbine.hubHeight_m, shearExponent: s.shearExponent, yaw_deg: yaws };
      const turbines = siteTruth(c.turbines, state, ground, { kStar: s.wakeGrowth_kstar, aspect: s.wakeAspect, lateralOffset: s.wakeLateralOffset_m, swirl: s.swirl_ms },
        { cp: s.powerCoefficient, ratedPower_kw: s.ratedPower_kw, rho: 1.225 });
      out.push({ index: Math.floor(first / L) + w, start_s: first + w * L, direction_deg: direction, yaw_deg: yaws[0], params: turbines[0].params, site: { state, turbines } });
      continue;
    }
    const params: WakeTruthParams = {
      hubSpeed,
      hubHeight: c.turbine.hubHeight_m,
      diameter: c.turbine.rotorDiameter_m,
      shearExponent: s.shearExponent + s.shearChange * [1, 0, -1][w % 3],
      veer_degPer100m: s.veer_degPer100m,
      ct: thrustCoefficientAt(c.turbine.thrustCoefficient, s.hubSpeed_ms).ct,
      yaw_deg: yaw,
      kStar: s.wakeGrowth_kstar,
      aspect: s.wakeAspect,
      lateralOffset: s.wakeLateralOffset_m,
      swirl: s.swirl_ms,
    };
    out.push({ index: Math.floor(first / L) + w, start_s: first + w * L, direction_deg: direction, yaw_deg: yaw, params });
  }
  return out;
}

interface Layout {
  headers: string[];
  iso: boolean;
  scale: number[];
  offset: number[];
  sign: number;
}

const FIELDS = ['time', 'instrument', 'azimuth_deg', 'elevation_deg', 'range_m', 'radial_velocity_ms', 'cnr_db'] as const;

function layoutOf(ins: Instrument): Layout {
  const headers: string[] = [], scale: number[] = [], offset: number[] = [];
  for (const f of FIELDS) {
    const ref = ins.columns[f];
    if (ref === undefined) { headers.push(f); scale.push(1); offset.push(0); }
    else if (typeof ref === 'string') { headers.push(ref); scale.push(1); offset.push(0); }
    else { headers.push(ref.name); scale.push(ref.scale); offset.push(ref.offset); }
  }
  return { headers, iso: ins.columns.time !== undefined, scale, offset, sign: ins.radialVelocitySign === 'toward' ? -1 : 1 };
}

function fmt(x: number, digits: number): string {
  return x.toFixed(digits);
}

export async function simulateCampaign(c: Campaign): Promise<SimulationSummary> {
  const s = parseSimSettings(c.simulation, c.sourceFile);
  const truths = windowTruths(c, s);
  const L = simStep(c, s);
  const tStart = truths[0].start_s;
  const tEnd = tStart + truths.length * L;
  const D = c.turbine.rotorDiameter_m;
  const files: string[] = [];
  const rows: Record<string, number> = {};

  const ground = simGround(c, s);
  const site = usesSiteModel(c);
  // Scan points: cell centres of every plane, serpentine, in the site frame of the planned (mean) direction.
  const points: [number, number, number][] = [];
  for (const plane of c.planes) {
    const plannedFrame = rotorFrame(s.directionMean_deg, planeOrigin(c, plane));
    const g = gridSpecOf(plane);
    for (let iz = 0; iz < g.nz; iz++)
      for (let k = 0; k < g.ny; k++) {
        const iy = iz % 2 === 0 ? k : g.ny - 1 - k;
        const y = g.y0 + iy * g.dy, second = g.z0 + iz * g.dz;
        const q = plane.orientation === 'cross' ? [plane.x_m, y, second] : [second, y, plane.z_m];
        const p = fromRotor(plannedFrame, q);
        if (plane.heights === 'terrain') p[2] = ground(p[0], p[1]) + q[2];
        else if (plane.heights === 'site') p[2] = q[2];
        points.push(p);
      }
  }
  if (c.site.terrain && s.terrain) await writeTerrainRaster(c, s, ground);

  // The turbine series (and inclinometer series) are made first: instruments on the nacelle turn with it.
  const turbineSeries = c.turbine.series ? turbineSeriesOf(c, s, truths, L) : undefined;
  const orientationSeries = new Map<string, Series>();
  for (const ins of c.instruments) if (ins.orientationSeries) orientationSeries.set(ins.id, inclinometerSeries(tStart, tEnd, ins.index));

  const u = new Float64Array(3);
  const weightsOffsets = [-1, -0.5, 0, 0.5, 1];
  for (const ins of c.instruments) {
    if (ins.files.length === 0) continue;
    const path = ins.files[0];
    const lay = layoutOf(ins);
    const out = openAtomicStream(path);
    out.write(lay.headers.join(',') + '\n');
    const rnd = mulberry32((s.seed * 31 + ins.index * 7919) >>> 0);
    const R = calibrationMatrix(ins.calibration);
    const gate = ins.pulsed.gateLength_m;
    const wOff = weightsOffsets.map((f) => f * gate);
    const wts = wOff.map((o) => pulsedWeight(o, ins.pulsed.pulseFwhm_ns * 1e-9, gate));
    const wSum = wts.reduce((a, b) => a + b, 0);
    let n = 0;
    let t = tStart + rnd() * 2;
    // Ornstein-Uhlenbeck fluctuation (simulation.turbulenceTimeScale_s > 0): exact discretisation
    // x(t + dt) = x(t) e^(-dt/tau) + sqrt(1 - e^(-2 dt/tau)) N(0, 1), unit variance, autocorrelation e^(-|dt|/tau).
    const ouTau = s.turbulenceTimeScale_s;
    let ouX = ouTau > 0 ? gaussian(rnd) : 0, ouT = NaN;
    const ouAt = (time: number) => {
      if (ouT === ouT) {
        const rho = Math.exp(-Math.abs(time - ouT) / ouTau);
        ouX = ouX * rho + Math.sqrt(1 - rho * rho) * gaussian(rnd);
      }
      ouT = time;
      return ouX;
    };
    let buf = '';
    const emit = (time: number, az: number, el: number, range: number, vr: number, cnr: number) => {
      const vals = [
        lay.iso ? isoTime(time) : fmt(time, 3),
        ins.id,
        fmt(az / lay.scale[2] - lay.offset[2], 4),
        fmt(el / lay.scale[3] - lay.offset[3], 4),
        lay.scale[4] === 1 ? fmt(range - lay.offset[4], 2) : String(+((range - lay.offset[4]) / lay.scale[4]).toFixed(6)),
        fmt((lay.sign * vr) / lay.scale[5] - lay.offset[5], 3),
        fmt(cnr / lay.scale[6] - lay.offset[6], 2),
      ];
      buf += vals.join(',') + '\n';
      n++;
      if (buf.length > 1 << 16) { out.write(buf); buf = ''; }
    };
    const windowAt = (time: number) => truths[Math.min(truths.length - 1, Math.max(0, Math.floor((time - tStart) / L)))];

    // One ray: samples at the given true ranges along nSite from origin (default: the instrument's calibrated beam
    // at the reported angles, from its position); the reported angles are written as given.
    const measureRay = (time: number, az: number, el: number, ranges: number[], nSite: Vec3 = calibratedUnitVector(R, az, el), origin: Vec3 = ins.position, cnrRef_m = 250) => {
      const wt = windowAt(time);
      const frame = rotorFrame(wt.direction_deg, c.turbine.position);
      const velocity = (pk: ArrayLike<number>) => {
        if (wt.site) {
          siteVelocity(wt.site.state, wt.site.turbines, pk, ground, u);
          return u;
        }
        const q = toRotor(frame, pk);
        trueVelocity(wt.params, q[0], q[1], q[2], u);
        return dirFromRotor(frame, u);
      };
      const lowAerosol = rnd() < 0.015;
      const rayTurb = ouTau > 0 ? s.turbulence_ms * ouAt(time) : NaN;
      for (const rTrue of ranges) {
        if (rTrue <= 20) continue;
        const p = beamPoint(origin, nSite, rTrue);
        let vr: number, cnr: number;
        if (p[2] < ground(p[0], p[1])) {
          // Ground returns: usually strong (caught by the CNR ceiling), at grazing incidence sometimes not.
          cnr = rnd() < 0.3 ? -4 + 6 * rnd() : 12 + 2 * gaussian(rnd);
          vr = 0.05 * gaussian(rnd);
        } else {
          let acc = 0;
          for (let k = 0; k < wOff.length; k++) {
            const pk = beamPoint(origin, nSite, rTrue + wOff[k]);
            const us = velocity(pk);
            acc += wts[k] * (nSite[0] * us[0] + nSite[1] * us[1] + nSite[2] * us[2]);
          }
          const turb = ouTau > 0 ? rayTurb : s.turbulence_ms * gaussian(rnd);
          cnr = lowAerosol ? -30 + 2 * gaussian(rnd) : -4 - 30 * Math.log10(rTrue / cnrRef_m) + 1.5 * gaussian(rnd);
          const sigma = s.noise_ms * Math.max(1, Math.pow(10, (-15 - cnr) / 20));
          vr = acc / wSum + turb + sigma * gaussian(rnd);
          if (cnr < -27) vr = -20 + 40 * rnd();
          if (rnd() < s.spikeFraction) vr += (rnd() < 0.5 ? -1 : 1) * (4 + 8 * rnd());
        }
        emit(time, az, el, rTrue - ins.calibration.rangeOffset_m, vr, cnr);
      }
    };

    const gatesAround = (target: number) => Array.from({ length: s.gatesBefore + s.gatesAfter + 1 }, (_, k) => target + (k - s.gatesBefore) * gate);
    if (ins.role !== 'plane') {
      // Profilers, nacelle instruments and trackers run their own pattern (singleInstrument.ts).
      scanSingleInstrument(ins, c, { start_s: tStart + rnd() * 2, end_s: tEnd }, turbineSeries, orientationSeries.get(ins.id), measureRay);
      out.write(buf);
      await out.close();
      files.push(path);
      rows[ins.id] = n;
      continue;
    }
    let prev: { az: number; el: number } | undefined;
    const slew = (az: number, el: number) => {
      if (!prev) return 0;
      let dAz = Math.abs(az - prev.az) % 360;
      if (dAz > 180) dAz = 360 - dAz;
      return Math.max(dAz, Math.abs(el - prev.el)) / ins.scan.slewRate_degs;
    };
    while (t < tEnd) {
      for (let h = 0; h < s.hardTargetRaysPerScan && t < tEnd; h++) {
        // A ray just below the horizon toward the turbine: its far gates are ground returns.
        const st = steerTo(ins.position, ins.calibration, [c.turbine.position[0], c.turbine.position[1], c.turbine.position[2]]);
        t += slew(st.azimuth_deg, -0.6);
        measureRay(t, st.azimuth_deg, -0.6, gatesAround(250));
        prev = { az: st.azimuth_deg, el: -0.6 };
        t += s.dwell_s;
      }
      for (const target of points) {
        if (t >= tEnd) break;
        const st = steerTo(ins.position, ins.calibration, target);
        t += slew(st.azimuth_deg, st.elevation_deg);
        const rays = Math.max(1, Math.round(s.dwell_s * s.rayRate_hz));
        for (let k = 0; k < rays; k++) {
          const tr = t + k / s.rayRate_hz;
          if (tr >= tEnd) break;
          measureRay(tr, st.azimuth_deg, st.elevation_deg, gatesAround(st.range_m + ins.calibration.rangeOffset_m));
        }
        prev = { az: st.azimuth_deg, el: st.elevation_deg };
        t += s.dwell_s;
      }
    }
    out.write(buf);
    await out.close();
    files.push(path);
    rows[ins.id] = n;
  }

  // Wind-direction and turbine series, one row a minute.
  const dataDir = c.windDirection.kind === 'series' ? c.windDirection.file : undefined;
  const rnd = mulberry32(s.seed ^ 0xd1ec);
  if (c.windDirection.kind === 'series') {
    const lines = ['time,direction_deg'];
    for (const wt of truths)
      for (let m = 0; m < L / 60; m++) lines.push(`${isoTime(wt.start_s + m * 60 + 30)},${fmt((wt.direction_deg + 0.4 * gaussian(rnd) + 360) % 360, 2)}`);
    writeFileAtomic(c.windDirection.file, lines.join('\n') + '\n');
    files.push(c.windDirection.file);
  }
  if (!site && c.turbine.series && turbineSeries) {
    const lines = ['time,yaw_deg,power_kw'];
    for (let i = 0; i < turbineSeries.time.length; i++) lines.push(`${isoTime(turbineSeries.time[i])},${fmt(turbineSeries.values.yaw_deg[i], 2)},${fmt(turbineSeries.values.power_kw[i], 1)}`);
    writeFileAtomic(c.turbine.series.file, lines.join('\n') + '\n');
    files.push(c.turbine.series.file);
  }
  if (site) files.push(...writeSiteSeries(c, s, truths, L, rnd));
  for (const ins of c.instruments) {
    const o = orientationSeries.get(ins.id);
    if (!o || !ins.orientationSeries) continue;
    const lines = ['time,tilt_deg,roll_deg'];
    for (let i = 0; i < o.time.length; i++) lines.push(`${isoTime(o.time[i])},${fmt(o.values.tilt_deg[i], 3)},${fmt(o.values.roll_deg[i], 3)}`);
    writeFileAtomic(ins.orientationSeries.file, lines.join('\n') + '\n');
    files.push(ins.orientationSeries.file);
  }
  if (c.instruments.some((i) => i.role !== 'plane')) writeGeometryTruth(c, s, truths, L, turbineSeries);
  void dataDir;

  // Truth: window-mean field at every cell centre, and the wake parameters per plane and window.
  const truthDir = join(c.baseDir, 'truth');
  mkdirSync(truthDir, { recursive: true });
  if (site) {
    writeSiteTruth(c, s, truths.map((t) => ({ start_s: t.start_s, end_s: t.start_s + L, ...t.site! })), truthDir);
    return { files, rows, windows: truths.length, truthDir };
  }
  const field = openAtomicStream(join(truthDir, 'field_truth.csv'));
  field.write(csvRow(['plane', 'window_start', 'y_m', 'z_m', 'u', 'v', 'w']));
  const wakeRows: unknown[] = [];
  for (const wt of truths) {
    for (const plane of c.planes) {
      const g = gridSpecOf(plane);
      const wk = plane.orientation === 'cross' ? wakeAt(plane.x_m, wt.params) : undefined;
      for (let iz = 0; iz < g.nz; iz++)
        for (let iy = 0; iy < g.ny; iy++) {
          const y = g.y0 + iy * g.dy, second = g.z0 + iz * g.dz;
          if (plane.orientation === 'cross') trueVelocity(wt.params, plane.x_m, y, second, u, wk);
          else trueVelocity(wt.params, second, y, plane.z_m, u);
          field.write(csvRow([plane.id, isoTime(wt.start_s), y, second, u[0], u[1], u[2]]));
        }
      if (wk) {
        wakeRows.push({
          plane: plane.id, window_start: isoTime(wt.start_s), x_m: plane.x_m, x_D: plane.x_m / D,
          direction_deg: wt.direction_deg, yaw_offset_deg: wt.yaw_deg, hubSpeed_ms: wt.params.hubSpeed, ct: wt.params.ct,
          centre_y_m: wk.yc, centre_z_m: wk.zc, sigma_y_m: wk.sigmaY, sigma_z_m: wk.sigmaZ, amplitude: wk.amplitude,
        });
      }
    }
  }
  await field.close();
  writeFileAtomic(
    join(truthDir, 'wake_truth.json'),
    JSON.stringify({ note: 'simulator truth (rotor frame; centre y positive to the left looking downstream)', settings: s, windows: wakeRows }, null, 2) + '\n',
  );
  return { files, rows, windows: truths.length, truthDir };
}
