/**
 * The simulator's true flow, in the rotor frame (x downstream, y left, z up, origin at the tower base), for one
 * averaging window: a power-law sheared inflow, a Gaussian-shaped velocity deficit whose width grows linearly with
 * distance (the shape of Bastankhah & Porte-Agel 2014, with separate lateral and vertical widths), a wake centre moved
 * off the rotor axis by a fixed offset plus a yaw-induced deflection (skew angle decaying as in Jimenez, Crespo &
 * Migoya 2010, here with decay constant 0.09 so that model comparisons are not circular), and swirl that rotates
 * against the rotor.
 *
 * Swirl sense: the rotor is taken to turn clockwise seen from upstream, i.e. a positive rotation about +x; the wake
 * swirls the other way, so the in-plane velocity at offset (dy, dz) from the centre is v_t (dz, -dy) / r.
 */
export interface WakeTruthParams {
  /** Hub-height free-stream speed, m/s. */
  hubSpeed: number;
  hubHeight: number;
  diameter: number;
  shearExponent: number;
  /** Thrust coefficient at the hub speed (not reduced for yaw). */
  ct: number;
  /** Yaw offset, degrees (nacelle minus wind; positive = nacelle clockwise seen from above). */
  yaw_deg: number;
  kStar: number;
  /** sigma_y / sigma_z. */
  aspect: number;
  lateralOffset: number;
  /** Peak tangential speed at x = 3 D, m/s. */
  swirl: number;
  /** Veer: the wind direction (from) turns clockwise by this many degrees per 100 m of height above the hub. */
  veer_degPer100m?: number;
}

export interface WakeAtX {
  /** Wake centre, metres (rotor frame). */
  yc: number;
  zc: number;
  sigmaY: number;
  sigmaZ: number;
  /** Peak fractional deficit. */
  amplitude: number;
}

/** Jimenez-type deflection: delta(x) = integral_0^x tan(xi0 / (1 + beta s / D)^2) ds, xi0 = 0.5 cos^2(g) sin(g) Ct. */
export function truthDeflection(x: number, p: WakeTruthParams, beta = 0.09): number {
  const g = (p.yaw_deg * Math.PI) / 180;
  const xi0 = 0.5 * Math.cos(g) ** 2 * Math.sin(g) * p.ct;
  const n = 200;
  const h = x / n;
  let s = 0;
  for (let i = 0; i <= n; i++) {
    const wgt = i === 0 || i === n ? 1 : i % 2 ? 4 : 2;
    s += wgt * Math.tan(xi0 / (1 + (beta * i * h) / p.diameter) ** 2);
  }
  // Positive yaw pushes the wake to the left looking downstream (+y).
  return (s * h) / 3;
}

export function wakeAt(x: number, p: WakeTruthParams): WakeAtX {
  const D = p.diameter;
  const ctEff = p.ct * Math.cos((p.yaw_deg * Math.PI) / 180) ** 2;
  const beta = (0.5 * (1 + Math.sqrt(1 - ctEff))) / Math.sqrt(1 - ctEff);
  const eps = 0.2 * Math.sqrt(beta);
  const sigma0 = (p.kStar * x) / D * D + eps * D;
  const sigmaY = sigma0 * Math.sqrt(p.aspect);
  const sigmaZ = sigma0 / Math.sqrt(p.aspect);
  const arg = 1 - ctEff / ((8 * sigmaY * sigmaZ) / (D * D));
  const amplitude = arg > 0 ? 1 - Math.sqrt(arg) : 1;
  return { yc: p.lateralOffset + deflectionTable(p, x), zc: p.hubHeight, sigmaY, sigmaZ, amplitude };
}

const TABLE_STEP = 2;
const TABLE_MAX = 5000;
const tables = new WeakMap<WakeTruthParams, Float64Array>();

/** truthDeflection tabulated every 2 m (cumulative Simpson per step) and interpolated linearly: fast for per-sample use. */
function deflectionTable(p: WakeTruthParams, x: number): number {
  let t = tables.get(p);
  if (!t) {
    const n = TABLE_MAX / TABLE_STEP;
    t = new Float64Array(n + 1);
    const g = (p.yaw_deg * Math.PI) / 180;
    const xi0 = 0.5 * Math.cos(g) ** 2 * Math.sin(g) * p.ct;
    const f = (s: number) => Math.tan(xi0 / (1 + (0.09 * s) / p.diameter) ** 2);
    for (let i = 1; i <= n; i++) {
      const a = (i - 1) * TABLE_STEP, b = i * TABLE_STEP;
      t[i] = t[i - 1] + ((b - a) / 6) * (f(a) + 4 * f((a + b) / 2) + f(b));
    }
    tables.set(p, t);
  }
  const u = Math.min(Math.max(x, 0), TABLE_MAX) / TABLE_STEP;
  const i = Math.min(Math.floor(u), t.length - 2);
  return t[i] + (u - i) * (t[i + 1] - t[i]);
}

/** Writes the true (u, v, w) at rotor-frame point (x, y, z) into out; `wake` from wakeAt(x) may be passed in. */
export function trueVelocity(p: WakeTruthParams, x: number, y: number, z: number, out: Float64Array, wake?: WakeAtX): void {
  const zz = Math.max(z, 0.5);
  let inflow = p.hubSpeed * Math.pow(zz / p.hubHeight, p.shearExponent);
  // Veer: a clockwise turn (seen from above) of the wind by delta gives (u, v) = S (cos delta, -sin delta) in the
  // rotor frame of the hub-height direction (y points left).
  const veer = p.veer_degPer100m ? ((p.veer_degPer100m * (z - p.hubHeight)) / 100) * (Math.PI / 180) : 0;
  const cv = Math.cos(veer), sv = -Math.sin(veer);
  if (x < 0) {
    // Upstream induction: the on-axis vortex-sheet ratio 1 - a (1 - xi / sqrt(1 + xi^2)), xi = -x/R, a from
    // momentum theory (nacelle/induction.ts), tapered off the axis with a Gaussian of width R (a simulator choice,
    // not a published model).
    const R = p.diameter / 2, xi = -x / R;
    const a = (1 - Math.sqrt(1 - Math.min(1, p.ct * Math.cos((p.yaw_deg * Math.PI) / 180) ** 2))) / 2;
    const taper = Math.exp(-(y * y + (z - p.hubHeight) ** 2) / (2 * R * R));
    inflow *= 1 - a * (1 - xi / Math.sqrt(1 + xi * xi)) * taper;
  }
  if (x < 0.5 * p.diameter) {
    out[0] = inflow * cv; out[1] = inflow * sv; out[2] = 0;
    return;
  }
  const wk = wake ?? wakeAt(x, p);
  const dy = y - wk.yc, dz = z - wk.zc;
  const g = Math.exp(-(dy * dy) / (2 * wk.sigmaY * wk.sigmaY) - (dz * dz) / (2 * wk.sigmaZ * wk.sigmaZ));
  out[0] = inflow * cv * (1 - wk.amplitude * g);
  const r = Math.hypot(dy, dz);
  const s = Math.sqrt(wk.sigmaY * wk.sigmaZ);
  const vt = r > 0 ? p.swirl * Math.min(1, (3 * p.diameter) / x) * (r / s) * Math.exp(0.5 - (r * r) / (2 * s * s)) : 0;
  out[1] = (r > 0 ? (vt * dz) / r : 0) + inflow * sv;
  out[2] = r > 0 ? (-vt * dy) / r : 0;
}
