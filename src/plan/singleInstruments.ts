/**
 * Planning of the single-instrument geometries, from their declared scan patterns, for the planned wind direction
 * (a nacelle turned into that wind, no yaw misalignment):
 * - profilers: per height bin, the gates that fall in it, the diameter of the ring the fit assumes uniform (2 r cos
 *   phi, against the rotor diameter), and the error amplification of u, v, w, sqrt(diag((A^T A)^-1)) of the beams
 *   (for N evenly spaced azimuths on a cone: 1 / (cos phi sqrt(N/2)) for u and v, 1 / (sin phi sqrt N) for w);
 * - nacelle instruments: per gate, the upstream distance along the axis, the heights of the beams and their lateral
 *   half-separation (the span the pair assumes homogeneous), and the amplification of the along- and across-axis
 *   components of a pair at +/- a: 1 / (sqrt2 cos a) and 1 / (sqrt2 sin a) (REFERENCES.md 2, two-beam case);
 * - trackers: per downstream bin, over the gates that fall in the tracker's bins (x within half a step of the bin
 *   centre, the across coordinate within the across bins: the samples the analysis uses), the across-wake span they
 *   cover, the largest angle between a beam and the flow, and the first-order change of the apparent speed per
 *   degree of direction error there, tan(beta) pi/180 (from S cos(beta - delta) = S cos beta (1 + delta tan beta)).
 * Straight beams, flat ground, like the plane planner.
 */
import type { Campaign, Instrument } from '../campaign/types.ts';
import { calibratedUnitVector, calibrationMatrix, DEG } from '../geometry/beam.ts';
import { invertSym3, normalMatrix } from '../geometry/amplification.ts';
import { nacelleBeamSite, nacelleOrigin } from '../geometry/nacelle.ts';

export interface SingleInstrumentPlan {
  instrumentId: string;
  role: 'profiler' | 'nacelle' | 'tracker';
  rows: Record<string, number | string>[];
  notes: string[];
}

const r2 = (x: number) => Math.round(x * 100) / 100;

function profilerPlan(c: Campaign, ins: Instrument): SingleInstrumentPlan {
  const p = ins.profile!, pat = p.pattern;
  const out: SingleInstrumentPlan = { instrumentId: ins.id, role: 'profiler', rows: [], notes: [] };
  if (!pat) { out.notes.push('no scan pattern declared (profile.pattern): nothing to plan'); return out; }
  const R = calibrationMatrix(ins.calibration);
  const beams = pat.azimuths_deg.map((a) => calibratedUnitVector(R, a, pat.elevation_deg));
  if (pat.vertical) beams.push(calibratedUnitVector(R, 0, 90));
  const rows = new Float64Array(beams.flat());
  const inv = invertSym3(normalMatrix(rows, beams.length));
  const [du, dv, dw] = [Math.sqrt(inv[0]), Math.sqrt(inv[4]), Math.sqrt(inv[8])];
  const sinE = Math.sin(pat.elevation_deg * DEG), cosE = Math.cos(pat.elevation_deg * DEG);
  for (let z = p.heights_m.min; z <= p.heights_m.max + 1e-9; z += p.heights_m.step) {
    const gates = pat.ranges_m.filter((r) => Math.abs(ins.position[2] - c.site.groundLevel_m + r * sinE - z) <= p.heights_m.step / 2);
    const ring = gates.length ? (2 * gates.reduce((s, r) => s + r, 0) * cosE) / gates.length : NaN;
    out.rows.push({ height_m: z, gates: gates.length, ring_diameter_m: r2(ring), ring_over_rotor: r2(ring / c.turbine.rotorDiameter_m), dop_u: r2(du), dop_v: r2(dv), dop_w: r2(dw), covered: gates.length ? 'yes' : 'no gate' });
  }
  const n = pat.azimuths_deg.length;
  if (p.mode === 'vad' && n < p.minSectors) out.notes.push(`${n} azimuths < minSectors ${p.minSectors}: the fit will not be made`);
  out.notes.push(`amplification of u, v, w over the ${beams.length} beams: ${r2(du)}, ${r2(dv)}, ${r2(dw)}; the fit assumes the wind uniform over each ring`);
  return out;
}

