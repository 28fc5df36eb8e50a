/**
 * The profile target: samples of profiling instruments (VAD cones, DBS beams) keyed by instrument, height bin and
 * azimuth sector. Key = (cellOffset[profiler] + heightBin * (sectors + 1) + sector) * instrumentCount + instrument;
 * sector `sectors` is the vertical beam (elevation above verticalAbove_deg). Sectors are centred on north:
 * sector k holds azimuths within 180/sectors degrees of k * 360/sectors, so beams at 0, 90, 180, 270 degrees fall in
 * sector centres. Each key accumulates the site-frame beam unit vector (east, north, up), the horizontal distance of
 * the measurement point from the instrument and its height above ground.
 */
import type { Instrument } from '../campaign/types.ts';
import type { CellAccumulator } from '../grid/accumulator.ts';
import { SAMPLE, type SampleTarget, type WindowFrame } from '../grid/target.ts';
import { REJECT_INDEX } from '../qc/reasons.ts';

export interface ProfilerLayout {
  instrument: Instrument;
  /** First cell of this profiler in the key space. */
  offset: number;
  heights: number[];
  /** Azimuth sectors (the vertical sector is index `sectors`). */
  sectors: number;
}

export function profilerLayouts(instruments: Instrument[]): ProfilerLayout[] {
  let off = 0;
  return instruments.filter((i) => i.role === 'profiler').map((ins) => {
    const p = ins.profile!;
    const n = Math.floor((p.heights_m.max - p.heights_m.min) / p.heights_m.step + 1e-9) + 1;
    const heights = Array.from({ length: n }, (_, k) => p.heights_m.min + k * p.heights_m.step);
    const l = { instrument: ins, offset: off, heights, sectors: p.sectors };
    off += n * (p.sectors + 1);
    return l;
  });
}

export class ProfileTarget implements SampleTarget {
  readonly id = 'profiles';
  readonly keyCount: number;
  readonly outsideReason = REJECT_INDEX.outside_heights;
  private readonly slot: Int32Array;
  private readonly off: Float64Array;
  private readonly h0: Float64Array;
  private readonly dh: Float64Array;
  private readonly nh: Int32Array;
  private readonly S: Int32Array;
  private readonly sinVert: Float64Array;
  private readonly x0: Float64Array;
  private readonly y0: Float64Array;

  constructor(readonly layouts: ProfilerLayout[], private readonly instrumentCount: number, private readonly groundLevel_m: number) {
    this.slot = new Int32Array(instrumentCount).fill(-1);
    layouts.forEach((l, k) => (this.slot[l.instrument.index] = k));
    this.off = Float64Array.from(layouts, (l) => l.offset);
    this.h0 = Float64Array.from(layouts, (l) => l.heights[0]);
    this.dh = Float64Array.from(layouts, (l) => l.instrument.profile!.heights_m.step);
    this.nh = Int32Array.from(layouts, (l) => l.heights.length);
    this.S = Int32Array.from(layouts, (l) => l.sectors);
    this.sinVert = Float64Array.from(layouts, (l) => Math.sin((l.instrument.profile!.verticalAbove_deg * Math.PI) / 180));
    this.x0 = Float64Array.from(layouts, (l) => l.instrument.position[0]);
    this.y0 = Float64Array.from(layouts, (l) => l.instrument.position[1]);
    const last = layouts[layouts.length - 1];
    this.keyCount = (last ? last.offset + last.heights.length * (last.sectors + 1) : 0) * instrumentCount;
  }

  add(acc: CellAccumulator, _f: WindowFrame, ins: number, s: Float64Array): boolean {
    const vr = s[SAMPLE.vr], ne = s[SAMPLE.ne], nn = s[SAMPLE.nn], nu = s[SAMPLE.nu], pe = s[SAMPLE.pe], pn = s[SAMPLE.pn], pu = s[SAMPLE.pu];
    const k = this.slot[ins];
    if (k < 0) return false;
    const z = pu - this.groundLevel_m;
    const hb = Math.round((z - this.h0[k]) / this.dh[k]);
    if (hb < 0 || hb >= this.nh[k]) return false;
    const S = this.S[k];
    let sector: number;
    if (nu >= this.sinVert[k]) sector = S;
    else {
      let az = Math.atan2(ne, nn) / (2 * Math.PI);
      if (az < 0) az += 1;
      sector = Math.floor(az * S + 0.5) % S;
    }
    acc.add((this.off[k] + hb * (S + 1) + sector) * this.instrumentCount + ins, vr, ne, nn, nu, Math.hypot(pe - this.x0[k], pn - this.y0[k]), z);
    return true;
  }
}
