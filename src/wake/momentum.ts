/**
 * Integrated streamwise momentum deficit of a cross plane: M = integral u (U_inf(z) - u) dA over the plane's cells
 * (midpoint rule, dA = dy dz), m^4/s^2; per unit density it is the wake's momentum flux deficit, which in the
 * far wake balances the rotor thrust T / rho = (1/2) Ct A U^2, i.e. M = (pi/8) Ct D^2 U^2 (the balance behind the
 * Gaussian model of Bastankhah & Porte-Agel 2014, Renewable Energy 70, 116-123, [formula from memory];
 * pressure and turbulent terms neglected). The ratio M / ((pi/8) Ct D^2 U^2) therefore tends to 1 for a complete,
 * well-resolved far wake.
 *
 * Masked cells (u NaN) inside the plane: with `model` (the fitted deficit d(y, z) of an ok Gaussian fit, and the
 * cells' positions) they are filled with u = u_inf (1 - d), so a hole in the wake's core does not remove its share
 * (one core cell of 30 m carries 3 to 4 % of the total); without a model they are left out. `filled` counts the
 * cells filled and `filledShare` is their part of M.
 */
export interface MomentumDeficit {
  m4s2: number;
  filled: number;
  filledShare: number;
}

export interface MomentumModel {
  deficitAt: (k: number) => number;
}

export function momentumDeficit(u: Float64Array, uInf: Float64Array, dy: number, dz: number, model?: MomentumModel): MomentumDeficit {
  let s = 0, f = 0, filled = 0;
  for (let k = 0; k < u.length; k++) {
    const U = uInf[k];
    if (!Number.isFinite(U)) continue;
    const v = u[k];
    if (Number.isFinite(v)) { s += v * (U - v); continue; }
    if (!model) continue;
    const d = model.deficitAt(k);
    if (!Number.isFinite(d)) continue;
    const m = U * (1 - d);
    f += m * (U - m); filled++;
  }
  const total = (s + f) * dy * dz;
  return { m4s2: total, filled, filledShare: filled > 0 && total !== 0 ? (f * dy * dz) / total : 0 };
}

/** (pi/8) Ct D^2 U^2, m^4/s^2. */
export function thrustMomentum(ct: number, D: number, U: number): number {
  return (Math.PI / 8) * ct * D * D * U * U;
}
