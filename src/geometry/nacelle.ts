/**
 * The nacelle frame: beams given relative to the nacelle axis, turned into the site frame with the nacelle direction
 * (and optionally the instrument's tilt and roll) at the sample time. One implementation for the ingest, the planner
 * and the simulator.
 *
 * Nacelle direction psi: degrees clockwise from north of the direction the rotor faces (upwind when the turbine is
 * aligned; the turbine series column yaw_deg). Yaw offset (misalignment) = psi minus wind direction (from).
 * Nacelle axes in the site frame: forward f = (sin psi, cos psi, 0), left l = (-cos psi, sin psi, 0) (left looking
 * forward), up (0, 0, 1).
 *
 * A beam at nacelle-relative azimuth alpha (clockwise seen from above, 0 along the axis) and elevation eps has the
 * instrument-frame unit vector b = (cos eps sin alpha, cos eps cos alpha, sin eps) (the instrument's "north" axis is
 * the nacelle axis). Its site-frame vector is R_heading(psi + h0) R_pitch(p0 + tilt) R_roll(r0 + roll) b: the same
 * rotation as a ground instrument's calibration (geometry/beam.ts, calibrationMatrix) with the heading replaced by
 * the nacelle direction, so with zero tilt and roll a beam at alpha points at site azimuth psi + alpha.
 * Tilt (pitch) positive raises the beams along the axis; roll positive raises the beams on the right.
 *
 * Beam origin: tower base + mount[0] f + mount[1] l + mount[2] up (mount in metres, forward/left/up).
 */
import type { Calibration, Vec3 } from '../campaign/types.ts';
import type { Series } from '../io/series.ts';
import { DEG } from './beam.ts';

/**
 * Site-frame unit vector of a nacelle-frame beam: writes (east, north, up) into out[0..2].
 * psi: nacelle direction, degrees; az, el: nacelle-relative beam angles, degrees; heading/pitch/roll: static
 * mounting offsets plus the inclinometer's tilt and roll, degrees.
 */
export function nacelleBeamSite(psi: number, az: number, el: number, heading: number, pitch: number, roll: number, out: Float64Array | number[]): void {
  const a = az * DEG, e = el * DEG, ce = Math.cos(e);
  const x0 = ce * Math.sin(a), y0 = ce * Math.cos(a), z0 = Math.sin(e);
  const r = roll * DEG, p = pitch * DEG, h = (psi + heading) * DEG;
  const cr = Math.cos(r), sr = Math.sin(r), cp = Math.cos(p), sp = Math.sin(p), ch = Math.cos(h), sh = Math.sin(h);
  const x1 = cr * x0 - sr * z0, z1 = sr * x0 + cr * z0;
  const y2 = cp * y0 - sp * z1, z2 = sp * y0 + cp * z1;
  out[0] = ch * x1 + sh * y2;
  out[1] = -sh * x1 + ch * y2;
  out[2] = z2;
}

/** Site-frame beam origin of an instrument mounted at `mount` (forward, left, up; metres) on a nacelle facing psi. */
export function nacelleOrigin(base: Vec3, mount: Vec3, psi: number): Vec3 {
  const s = Math.sin(psi * DEG), c = Math.cos(psi * DEG);
  return [base[0] + mount[0] * s - mount[1] * c, base[1] + mount[0] * c + mount[1] * s, base[2] + mount[2]];
}

/** Nacelle-relative azimuth in (-180, 180]. */
export function relativeAzimuth(az: number): number {
  let a = az % 360;
  if (a > 180) a -= 360;
  if (a <= -180) a += 360;
  return a;
}

/**
 * Interpolation in a time series: linear between the two rows around t (circularly for directions), the nearest
 * row within maxGap_s before the first or after the last row, NaN where the two rows around t are more than
 * maxGap_s apart (a gap) or t is further than maxGap_s outside the series. A cursor makes time-ordered lookups
 * O(1); lookups back in time fall back to a binary search.
 */
export class SeriesInterpolator {
  private i = 0;
  constructor(
    private readonly time: Float64Array,
    private readonly values: Float64Array,
    private readonly maxGap_s: number,
    private readonly circular: boolean,
  ) {}

  at(t: number): number {
    const T = this.time, n = T.length;
    if (n === 0) return NaN;
    if (t <= T[0]) return T[0] - t <= this.maxGap_s ? this.values[0] : NaN;
    if (t >= T[n - 1]) return t - T[n - 1] <= this.maxGap_s ? this.values[n - 1] : NaN;
    let i = this.i;
    if (!(T[i] <= t)) {
      let lo = 0, hi = n - 1;
      while (hi - lo > 1) {
        const m = (lo + hi) >> 1;
        if (T[m] <= t) lo = m; else hi = m;
      }
      i = lo;
    }
    while (i + 1 < n && T[i + 1] <= t) i++;
    this.i = i;
    if (i + 1 >= n) return this.values[i];
    const t0 = T[i], t1 = T[i + 1];
    if (t1 - t0 > this.maxGap_s) return NaN;
    const f = (t - t0) / (t1 - t0);
    const v0 = this.values[i], v1 = this.values[i + 1];
    if (!this.circular) return v0 + f * (v1 - v0);
    let d = (v1 - v0) % 360;
    if (d > 180) d -= 360;
    if (d < -180) d += 360;
    const v = v0 + f * d;
    return ((v % 360) + 360) % 360;
  }
}

