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
  for (let w = 0; w < s.windows; w++) {
    const direction = (s.directionMean_deg + s.directionWander_deg * gaussian(rnd) + 360) % 360;
    const yaw = s.yawOffsets_deg[w % s.yawOffsets_deg.length];
    const params: WakeTruthParams = {
      hubSpeed: s.hubSpeed_ms * (1 + 0.03 * gaussian(rnd)),
      hubHeight: c.turbine.hubHeight_m,
      diameter: c.turbine.rotorDiameter_m,
      shearExponent: s.shearExponent,
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

  // Scan points: cell centres of every plane, serpentine, in the site frame of the planned (mean) direction.
  const plannedFrame = rotorFrame(s.directionMean_deg, c.turbine.position);
  const points: [number, number, number][] = [];
  for (const plane of c.planes) {
    const g = gridSpecOf(plane);
    for (let iz = 0; iz < g.nz; iz++)
      for (let k = 0; k < g.ny; k++) {
        const iy = iz % 2 === 0 ? k : g.ny - 1 - k;
        const y = g.y0 + iy * g.dy, second = g.z0 + iz * g.dz;
        const q = plane.orientation === 'cross' ? [plane.x_m, y, second] : [second, y, plane.z_m];
        points.push(fromRotor(plannedFrame, q));
      }
  }

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

    const measureRay = (time: number, az: number, el: number, targetRange: number) => {
      const wt = windowAt(time);
      const frame = rotorFrame(wt.direction_deg, c.turbine.position);
      const nSite = calibratedUnitVector(R, az, el);
      const lowAerosol = rnd() < 0.015;
      for (let j = -s.gatesBefore; j <= s.gatesAfter; j++) {
        const rTrue = targetRange + j * gate;
        if (rTrue <= 20) continue;
        const p = beamPoint(ins.position, nSite, rTrue);
        let vr: number, cnr: number;
        if (p[2] < c.site.groundLevel_m) {
          // Ground returns: usually strong (caught by the CNR ceiling), at grazing incidence sometimes not.
          cnr = rnd() < 0.3 ? -4 + 6 * rnd() : 12 + 2 * gaussian(rnd);
          vr = 0.05 * gaussian(rnd);
        } else {
          let acc = 0;
          for (let k = 0; k < wOff.length; k++) {
            const pk = beamPoint(ins.position, nSite, rTrue + wOff[k]);
            const q = toRotor(frame, pk);
            trueVelocity(wt.params, q[0], q[1], q[2], u);
            const us = dirFromRotor(frame, u);
            acc += wts[k] * (nSite[0] * us[0] + nSite[1] * us[1] + nSite[2] * us[2]);
          }
          const turb = s.turbulence_ms * gaussian(rnd);
          cnr = lowAerosol ? -30 + 2 * gaussian(rnd) : -4 - 30 * Math.log10(rTrue / 250) + 1.5 * gaussian(rnd);
          const sigma = s.noise_ms * Math.max(1, Math.pow(10, (-15 - cnr) / 20));
          vr = acc / wSum + turb + sigma * gaussian(rnd);
          if (cnr < -27) vr = -20 + 40 * rnd();
          if (rnd() < s.spikeFraction) vr += (rnd() < 0.5 ? -1 : 1) * (4 + 8 * rnd());
        }
        emit(time, az, el, rTrue - ins.calibration.rangeOffset_m, vr, cnr);
      }
    };

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
        measureRay(t, st.azimuth_deg, -0.6, 250);
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
          measureRay(tr, st.azimuth_deg, st.elevation_deg, st.range_m + ins.calibration.rangeOffset_m);
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
  if (c.turbine.series) {
    const lines = ['time,yaw_deg,power_kw'];
    const area = (Math.PI * D * D) / 4;
    for (const wt of truths)
      for (let m = 0; m < L / 60; m++) {
        const g = (wt.yaw_deg * Math.PI) / 180;
        const p = Math.min(3600, (0.5 * 1.225 * area * wt.params.hubSpeed ** 3 * 0.45 * Math.cos(g) ** 3) / 1000);
        lines.push(`${isoTime(wt.start_s + m * 60 + 30)},${fmt((wt.direction_deg + wt.yaw_deg + 0.5 * gaussian(rnd) + 360) % 360, 2)},${fmt(p, 1)}`);
      }
    writeFileAtomic(c.turbine.series.file, lines.join('\n') + '\n');
    files.push(c.turbine.series.file);
  }
  void dataDir;

  // Truth: window-mean field at every cell centre, and the wake parameters per plane and window.
  const truthDir = join(c.baseDir, 'truth');
  mkdirSync(truthDir, { recursive: true });
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
