/**
 * Line-of-sight geometry (src/geometry/beam.ts, frames.ts, curvature.ts, geodetic.ts) against outside sources:
 * numpy values of REFERENCES.md section 1 and 6 (script test/reference/los_reference.py, output pasted below), the CF
 * sign convention, the WGS84 radii of curvature, and the algebraic properties of a rotation.
 */
import { describe, expect, it } from 'vitest';
import type { Calibration, Vec3 } from '../src/campaign/types.ts';
import {
  anglesOf, beamPoint, calibratedUnitVector, calibrationMatrix, DEG, mat3Mul, mat3T, steerTo, unitVector, unitVectorInto as unitVectorIo,
} from '../src/geometry/beam.ts';
import { beamHeight } from '../src/geometry/curvature.ts';
import { dirFromRotor, dirToRotor, fromRotor, rotorFrame, toRotor, windComponents } from '../src/geometry/frames.ts';
import { wgs84ToEnu } from '../src/geometry/geodetic.ts';

const dot = (a: ArrayLike<number>, b: ArrayLike<number>) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];

describe('unitVectorInto: sines and cosines of degrees by exact reduction and polynomial kernels', () => {
  it('agrees with Math.sin and Math.cos (the engine\'s fdlibm port) within 2e-15 over a million angles', () => {
    // Reference: the JavaScript engine's Math.sin / Math.cos of the angle in radians (a general-purpose library).
    // Tolerance 2e-15: both are within about 1 ulp (1.1e-16) of the true sine, but the reference first converts
    // degrees to radians, rounding angles up to 720 degrees (12.6 rad) by up to 1 ulp, 1.8e-15; the accumulator
    // quantises beam components to 2^-26 = 1.5e-8 anyway.
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const io = new Float64Array(5);
    let worst = 0;
    for (let k = 0; k < 1_000_000; k++) {
      const az = -720 + 1440 * rnd(), el = -90 + 180 * rnd();
      io[0] = az; io[1] = el;
      unitVectorIo(io);
      const a = az * DEG, e = el * DEG;
      const ref = [Math.cos(e) * Math.sin(a), Math.cos(e) * Math.cos(a), Math.sin(e)];
      for (let i = 0; i < 3; i++) worst = Math.max(worst, Math.abs(io[2 + i] - ref[i]));
    }
    expect(worst).toBeLessThan(2e-15);
  });

  it('exact at multiples of 90 degrees and known values elsewhere', () => {
    const out = new Float64Array(3);
    const unitVectorInto = (az: number, el: number, o: Float64Array) => o.set(unitVector(az, el));
    // Vertical beam: no horizontal component at all (Math.cos(pi / 2) would give 6e-17).
    unitVectorInto(123.4, 90, out);
    expect([Math.abs(out[0]), Math.abs(out[1]), out[2]]).toEqual([0, 0, 1]);
    unitVectorInto(90, 0, out);
    expect([out[0], Math.abs(out[1]), out[2]]).toEqual([1, 0, 0]);
    unitVectorInto(-90, 0, out); // west, by a negative azimuth
    expect([out[0], Math.abs(out[1]), out[2]]).toEqual([-1, 0, 0]);
    unitVectorInto(180, 0, out);
    expect([Math.abs(out[0]), out[1]]).toEqual([0, -1]);
    // sin 30 = 1/2, cos 60 = 1/2, sin 45 = sqrt(2)/2 (exact trigonometric values); 2 ulp for the rounding of the
    // angle in radians and of the polynomial.
    unitVectorInto(30, 0, out);
    expect(Math.abs(out[0] - 0.5)).toBeLessThan(2.3e-16);
    unitVectorInto(0, 60, out);
    expect(Math.abs(out[1] - 0.5)).toBeLessThan(2.3e-16);
    unitVectorInto(45, 0, out);
    expect(Math.abs(out[0] - Math.SQRT1_2)).toBeLessThan(2.3e-16);
    expect(Math.abs(out[1] - Math.SQRT1_2)).toBeLessThan(2.3e-16);
    // Angles far out (1e12 degrees) take the engine's own reduction; NaN stays NaN.
    unitVectorInto(1e12, 0, out);
    expect(Math.abs(out[0] - Math.sin(1e12 * DEG))).toBeLessThan(1e-15);
    unitVectorInto(NaN, 10, out);
    expect(Number.isNaN(out[0])).toBe(true);
  });
});

