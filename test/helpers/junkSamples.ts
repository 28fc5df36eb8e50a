/**
 * Synthetic line-of-sight samples that our simulator did not shape, for the data-driven CNR limit: one instrument
 * scanning with every row at its own angles (no ray structure, no repeated angles), a flow with a wake-like deficit
 * and position-dependent turbulence, CNR falling with range with a realistic spread, and a junk population of
 * velocities unrelated to the wind below a chosen CNR (uniform over +/-junkSpan, or Gaussian about zero).
 */
import { mulberry32, gaussian } from '../../src/math/random.ts';

export interface JunkSpec {
  /** Below this CNR a sample is junk with probability junkShare, dB. */
  junkBelow_db: number;
  /** Share of samples below junkBelow_db that are junk (the rest stay good). @default 1 */
  junkShare?: number;
  /** 'uniform': uniform over +/-junkSpan_ms; 'gauss': zero-mean Gaussian with sd junkSpan_ms / 3. @default 'uniform' */
  junkKind?: 'uniform' | 'gauss';
  junkSpan_ms?: number;
  /** CNR at 250 m range and its spread, dB; CNR falls 30 dB per decade of range. @default -8, 2.5 */
  cnr250_db?: number;
  cnrSpread_db?: number;
  seed?: number;
  rows?: number;
  /** Good-data turbulence sd outside the wake, m/s (doubled inside the deficit). @default 0.4 */
  turbulence_ms?: number;
}

export interface JunkSamples {
  length: number;
  time: Float64Array; azimuth: Float64Array; elevation: Float64Array; range: Float64Array;
  radialVelocity: Float64Array; cnr: Float64Array; junk: Uint8Array;
}

/** Wind from the west at 8 m/s with a Gaussian deficit centred 600 m east of the instrument, 80 m wide. */
export function junkSamples(spec: JunkSpec): JunkSamples {
  const n = spec.rows ?? 60000;
  const rnd = mulberry32(spec.seed ?? 11);
  const s: JunkSamples = {
    length: n, time: new Float64Array(n), azimuth: new Float64Array(n), elevation: new Float64Array(n), range: new Float64Array(n),
    radialVelocity: new Float64Array(n), cnr: new Float64Array(n), junk: new Uint8Array(n),
  };
  const share = spec.junkShare ?? 1, span = spec.junkSpan_ms ?? 20, turb = spec.turbulence_ms ?? 0.4;
  const c250 = spec.cnr250_db ?? -8, cs = spec.cnrSpread_db ?? 2.5;
  for (let i = 0; i < n; i++) {
    const t = 1.7e9 + i * 0.05;
    const az = 60 + 60 * rnd(); // every row its own angles
    const el = 0.5 + 4 * rnd();
    const r = 100 + 1400 * rnd();
    const a = (az * Math.PI) / 180, e = (el * Math.PI) / 180;
    const ne = Math.cos(e) * Math.sin(a), nn = Math.cos(e) * Math.cos(a);
    const pn = r * nn; // north of the instrument
    const inWake = Math.exp(-((pn - 0) ** 2) / (2 * 80 ** 2)) * (r * ne > 300 ? 1 : 0);
    const u = 8 * (1 - 0.4 * inWake);
    const sd = turb * (1 + inWake);
    const cnr = c250 - 30 * Math.log10(r / 250) + cs * gaussian(rnd);
    const noise = 0.1 * Math.max(1, Math.pow(10, (-18 - cnr) / 20));
    let vr = u * ne + sd * gaussian(rnd) + noise * gaussian(rnd);
    if (cnr < spec.junkBelow_db && rnd() < share) {
      vr = spec.junkKind === 'gauss' ? (span / 3) * gaussian(rnd) : -span + 2 * span * rnd();
      s.junk[i] = 1;
    }
    s.time[i] = t; s.azimuth[i] = az; s.elevation[i] = el; s.range[i] = r; s.radialVelocity[i] = vr; s.cnr[i] = cnr;
  }
  return s;
}
