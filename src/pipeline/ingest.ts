/**
 * Ingest: read every instrument's files in step, apply quality control and geometry to each sample, and collect
 * the accepted in-plane samples per averaging window. A window is handed on (finished) as soon as every file has
 * read past its end, so memory holds only the open windows' in-plane samples, never the campaign.
 *
 * Reading in step: the next batch is always pulled from the file that is furthest behind in time. Files are
 * expected in time order (as instruments write them); a sample whose window was already finished is counted as
 * out_of_time_order, never silently dropped.
 *
 * Per sample, in this order (the first failing rule names the rejection): CNR below qc.cnr_db.min (low_cnr);
 * CNR above qc.cnr_db.max (hard_target_cnr); |v_r| above qc.radialVelocityLimit_ms; window already finished;
 * no wind direction for the window; the measurement point lower than qc.groundClearance_m above ground
 * (below_ground: ground or hard-target returns); outside every plane's thickness or grid (outside_planes).
 * Samples without CNR (no column) pass the CNR rules.
 *
 * Geometry: the beam's site-frame unit vector is the calibration rotation applied to the reported angles; the point
 * is origin + (range + rangeOffset) * n, or with site.earthCurvature the 4/3-Earth beam height and ground distance
 * (geometry/curvature.ts; the small tilt of the beam over the curved ground is neglected). Rotor-frame coordinates use
 * the window's wind direction (geometry/frames.ts).
 */
import type { Campaign } from '../campaign/types.ts';
import { calibrationMatrix } from '../geometry/beam.ts';
import { beamHeight, groundDistance } from '../geometry/curvature.ts';
import { cellIndex } from '../grid/grid.ts';
import { createWindowSamples, pushSample, type WindowSamples } from '../grid/windowSamples.ts';
import type { RejectedRow } from '../io/batch.ts';
import type { SampleChunk } from '../io/csvSamples.ts';
import { openSamples } from '../io/sampleSource.ts';
import { REJECT_INDEX, REJECT_REASONS } from '../qc/reasons.ts';
import type { PlaneGrid } from '../retrieval/settings.ts';
import type { WindowScheme } from './windows.ts';

export interface OpenWindow {
  index: number;
  start_s: number;
  end_s: number;
  /** First and last sample times seen (for 'record' windows). */
  first_s: number;
  last_s: number;
  direction_deg: number;
  samples: WindowSamples;
}

export interface IngestOptions {
  campaign: Campaign;
  planes: PlaneGrid[];
  scheme: WindowScheme;
  /** Wind direction (from, degrees) of the window [start, end); NaN when unknown. */
  directionOf(start: number, end: number): number;
  /** Called with each finished window, in time order. */
  onWindow(w: OpenWindow): Promise<void>;
  onRejectedRows(rows: RejectedRow[]): void;
  onProgress?(file: string, rows: number): void;
}

/** Per-instrument counters: read, accepted (binned into a cell), and one per rejection reason. */
export class Counters {
  readonly read: Float64Array;
  readonly accepted: Float64Array;
  readonly rejected: Float64Array;
  constructor(readonly instruments: number) {
    this.read = new Float64Array(instruments);
    this.accepted = new Float64Array(instruments);
    this.rejected = new Float64Array(instruments * REJECT_REASONS.length);
  }
  reject(ins: number, reason: number, n = 1): void {
    this.rejected[ins * REJECT_REASONS.length + reason] += n;
  }
}

const R = REJECT_INDEX;
const NR = REJECT_REASONS.length;

