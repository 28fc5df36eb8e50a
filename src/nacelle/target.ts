/**
 * The nacelle target: samples of nacelle-mounted forward-looking instruments keyed by instrument, beam and range
 * gate. Key = (cellOffset[instrument] + beam * gates + gate) * instrumentCount + instrument. A sample belongs to the
 * declared beam within beamTolerance_deg of its reported nacelle-relative angles and to the gate within
 * rangeTolerance_m of its range (else outside_beams). Each key accumulates the site-frame beam unit vector (turned with
 * the nacelle direction at the sample time by geometry/nacelle.ts), the upstream distance along the nacelle axis
 * (range cos(el) cos(az), metres) and the height above ground of the measurement point.
 */
import type { Instrument } from '../campaign/types.ts';
import type { CellAccumulator } from '../grid/accumulator.ts';
import { SAMPLE, type SampleTarget, type WindowFrame } from '../grid/target.ts';
import type { NacelleFrame } from '../geometry/nacelle.ts';
import { relativeAzimuth } from '../geometry/nacelle.ts';
import { REJECT_INDEX } from '../qc/reasons.ts';

export interface NacelleLayout {
  instrument: Instrument;
  offset: number;
  /** Range gates, metres, ascending as declared. */
  ranges: number[];
  rangeTolerance_m: number;
}

export function nacelleLayouts(instruments: Instrument[]): NacelleLayout[] {
  let off = 0;
  return instruments.filter((i) => i.role === 'nacelle').map((ins) => {
    const n = ins.nacelle!;
    const r = [...n.ranges_m];
    const sorted = [...r].sort((a, b) => a - b);
    let spacing = Infinity;
    for (let k = 1; k < sorted.length; k++) spacing = Math.min(spacing, sorted[k] - sorted[k - 1]);
    const l = { instrument: ins, offset: off, ranges: r, rangeTolerance_m: n.rangeTolerance_m ?? (Number.isFinite(spacing) ? spacing / 2 : 10) };
    off += n.beams.length * r.length;
    return l;
  });
}

export class NacelleTarget implements SampleTarget {
  readonly id = 'nacelle';
  readonly keyCount: number;
  readonly outsideReason = REJECT_INDEX.outside_beams;
  private readonly slot: Int32Array;

  constructor(
    readonly layouts: NacelleLayout[],
    private readonly instrumentCount: number,
    private readonly frames: (NacelleFrame | undefined)[],
    private readonly groundLevel_m: number,
  ) {
    this.slot = new Int32Array(instrumentCount).fill(-1);
    layouts.forEach((l, k) => (this.slot[l.instrument.index] = k));
    const last = layouts[layouts.length - 1];
    this.keyCount = (last ? last.offset + last.instrument.nacelle!.beams.length * last.ranges.length : 0) * instrumentCount;
  }

  add(acc: CellAccumulator, _f: WindowFrame, ins: number, s: Float64Array): boolean {
    const vr = s[SAMPLE.vr], ne = s[SAMPLE.ne], nn = s[SAMPLE.nn], nu = s[SAMPLE.nu], pe = s[SAMPLE.pe], pn = s[SAMPLE.pn], pu = s[SAMPLE.pu];
    const k = this.slot[ins];
    const fr = this.frames[ins];
    if (k < 0 || !fr) return false;
    const l = this.layouts[k], n = l.instrument.nacelle!;
    const az = relativeAzimuth(fr.lastAz), el = fr.lastEl;
    let beam = -1;
    for (let b = 0; b < n.beams.length; b++) {
      if (Math.abs(az - n.beams[b].azimuth_deg) <= n.beamTolerance_deg && Math.abs(el - n.beams[b].elevation_deg) <= n.beamTolerance_deg) { beam = b; break; }
    }
    if (beam < 0) return false;
    const o = fr.lastOrigin;
    const r = Math.hypot(pe - o[0], pn - o[1], pu - o[2]);
    let gate = -1;
    for (let g = 0; g < l.ranges.length; g++) if (Math.abs(r - l.ranges[g]) <= l.rangeTolerance_m) { gate = g; break; }
    if (gate < 0) return false;
    const up = r * Math.cos((el * Math.PI) / 180) * Math.cos((az * Math.PI) / 180);
    acc.add((l.offset + beam * l.ranges.length + gate) * this.instrumentCount + ins, vr, ne, nn, nu, up, pu - this.groundLevel_m);
    return true;
  }
}
