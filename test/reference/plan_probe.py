"""Reference values for test/plan-probe.test.ts (numpy/scipy).

CW Lorentzian half-width Gamma = lambda R^2 / (pi a^2) (Sonnenschein & Horrigan 1971, from memory);
pulsed weighting phi(s) = [erf((s + dp/2)/r_p) - erf((s - dp/2)/r_p)] / (2 dp), r_p = c tau / (4 sqrt(ln 2))
(Banakh & Smalikho 1997, from memory). Run: python3 test/reference/plan_probe.py
"""
import numpy as np
from scipy.special import erf
from scipy.integrate import quad
from scipy.optimize import brentq

lam, a = 1.565e-6, 0.028
for R in (50.0, 100.0, 200.0):
    print(f"cw Gamma({R:g}) = {lam * R**2 / (np.pi * a**2):.6f}")
print(f"cw z_L = pi a^2/lambda = {np.pi * a**2 / lam:.4f}")

c = 299792458.0
tau, dp = 200e-9, 30.0
rp = c * tau / (4 * np.sqrt(np.log(2)))
phi = lambda s: (erf((s + dp / 2) / rp) - erf((s - dp / 2) / rp)) / (2 * dp)
print(f"r_p = {rp:.6f}")
for s in (0.0, 15.0, 30.0):
    print(f"phi({s:g}) = {phi(s):.9g}")
half = phi(0) / 2
s_half = brentq(lambda s: phi(s) - half, 0, 200)
print(f"FWHM = {2 * s_half:.6f}")
print(f"integral phi = {quad(phi, -np.inf, np.inf)[0]:.12f}")
# a second pulse/gate pair
tau2, dp2 = 100e-9, 18.0
rp2 = c * tau2 / (4 * np.sqrt(np.log(2)))
phi2 = lambda s: (erf((s + dp2 / 2) / rp2) - erf((s - dp2 / 2) / rp2)) / (2 * dp2)
s2 = brentq(lambda s: phi2(s) - phi2(0) / 2, 0, 200)
print(f"tau 100 ns, dp 18 m: FWHM = {2 * s2:.6f}")
for x in (-2.5, -0.3, 0.0, 0.1, 0.8, 1.7, 2.9, 3.0, 3.4, 4.5, 6.0):
    print(f"erf({x:g}) = {erf(x):.15g}")