describe('radial velocity v_r = n . U', () => {
  // Source: REFERENCES.md section 1 [numpy]; test/reference/los_reference.py prints
  //   az 45 el 10 U (5, -3, 0.5): 1.479553
  //   az 210 el 30 U (-4, 7, 1.2): -2.917949
  //   az 135 el 60 U (8, 2, -0.5): 1.688308
  const table: [number, number, Vec3, number][] = [
    [45, 10, [5, -3, 0.5], 1.479553],
    [210, 30, [-4, 7, 1.2], -2.917949],
    [135, 60, [8, 2, -0.5], 1.688308],
  ];
  it.each(table)('az %d el %d', (az, el, U, vr) => {
    // Tolerance 1e-6: the reference is printed to 6 decimals (rounding <= 5e-7).
    expect(Math.abs(dot(unitVector(az, el), U) - vr)).toBeLessThan(1e-6);
  });

  it('sign: positive away from the instrument (CF radial_velocity_of_scatterers_away_from_instrument)', () => {
    // Wind from 270 (west) blows toward the east: u_east = +S (common practice u = -S sin D, v = -S cos D).
    const [ue, vn] = windComponents(8, 270);
    expect(Math.abs(ue - 8)).toBeLessThan(1e-12); // exact up to sin/cos rounding
    expect(Math.abs(vn)).toBeLessThan(1e-12);
    // A beam pointing east (az 90) sees the air moving away from it: positive; pointing west: negative.
    expect(dot(unitVector(90, 0), [ue, vn, 0])).toBeCloseTo(8, 12);
    expect(dot(unitVector(270, 0), [ue, vn, 0])).toBeCloseTo(-8, 12);
  });

  it('unit vector: azimuth clockwise from north, elevation above horizontal', () => {
    const n = unitVector(90, 30); // east, raised 30 deg
    expect(n[0]).toBeCloseTo(Math.cos(30 * DEG), 14);
    expect(Math.abs(n[1])).toBeLessThan(1e-15);
    expect(n[2]).toBeCloseTo(0.5, 14);
  });

  it('unitVector / anglesOf round trip (1e-9 deg: a few ulps of atan2 at these magnitudes)', () => {
    for (let az = 0; az < 360; az += 17.5)
      for (const el of [-20, 0, 3.3, 45, 89]) {
        const back = anglesOf(unitVector(az, el));
        expect(Math.abs(back.azimuth_deg - az)).toBeLessThan(1e-9);
        expect(Math.abs(back.elevation_deg - el)).toBeLessThan(1e-9);
      }
  });
});