export async function ingest(opts: IngestOptions, counters: Counters): Promise<void> {
  const c = opts.campaign;
  const I = c.instruments.length;
  const instrumentIndex = new Map(c.instruments.map((i) => [i.id, i.index]));

  // Per-instrument geometry constants.
  const Rm = c.instruments.map((i) => calibrationMatrix(i.calibration));
  const posE = Float64Array.from(c.instruments, (i) => i.position[0]);
  const posN = Float64Array.from(c.instruments, (i) => i.position[1]);
  const posU = Float64Array.from(c.instruments, (i) => i.position[2]);
  const rOff = Float64Array.from(c.instruments, (i) => i.calibration.rangeOffset_m);
  // Last (azimuth, elevation) per instrument and its site-frame unit vector: scanning instruments repeat angles
  // for every range gate of a ray, so this cache turns most trigonometry into a comparison.
  const lastAz = new Float64Array(I).fill(NaN), lastEl = new Float64Array(I).fill(NaN);
  const nE = new Float64Array(I), nN = new Float64Array(I), nU = new Float64Array(I);

  const cnrMin = c.qc.cnr_db.min, cnrMax = c.qc.cnr_db.max, vLim = c.qc.radialVelocityLimit_ms;
  const groundMin = c.site.groundLevel_m + c.qc.groundClearance_m;
  const curvature = c.site.earthCurvature;
  const tb = c.turbine.position;
  const planes = opts.planes;
  const P = planes.length;
  const pCross = Uint8Array.from(planes, (p) => (p.spec.orientation === 'cross' ? 1 : 0));
  const pLevel = Float64Array.from(planes, (p) => (p.spec.orientation === 'cross' ? p.spec.x_m : p.spec.z_m));
  const pHalf = Float64Array.from(planes, (p) => p.spec.thickness_m / 2);

  const open = new Map<number, OpenWindow & { dE: number; dN: number }>();
  let finishedUpTo = -Infinity; // every window index <= this is finished
  const scheme = opts.scheme;

  const windowFor = (wi: number) => {
    let w = open.get(wi);
    if (!w) {
      const [start, end] = scheme.bounds(wi);
      const dir = scheme.fixed ? opts.directionOf(start, end) : NaN; // record windows: set at the end
      const D = (dir * Math.PI) / 180;
      w = { index: wi, start_s: start, end_s: end, first_s: Infinity, last_s: -Infinity, direction_deg: dir, samples: createWindowSamples(), dE: -Math.sin(D), dN: -Math.cos(D) };
      open.set(wi, w);
    }
    return w;
  };

  const finishUpTo = async (watermark: number) => {
    const ready = [...open.values()].filter((w) => w.end_s <= watermark).sort((a, b) => a.index - b.index);
    for (const w of ready) {
      open.delete(w.index);
      finishedUpTo = Math.max(finishedUpTo, w.index);
      await opts.onWindow(w);
    }
  };

  // 'record' windows need the direction before binning: it comes from the whole series.
  let recordDir = NaN;
  if (!scheme.fixed) recordDir = opts.directionOf(-Infinity, Infinity);

  const processChunk = (chunk: SampleChunk, owner: number) => {
    const b = chunk.batch;
    if (chunk.rejected.length) {
      // Rows that could not be read are charged to the instrument owning the file.
      for (const r of chunk.rejected) {
        counters.read[owner]++;
        counters.reject(owner, R[r.reason as keyof typeof R] ?? R.bad_number);
      }
      opts.onRejectedRows(chunk.rejected);
    }
    let curWi = NaN;
    let cur: (OpenWindow & { dE: number; dN: number }) | undefined;
    for (let i = 0; i < b.length; i++) {
      const ins = b.instrument[i];
      counters.read[ins]++;
      const cnr = b.cnr[i];
      if (cnr < cnrMin) { counters.rejected[ins * NR + R.low_cnr]++; continue; }
      if (cnr > cnrMax) { counters.rejected[ins * NR + R.hard_target_cnr]++; continue; }
      const vr = b.radialVelocity[i];
      if (vr > vLim || vr < -vLim) { counters.rejected[ins * NR + R.radial_velocity_limit]++; continue; }
      const t = b.time[i];
      const wi = scheme.indexOf(t);
      if (wi !== curWi) {
        if (wi <= finishedUpTo) { counters.rejected[ins * NR + R.out_of_time_order]++; continue; }
        cur = windowFor(wi);
        if (!scheme.fixed && !Number.isFinite(cur.direction_deg)) {
          cur.direction_deg = recordDir;
          const D = (recordDir * Math.PI) / 180;
          cur.dE = -Math.sin(D); cur.dN = -Math.cos(D);
        }
        curWi = wi;
      }
      const w = cur!;
      if (!(w.direction_deg === w.direction_deg)) { counters.rejected[ins * NR + R.no_wind_direction]++; continue; }
      if (t < w.first_s) w.first_s = t;
      if (t > w.last_s) w.last_s = t;
      const az = b.azimuth[i], el = b.elevation[i];
      if (az !== lastAz[ins] || el !== lastEl[ins]) {
        const a = (az * Math.PI) / 180, e = (el * Math.PI) / 180, ce = Math.cos(e);
        const x0 = ce * Math.sin(a), y0 = ce * Math.cos(a), z0 = Math.sin(e);
        const m = Rm[ins];
        nE[ins] = m[0] * x0 + m[1] * y0 + m[2] * z0;
        nN[ins] = m[3] * x0 + m[4] * y0 + m[5] * z0;
        nU[ins] = m[6] * x0 + m[7] * y0 + m[8] * z0;
        lastAz[ins] = az; lastEl[ins] = el;
      }
      const ne = nE[ins], nn = nN[ins], nu = nU[ins];
      const r = b.range[i] + rOff[ins];
      let pe: number, pn: number, pu: number;
      if (curvature) {
        const elev = Math.asin(Math.max(-1, Math.min(1, nu)));
        const h = beamHeight(r, elev), s = groundDistance(r, elev, undefined, undefined, h);
        const hn = Math.hypot(ne, nn) || 1;
        pe = posE[ins] + (s * ne) / hn; pn = posN[ins] + (s * nn) / hn; pu = posU[ins] + h;
      } else {
        pe = posE[ins] + r * ne; pn = posN[ins] + r * nn; pu = posU[ins] + r * nu;
      }
      if (pu < groundMin) { counters.rejected[ins * NR + R.below_ground]++; continue; }
      const de = pe - tb[0], dn = pn - tb[1];
      const x = de * w.dE + dn * w.dN;
      const y = -de * w.dN + dn * w.dE;
      const z = pu - tb[2];
      let placed = false;
      for (let p = 0; p < P; p++) {
        const cross = pCross[p] === 1;
        const off = (cross ? x : z) - pLevel[p];
        if (off > pHalf[p] || off < -pHalf[p]) continue;
        const cell = cross ? cellIndex(planes[p].grid, y, z) : cellIndex(planes[p].grid, y, x);
        if (cell < 0) continue;
        // Beam unit vector in the window's rotor frame.
        const rx = ne * w.dE + nn * w.dN, ry = -ne * w.dN + nn * w.dE;
        pushSample(w.samples, p, cell, ins, vr, rx, ry, nu, y, cross ? z : x);
        counters.accepted[ins]++;
        placed = true;
        break;
      }
      if (!placed) counters.rejected[ins * NR + R.outside_planes]++;
    }
  };

  // Every file of every instrument, read in step.
  const files = c.instruments.flatMap((ins) => ins.files.map((f) => ({ path: f, owner: ins.index, ins })));
  const cursors = files.map((f) => ({
    // 16k-row batches: the same speed as larger ones with less memory held per open file.
    it: openSamples(f.path, { instrumentIndex, owner: f.owner, columns: f.ins.columns, sign: f.ins.radialVelocitySign, batchSize: 16384 })[Symbol.asyncIterator](),
    last: -Infinity,
    done: false,
    path: f.path,
    owner: f.owner,
    rows: 0,
  }));
  for (;;) {
    let k = -1;
    for (let j = 0; j < cursors.length; j++) if (!cursors[j].done && (k < 0 || cursors[j].last < cursors[k].last)) k = j;
    if (k < 0) break;
    const cur = cursors[k];
    const r = await cur.it.next();
    if (r.done) {
      cur.done = true;
    } else {
      processChunk(r.value, cur.owner);
      const b = r.value.batch;
      if (b.length > 0) cur.last = Math.max(cur.last, b.time[b.length - 1]);
      cur.rows += b.length + r.value.rejected.length;
      opts.onProgress?.(cur.path, cur.rows);
    }
    if (scheme.fixed) {
      let watermark = Infinity;
      for (const q of cursors) if (!q.done) watermark = Math.min(watermark, q.last);
      if (Number.isFinite(watermark)) await finishUpTo(watermark);
    }
  }
  if (!scheme.fixed) {
    for (const w of open.values()) {
      w.start_s = w.first_s;
      w.end_s = w.last_s;
    }
  }
  await finishUpTo(Infinity);
}
