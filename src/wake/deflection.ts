/**
 * Lateral wake deflection of a yawed rotor, in metres, positive to +y (left looking downstream) for a positive yaw
 * offset gamma (see yawOffset.ts for the sign derivation); both models are odd in gamma.
 *
 * Jimenez, Crespo & Migoya (2010), Wind Energy 13(6), 559-572 [formula from memory]: the wake skew angle
 *   xi(x) = xi0 / (1 + beta x/D)^2,  xi0 = 0.5 cos^2(gamma) sin(gamma) Ct,
 * and the deflection delta(x) = integral_0^x tan xi(x') dx' (composite Simpson rule, 400 intervals per D).
 *
 * Bastankhah & Porte-Agel (2016), J. Fluid Mech. 806, 506-541 [from memory; equation numbers not re-checked]:
 *   theta_c0 = (0.3 gamma / cos gamma)(1 - sqrt(1 - Ct cos gamma)),
 *   x0/D = cos gamma (1 + sqrt(1 - Ct)) / (sqrt2 (alpha* I + beta* (1 - sqrt(1 - Ct)))), alpha* = 2.32, beta* = 0.154,
 *   sigma_y/D = k_y (x - x0)/D + cos gamma / sqrt8,  sigma_z/D = k_z (x - x0)/D + 1/sqrt8,
 *   delta/D = theta_c0 x0/D + (theta_c0 / 14.7) sqrt(cos gamma / (k_y k_z Ct)) (2.9 + 1.3 sqrt(1 - Ct) - Ct)
 *             ln[(1.6 + sqrt Ct)(1.6 P - sqrt Ct) / ((1.6 - sqrt Ct)(1.6 P + sqrt Ct))],
 *   P = sqrt(8 sigma_y sigma_z / (D^2 cos gamma)), for x >= x0; delta = theta_c0 x before x0.
 */
const RAD = Math.PI / 180;

export function jimenezDeflection(x_m: number, D: number, gamma_deg: number, ct: number, beta = 0.1): number {
  const g = gamma_deg * RAD;
  const xi0 = 0.5 * Math.cos(g) ** 2 * Math.sin(g) * ct;
  if (!(x_m > 0) || xi0 === 0) return 0;
  const n = Math.max(2, 2 * Math.ceil((200 * x_m) / D));
  const h = x_m / n;
  const f = (x: number) => Math.tan(xi0 / (1 + (beta * x) / D) ** 2);
  let s = f(0) + f(x_m);
  for (let i = 1; i < n; i++) s += (i % 2 ? 4 : 2) * f(i * h);
  return (s * h) / 3;
}

export function bastankhahDeflection(x_m: number, D: number, gamma_deg: number, ct: number, ti: number, ky: number, kz = ky): number {
  const sign = Math.sign(gamma_deg);
  const g = Math.abs(gamma_deg) * RAD;
  if (g === 0 || !(x_m > 0)) return 0;
  const cg = Math.cos(g), sq = Math.sqrt(1 - ct), sct = Math.sqrt(ct);
  const theta = ((0.3 * g) / cg) * (1 - Math.sqrt(1 - ct * cg));
  const x0 = (D * cg * (1 + sq)) / (Math.SQRT2 * (2.32 * ti + 0.154 * (1 - sq)));
  if (x_m < x0) return sign * theta * x_m;
  const sy = ky * (x_m - x0) / D + cg / Math.sqrt(8);
  const sz = kz * (x_m - x0) / D + 1 / Math.sqrt(8);
  const P = Math.sqrt((8 * sy * sz) / cg);
  const lnArg = ((1.6 + sct) * (1.6 * P - sct)) / ((1.6 - sct) * (1.6 * P + sct));
  const d_D = (theta * x0) / D + (theta / 14.7) * Math.sqrt(cg / (ky * kz * ct)) * (2.9 + 1.3 * sq - ct) * Math.log(lnArg);
  return sign * d_D * D;
}