describe('calibration', () => {
  const cals: Calibration[] = [
    { heading_deg: 3.2, pitch_deg: -1.1, roll_deg: 0.7, rangeOffset_m: 4.5 },
    { heading_deg: -12, pitch_deg: 2.5, roll_deg: -3, rangeOffset_m: -2 },
    { heading_deg: 0, pitch_deg: 0, roll_deg: 0, rangeOffset_m: 0 },
  ];

  it('calibrationMatrix is a rotation: R R^T = I and det R = 1 (1e-14: rounding of 9 products)', () => {
    for (const c of cals) {
      const R = calibrationMatrix(c);
      const P = mat3Mul(R, mat3T(R));
      for (let i = 0; i < 9; i++) expect(Math.abs(P[i] - (i % 4 === 0 ? 1 : 0))).toBeLessThan(1e-14);
      const det = R[0] * (R[4] * R[8] - R[5] * R[7]) - R[1] * (R[3] * R[8] - R[5] * R[6]) + R[2] * (R[3] * R[7] - R[4] * R[6]);
      expect(Math.abs(det - 1)).toBeLessThan(1e-14);
    }
  });

  it('a heading offset h shifts the azimuth of a level beam by h and keeps it level', () => {
    for (const h of [-30, -2.5, 0.8, 10, 179]) {
      const R = calibrationMatrix({ heading_deg: h, pitch_deg: 0, roll_deg: 0 });
      for (const az of [0, 45, 200, 350]) {
        const a = anglesOf(calibratedUnitVector(R, az, 0));
        const d = (((a.azimuth_deg - (az + h)) % 360) + 540) % 360 - 180; // wrapped difference
        expect(Math.abs(d)).toBeLessThan(1e-9); // rounding only
        expect(Math.abs(a.elevation_deg)).toBeLessThan(1e-9);
      }
    }
  });

  it('pitch raises a north beam, roll raises an east beam (the conventions documented in campaign/types.ts)', () => {
    const Rp = calibrationMatrix({ heading_deg: 0, pitch_deg: 2, roll_deg: 0 });
    expect(anglesOf(calibratedUnitVector(Rp, 0, 0)).elevation_deg).toBeCloseTo(2, 10);
    const Rr = calibrationMatrix({ heading_deg: 0, pitch_deg: 0, roll_deg: 3 });
    expect(anglesOf(calibratedUnitVector(Rr, 90, 0)).elevation_deg).toBeCloseTo(3, 10);
  });

  it('steerTo round trip: the beam reported by steerTo hits the target (1e-6 m, heading/pitch/roll/range offset applied)', () => {
    const origin: Vec3 = [-120, 40, 2.5];
    const targets: Vec3[] = [[300, 0, 80], [250, -150, 150], [-400, 300, 30], [10, 900, 5]];
    for (const c of cals) {
      const R = calibrationMatrix(c);
      for (const t of targets) {
        const s = steerTo(origin, c, t);
        const p = beamPoint(origin, calibratedUnitVector(R, s.azimuth_deg, s.elevation_deg), s.range_m + c.rangeOffset_m);
        // 1e-6 m at ~1 km: relative 1e-9, far above double rounding through trig and back (~1e-13).
        expect(Math.hypot(p[0] - t[0], p[1] - t[1], p[2] - t[2])).toBeLessThan(1e-6);
      }
    }
  });
});

describe('beam height over a curved Earth', () => {
  // Doviak & Zrnic (1993) eq. 2.28b (from memory), k_e = 4/3, a = 6371 km; REFERENCES.md section 6 [numpy];
  // test/reference/los_reference.py prints
  //   el 0.5: ['8.785391', '26.709309', '45.104069']
  //   el 2: ['34.958285', '105.227583', '175.967172']
  const table: [number, number, number][] = [
    [0.5, 1000, 8.785391], [0.5, 3000, 26.709309], [0.5, 5000, 45.104069],
    [2, 1000, 34.958285], [2, 3000, 105.227583], [2, 5000, 175.967172],
  ];
  it.each(table)('el %d deg, r %d m', (el, r, h) => {
    expect(Math.abs(beamHeight(r, el * DEG) - h)).toBeLessThan(1e-6); // 6 printed decimals
  });
  it('a level beam rises by about r^2 / (2 k_e a) (the small-angle limit of eq. 2.28b): 1 % at 5 km', () => {
    const r = 5000, expected = (r * r) / (2 * (4 / 3) * 6371e3);
    expect(Math.abs(beamHeight(r, 0) / expected - 1)).toBeLessThan(0.01);
  });
});

