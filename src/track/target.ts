/**
 * The track target: samples of single-instrument wake trackers keyed by tracker, scan, downstream bin and
 * across-wake bin in the window's rotor frame (x downstream, y left, z up; origin at the tower base).
 * Key = (cellOffset[tracker] + scan * nx * na + ix * na + ia) * instrumentCount + instrument. The across coordinate
 * is y for a horizontal sector and z for a vertical one; bins are centred on min, min + step, ... max (a sample
 * belongs to the nearest centre within step/2). Scan = floor((t - window start) / scan_s), kept per scan only for
 * fixed windows (scansPerWindow = ceil(length / scan_s)); other window kinds have one scan slot. Each key
 * accumulates the site-frame beam unit vector, the across coordinate and the height above ground.
 */
import type { Instrument, Vec3 } from '../campaign/types.ts';
import type { CellAccumulator } from '../grid/accumulator.ts';
import { FRAME, SAMPLE, type SampleTarget, type WindowFrame } from '../grid/target.ts';
import { REJECT_INDEX } from '../qc/reasons.ts';

export interface TrackerLayout {
  instrument: Instrument;
  offset: number;
  x: number[];
  across: number[];
  scans: number;
}

const centres = (s: { min: number; max: number; step: number }) =>
  Array.from({ length: Math.floor((s.max - s.min) / s.step + 1e-9) + 1 }, (_, k) => s.min + k * s.step);

/** Layouts of the trackers; `windowLength_s` is the fixed window length (NaN for other window kinds). */
export function trackerLayouts(instruments: Instrument[], windowLength_s: number): TrackerLayout[] {
  let off = 0;
  return instruments.filter((i) => i.role === 'tracker').map((ins) => {
    const t = ins.track!;
    const x = centres(t.x_m), across = centres(t.across_m);
    const scans = Number.isFinite(windowLength_s) ? Math.max(1, Math.ceil(windowLength_s / t.scan_s - 1e-9)) : 1;
    const l = { instrument: ins, offset: off, x, across, scans };
    off += scans * x.length * across.length;
    return l;
  });
}

export class TrackTarget implements SampleTarget {
  readonly id = 'tracks';
  readonly keyCount: number;
  readonly outsideReason = REJECT_INDEX.outside_track;
  private readonly slot: Int32Array;

  constructor(readonly layouts: TrackerLayout[], private readonly instrumentCount: number, private readonly origin: Vec3) {
    this.slot = new Int32Array(instrumentCount).fill(-1);
    layouts.forEach((l, k) => (this.slot[l.instrument.index] = k));
    const last = layouts[layouts.length - 1];
    this.keyCount = (last ? last.offset + last.scans * last.x.length * last.across.length : 0) * instrumentCount;
  }

  add(acc: CellAccumulator, f: WindowFrame, ins: number, s: Float64Array): boolean {
    const vr = s[SAMPLE.vr], ne = s[SAMPLE.ne], nn = s[SAMPLE.nn], nu = s[SAMPLE.nu], pe = s[SAMPLE.pe], pn = s[SAMPLE.pn], pu = s[SAMPLE.pu], t = s[SAMPLE.t];
    const k = this.slot[ins];
    if (k < 0) return false;
    const l = this.layouts[k], tr = l.instrument.track!;
    const de = pe - this.origin[0], dn = pn - this.origin[1], z = pu - this.origin[2];
    const x = de * f[FRAME.dE] + dn * f[FRAME.dN];
    const y = -de * f[FRAME.dN] + dn * f[FRAME.dE];
    const ix = Math.round((x - tr.x_m.min) / tr.x_m.step);
    if (ix < 0 || ix >= l.x.length) return false;
    const c = tr.sector === 'horizontal' ? y : z;
    const ia = Math.round((c - tr.across_m.min) / tr.across_m.step);
    if (ia < 0 || ia >= l.across.length) return false;
    let scan = 0;
    if (l.scans > 1) {
      const t0 = f[FRAME.start] > -Infinity ? f[FRAME.start] : f[FRAME.first];
      scan = Math.min(l.scans - 1, Math.max(0, Math.floor((t - t0) / tr.scan_s)));
    }
    const na = l.across.length;
    acc.add((l.offset + scan * l.x.length * na + ix * na + ia) * this.instrumentCount + ins, vr, ne, nn, nu, c, z);
    return true;
  }
}