/**
 * Time average of a direction series over [start, end) as the interpolator gives it (linear between rows, the short
 * way round; NaN in gaps): the circular mean of its values at the midpoints of n equal steps, n = the window's
 * length in seconds (1 to 100000). For a window that holds no row of a series sparser than the windows, this is the
 * direction its samples were turned with. NaN when the series gives no value anywhere in the window.
 */
export function interpolatedMeanDeg(time: Float64Array, values: Float64Array, start: number, end: number, maxGap_s: number): number {
  if (!(end > start)) return NaN;
  const ip = new SeriesInterpolator(time, values, maxGap_s, true);
  const n = Math.min(100000, Math.max(1, Math.ceil(end - start)));
  let s = 0, c = 0, k = 0;
  for (let i = 0; i < n; i++) {
    const v = ip.at(start + ((i + 0.5) * (end - start)) / n);
    if (v !== v) continue;
    s += Math.sin(v * DEG); c += Math.cos(v * DEG); k++;
  }
  if (k === 0) return NaN;
  const d = Math.atan2(s, c) / DEG;
  return d < 0 ? d + 360 : d;
}

/** Why a nacelle-frame sample could not be placed (indices into qc/reasons.ts are chosen by the caller). */
export const NacelleMiss = { none: -1, noDirection: 0, notForward: 1 } as const;

/**
 * One nacelle-mounted instrument's frame over time: the nacelle direction from the turbine series, the optional
 * inclinometer series, the static calibration and the mount. `beam` writes the site-frame unit vector and the beam
 * origin of a sample (out[0..2], out[3..5]) and returns NacelleMiss.none, or why it cannot.
 */
export class NacelleFrame {
  /**
   * The reported (nacelle-relative) angles, degrees, and the beam origin (site frame, metres) of the last sample
   * placed by `beam`: the nacelle target reads them to find the sample's beam and gate without recomputing them.
   */
  lastAz = NaN;
  lastEl = NaN;
  readonly lastOrigin = new Float64Array(3);
  private readonly yaw: SeriesInterpolator;
  private readonly tilt?: SeriesInterpolator;
  private readonly roll?: SeriesInterpolator;

  constructor(
    turbine: Series,
    maxGap_s: number,
    private readonly calibration: Pick<Calibration, 'heading_deg' | 'pitch_deg' | 'roll_deg'>,
    private readonly base: Vec3,
    private readonly mount: Vec3,
    /** true: only beams within +/-90 degrees of the axis are plausible (a forward-looking instrument). */
    private readonly forwardOnly: boolean,
    orientation?: Series,
  ) {
    this.yaw = new SeriesInterpolator(turbine.time, turbine.values.yaw_deg, maxGap_s, true);
    if (orientation) {
      if (orientation.values.tilt_deg) this.tilt = new SeriesInterpolator(orientation.time, orientation.values.tilt_deg, maxGap_s, false);
      if (orientation.values.roll_deg) this.roll = new SeriesInterpolator(orientation.time, orientation.values.roll_deg, maxGap_s, false);
    }
  }

  beam(t: number, az: number, el: number, out: Float64Array): number {
    if (this.forwardOnly) {
      const a = relativeAzimuth(az);
      if (a <= -90 || a >= 90) return NacelleMiss.notForward;
    }
    const psi = this.yaw.at(t);
    if (psi !== psi) return NacelleMiss.noDirection;
    let tilt = 0, roll = 0;
    if (this.tilt) { tilt = this.tilt.at(t); if (tilt !== tilt) return NacelleMiss.noDirection; }
    if (this.roll) { roll = this.roll.at(t); if (roll !== roll) return NacelleMiss.noDirection; }
    const c = this.calibration;
    nacelleBeamSite(psi, az, el, c.heading_deg, c.pitch_deg + tilt, c.roll_deg + roll, out);
    const s = Math.sin(psi * DEG), co = Math.cos(psi * DEG), m = this.mount;
    out[3] = this.base[0] + m[0] * s - m[1] * co;
    out[4] = this.base[1] + m[0] * co + m[1] * s;
    out[5] = this.base[2] + m[2];
    this.lastAz = az; this.lastEl = el;
    this.lastOrigin[0] = out[3]; this.lastOrigin[1] = out[4]; this.lastOrigin[2] = out[5];
    return NacelleMiss.none;
  }
}
