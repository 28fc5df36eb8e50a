/**
 * Integrated streamwise momentum deficit of a cross plane: M = integral u (U_inf(z) - u) dA over the valid cells
 * (midpoint rule, dA = dy dz), m^4/s^2; per unit density it is the wake's momentum flux deficit, which in the
 * far wake balances the rotor thrust T / rho = (1/2) Ct A U^2, i.e. M = (pi/8) Ct D^2 U^2 (the balance behind the
 * Gaussian model of Bastankhah & Porte-Agel 2014, Renewable Energy 70, 116-123, [formula from memory];
 * pressure and turbulent terms neglected). The ratio M / ((pi/8) Ct D^2 U^2) therefore tends to 1 for a complete,
 * well-resolved far wake; masked cells (NaN) are left out, so coverage matters.
 */
export function momentumDeficit(u: Float64Array, uInf: Float64Array, dy: number, dz: number): number {
  let s = 0;
  for (let k = 0; k < u.length; k++) {
    const v = u[k], U = uInf[k];
    if (Number.isFinite(v) && Number.isFinite(U)) s += v * (U - v);
  }
  return s * dy * dz;
}

/** (pi/8) Ct D^2 U^2, m^4/s^2. */
export function thrustMomentum(ct: number, D: number, U: number): number {
  return (Math.PI / 8) * ct * D * D * U * U;
}