function nacellePlan(c: Campaign, ins: Instrument, dir: number): SingleInstrumentPlan {
  const n = ins.nacelle!;
  const out: SingleInstrumentPlan = { instrumentId: ins.id, role: 'nacelle', rows: [], notes: [] };
  const origin = nacelleOrigin(c.turbine.position, ins.mount, dir);
  const b = new Float64Array(3);
  const target = n.distance_D * c.turbine.rotorDiameter_m;
  for (const r of n.ranges_m) {
    const heights: number[] = [], half: number[] = [];
    let up = 0;
    for (const beam of n.beams) {
      nacelleBeamSite(dir, beam.azimuth_deg, beam.elevation_deg, ins.calibration.heading_deg, ins.calibration.pitch_deg, ins.calibration.roll_deg, b);
      heights.push(origin[2] - c.site.groundLevel_m + r * b[2]);
      half.push(Math.abs(r * Math.cos(beam.elevation_deg * DEG) * Math.sin(beam.azimuth_deg * DEG)));
      up += (r * Math.cos(beam.elevation_deg * DEG) * Math.cos(beam.azimuth_deg * DEG)) / n.beams.length;
    }
    out.rows.push({ range_m: r, upstream_m: r2(up), upstream_D: r2(up / c.turbine.rotorDiameter_m), lowest_m: r2(Math.min(...heights)), highest_m: r2(Math.max(...heights)), half_separation_m: r2(Math.max(...half)) });
  }
  const ups = out.rows.map((x) => Number(x.upstream_m));
  if (!(target >= Math.min(...ups) && target <= Math.max(...ups))) out.notes.push(`the reporting distance ${target} m lies outside the gates (${Math.min(...ups)}-${Math.max(...ups)} m upstream): add gates around it`);
  const a = Math.max(...n.beams.map((x) => Math.abs(x.azimuth_deg))) * DEG;
  out.notes.push(`pair amplification: along the axis ${r2(1 / (Math.SQRT2 * Math.cos(a)))}, across ${r2(1 / (Math.SQRT2 * Math.sin(a)))} (direction errors grow as the opening angle shrinks)`);
  if (n.beams.length === 4) out.notes.push('4 beams: shear exponent from the upper and lower pairs; the lowest beam must stay clear of the ground');
  return out;
}

function trackerPlan(c: Campaign, ins: Instrument, dir: number): SingleInstrumentPlan {
  const t = ins.track!, pat = t.pattern;
  const out: SingleInstrumentPlan = { instrumentId: ins.id, role: 'tracker', rows: [], notes: [] };
  if (!pat) { out.notes.push('no scan pattern declared (track.pattern): nothing to plan'); return out; }
  const D = dir * DEG, dE = -Math.sin(D), dN = -Math.cos(D);
  const R = calibrationMatrix(ins.calibration);
  const origin = ins.beamFrame === 'nacelle' ? nacelleOrigin(c.turbine.position, ins.mount, dir) : ins.position;
  const horizontal = t.sector === 'horizontal';
  const sweep = horizontal ? pat.azimuth_deg : pat.elevation_deg;
  const bins = new Map<number, { lo: number; hi: number; beta: number; n: number }>();
  const b = new Float64Array(3);
  for (let a = sweep.min; a <= sweep.max + 1e-9; a += sweep.step) {
    const az = horizontal ? a : pat.azimuth_deg.min, el = horizontal ? pat.elevation_deg.min : a;
    if (ins.beamFrame === 'nacelle') nacelleBeamSite(dir, az, el, ins.calibration.heading_deg, ins.calibration.pitch_deg, ins.calibration.roll_deg, b);
    else b.set(calibratedUnitVector(R, az, el));
    const cosb = Math.abs(b[0] * dE + b[1] * dN) / Math.hypot(b[0], b[1], b[2]);
    for (const r of pat.ranges_m) {
      const pe = origin[0] + r * b[0] - c.turbine.position[0], pn = origin[1] + r * b[1] - c.turbine.position[1], pu = origin[2] + r * b[2] - c.turbine.position[2];
      const x = pe * dE + pn * dN, y = -pe * dN + pn * dE;
      const ix = Math.round((x - t.x_m.min) / t.x_m.step);
      const xc = t.x_m.min + ix * t.x_m.step;
      if (ix < 0 || xc > t.x_m.max + 1e-9) continue;
      const across = horizontal ? y : pu;
      // Only the gates that land in an across bin (as track/target.ts places samples) serve the analysis.
      const ia = Math.round((across - t.across_m.min) / t.across_m.step);
      if (ia < 0 || t.across_m.min + ia * t.across_m.step > t.across_m.max + 1e-9) continue;
      const e = bins.get(xc) ?? { lo: Infinity, hi: -Infinity, beta: 0, n: 0 };
      e.lo = Math.min(e.lo, across); e.hi = Math.max(e.hi, across); e.beta = Math.max(e.beta, Math.acos(Math.min(1, cosb)) / DEG); e.n++;
      bins.set(xc, e);
    }
  }
  for (let x = t.x_m.min; x <= t.x_m.max + 1e-9; x += t.x_m.step) {
    const e = bins.get(x);
    out.rows.push(e
      ? { x_m: x, x_D: r2(x / c.turbine.rotorDiameter_m), across_min_m: r2(e.lo), across_max_m: r2(e.hi), rays: e.n, max_beam_angle_deg: r2(e.beta), speed_error_per_deg: Math.round(Math.tan(e.beta * DEG) * DEG * 1e4) / 1e4, usable: e.beta <= t.maxBeamAngle_deg ? 'yes' : 'partly (beams beyond maxBeamAngle_deg are masked)' }
      : { x_m: x, x_D: r2(x / c.turbine.rotorDiameter_m), rays: 0, usable: 'not reached by the sweep' });
  }
  out.notes.push('speed_error_per_deg: fractional error of the apparent speed per degree of direction error at the widest beam angle (first order)');
  return out;
}

export function planSingleInstruments(c: Campaign, direction_deg: number): SingleInstrumentPlan[] {
  return c.instruments.flatMap((ins) =>
    ins.role === 'profiler' ? [profilerPlan(c, ins)] : ins.role === 'nacelle' ? [nacellePlan(c, ins, direction_deg)] : ins.role === 'tracker' ? [trackerPlan(c, ins, direction_deg)] : []);
}