describe('rotor frame', () => {
  it('wind from 270: downstream is east, left (looking downstream) is north', () => {
    const f = rotorFrame(270, [1000, 2000, 10]);
    const east = toRotor(f, [1100, 2000, 10]);
    const north = toRotor(f, [1000, 2100, 60]);
    expect(east[0]).toBeCloseTo(100, 9); expect(Math.abs(east[1])).toBeLessThan(1e-9);
    expect(Math.abs(north[0])).toBeLessThan(1e-9); expect(north[1]).toBeCloseTo(100, 9); expect(north[2]).toBeCloseTo(50, 12);
    // The wind itself is purely streamwise: u = S, v = 0.
    const [ue, vn] = windComponents(9, 270);
    const r = dirToRotor(f, [ue, vn, 0.4]);
    expect(r[0]).toBeCloseTo(9, 12); expect(Math.abs(r[1])).toBeLessThan(1e-12); expect(r[2]).toBe(0.4);
  });
  it('wind from 0 (north): downstream is south, left is east', () => {
    const f = rotorFrame(0, [0, 0, 0]);
    const e = toRotor(f, [50, 0, 0]);
    expect(Math.abs(e[0])).toBeLessThan(1e-12); expect(e[1]).toBeCloseTo(50, 12);
    const s = toRotor(f, [0, -50, 0]);
    expect(s[0]).toBeCloseTo(50, 12);
  });
  it('toRotor/fromRotor and dirToRotor/dirFromRotor round trips (1e-9 m at km scale)', () => {
    for (const D of [0, 33, 181.5, 270, 359]) {
      const f = rotorFrame(D, [523.1, -77.4, 3]);
      for (const p of [[0, 0, 0], [1200, -300, 90], [-50, 800, 150]] as Vec3[]) {
        const q = fromRotor(f, toRotor(f, p));
        const d = dirFromRotor(f, dirToRotor(f, p));
        for (let i = 0; i < 3; i++) {
          expect(Math.abs(q[i] - p[i])).toBeLessThan(1e-9);
          expect(Math.abs(d[i] - p[i])).toBeLessThan(1e-9);
        }
      }
    }
  });
});

describe('WGS84 to local east/north/up', () => {
  // Independent check: WGS84 a = 6378137 m, f = 1/298.257223563 (WGS 84 definition, NIMA TR8350.2, from memory);
  // meridian radius of curvature M = a (1 - e^2) / (1 - e^2 sin^2 lat)^1.5, prime-vertical radius
  // N = a / sqrt(1 - e^2 sin^2 lat) (standard geodesy, e.g. Torge & Mueller, Geodesy, from memory).
  // A 0.01 deg meridian arc is M(mid-latitude) * 0.01 deg, a 0.01 deg parallel arc N cos(lat) * 0.01 deg.
  // test/reference/los_reference.py prints
  //   lat 0.0: M(lat+0.005) = 6335439.3278, N(lat) = 6378137.0000, north arc = 1105.742758, east arc = 1113.194908
  //   lat 52.0: M(lat+0.005) = 6375155.1843, N(lat) = 6391435.2682, north arc = 1112.674483, east arc = 686.780161
  // The local frame measures the chord projected on the tangent plane, shorter than the arc by about
  // R dphi^3 / 6 = 6e-6 m for dphi = 0.01 deg: tolerance 1e-4 m.
  const cases: [number, number, number][] = [[0, 1105.742758, 1113.194908], [52, 1112.674483, 686.780161]];
  it.each(cases)('lat %d: 0.01 deg north and east', (lat, north, east) => {
    const o = { lat_deg: lat, lon_deg: 8, alt_m: 0 };
    const pn = wgs84ToEnu({ lat_deg: lat + 0.01, lon_deg: 8, alt_m: 0 }, o);
    expect(Math.abs(pn[1] - north)).toBeLessThan(1e-4);
    expect(Math.abs(pn[0])).toBeLessThan(1e-6); // same meridian: east 0 up to rounding of ECEF (~1e-9 m)
    const pe = wgs84ToEnu({ lat_deg: lat, lon_deg: 8.01, alt_m: 0 }, o);
    expect(Math.abs(pe[0] - east)).toBeLessThan(1e-4);
  });
  it('height above the ellipsoid maps to up (1e-6 m)', () => {
    const o = { lat_deg: 52, lon_deg: 8, alt_m: 20 };
    const p = wgs84ToEnu({ lat_deg: 52, lon_deg: 8, alt_m: 120 }, o);
    expect(Math.abs(p[2] - 100)).toBeLessThan(1e-6);
    expect(Math.hypot(p[0], p[1])).toBeLessThan(1e-6);
  });
});
