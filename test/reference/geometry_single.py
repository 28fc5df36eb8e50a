"""Reference values for the single-instrument geometries (test/geometry-*.test.ts), numpy/scipy only.

1. VAD: the Browning & Wexler (1968) harmonic fit v_r = a0 + a1 cos(th) + b1 sin(th) by least squares on a cone.
2. Noisy VAD at elevation 45 deg, 8 azimuths, equal sigma: weighted least squares for (u, v, w) and its covariance.
3. DBS: four beams at zenith 28 deg plus a vertical beam; the classic formulas.
4. Nacelle two-beam pair (U = 9, gamma = 6, alpha = 15) solved as a 2x2 linear system.
5. Vortex-sheet induction ratio on the axis, a = 0.25.
6. 1D Gaussian fit with scipy.optimize.curve_fit on a deterministic noisy profile.
"""
import numpy as np
from scipy.optimize import curve_fit

np.set_printoptions(precision=6, suppress=False)
d = np.deg2rad

# 1. VAD check values (REFERENCES.md section 8).
u, v, w, phi = 5.0, -3.0, 0.2, 60.0
th = np.arange(0, 360, 30.0)
n = np.stack([np.cos(d(phi)) * np.sin(d(th)), np.cos(d(phi)) * np.cos(d(th)), np.full(th.shape, np.sin(d(phi)))], 1)
vr = n @ np.array([u, v, w])
H = np.stack([np.ones_like(th), np.cos(d(th)), np.sin(d(th))], 1)
a0, a1, b1 = np.linalg.lstsq(H, vr, rcond=None)[0]
print("vad a0 a1 b1", a0, a1, b1)
print("vad u v w", b1 / np.cos(d(phi)), a1 / np.cos(d(phi)), a0 / np.sin(d(phi)))
S = np.hypot(u, v)
print("vad speed dir", S, np.rad2deg(np.arctan2(-u, -v)) % 360)

# 2. Noisy VAD, elevation 45, azimuths 0, 45, ..., 315; sector means with noise e_k = 0.05 sin(1.7 k + 0.3).
phi = 45.0
th = np.arange(0, 360, 45.0)
n = np.stack([np.cos(d(phi)) * np.sin(d(th)), np.cos(d(phi)) * np.cos(d(th)), np.full(th.shape, np.sin(d(phi)))], 1)
U = np.array([-6.0, 4.0, 0.3])
e = 0.05 * np.sin(1.7 * np.arange(8) + 0.3)
y = n @ U + e
sigma_mean = 0.2 / np.sqrt(50)  # per-sector sd 0.2 m/s, 50 samples each
Wt = np.eye(8) / sigma_mean**2
N = n.T @ Wt @ n
Uh = np.linalg.solve(N, n.T @ Wt @ y)
C = np.linalg.inv(N)
r = y - n @ Uh
chi2 = r @ Wt @ r
print("noisy U", Uh)
print("noisy sd (scatter only)", np.sqrt(np.diag(C)))
print("noisy chi2/dof", chi2 / 5)
scale = max(1.0, chi2 / 5)
Cs = C * scale
Sh = np.hypot(Uh[0], Uh[1])
g = np.array([Uh[0] / Sh, Uh[1] / Sh])
print("noisy speed sd", Sh, np.sqrt(g @ Cs[:2, :2] @ g))
gd = np.array([Uh[1], -Uh[0]]) / Sh**2  # d(atan2(-u,-v))/d(u, v)
print("noisy dir sd_deg", np.rad2deg(np.arctan2(-Uh[0], -Uh[1])) % 360, np.rad2deg(np.sqrt(gd @ Cs[:2, :2] @ gd)))
print("noisy rmse r2", np.sqrt(np.mean(r**2)), 1 - np.sum(r**2) / np.sum((y - y.mean())**2))

# 3. DBS (REFERENCES.md section 8), same wind as 1, zenith 28.
z = 28.0
el = 90 - z
beams = {"N": 0, "E": 90, "S": 180, "W": 270}
U = np.array([5.0, -3.0, 0.2])
vv = {k: np.array([np.cos(d(el)) * np.sin(d(a)), np.cos(d(el)) * np.cos(d(a)), np.sin(d(el))]) @ U for k, a in beams.items()}
print("dbs N E S W up", vv["N"], vv["E"], vv["S"], vv["W"], U[2])
print("dbs classic u v", (vv["E"] - vv["W"]) / (2 * np.sin(d(z))), (vv["N"] - vv["S"]) / (2 * np.sin(d(z))))

# 4. Nacelle pair: nacelle psi = 270 (facing west), gamma = psi - D = 6 -> wind from 264; beams at psi -/+ 15.
Uw, gamma, alpha = 9.0, 6.0, 15.0
psi = 270.0
D = psi - gamma
wind = -Uw * np.array([np.sin(d(D)), np.cos(d(D))])
A = np.array([[np.sin(d(psi - alpha)), np.cos(d(psi - alpha))], [np.sin(d(psi + alpha)), np.cos(d(psi + alpha))]])
v12 = A @ wind
print("nacelle v1 v2", v12)
sol = np.linalg.solve(A, v12)
print("nacelle speed dir gamma", np.hypot(*sol), np.rad2deg(np.arctan2(-sol[0], -sol[1])) % 360, psi - np.rad2deg(np.arctan2(-sol[0], -sol[1])) % 360)
print("nacelle tan formula", np.rad2deg(np.arctan((v12[0] - v12[1]) / ((v12[0] + v12[1]) * np.tan(d(alpha))))))

# 5. Vortex-sheet induction, a = 0.25.
a = 0.25
for xi in (1.0, 2.5, 5.0):
    print("induction xi", xi, 1 - a * (1 - xi / np.sqrt(1 + xi**2)))
print("a from Ct=0.75", (1 - np.sqrt(1 - 0.75)) / 2)

# 6. 1D Gaussian fit.
c = np.arange(-150, 151, 15.0)
k = np.arange(c.size)
dtrue = 0.45 * np.exp(-(c - 12.0)**2 / (2 * 38.0**2))
noise = 0.02 * np.sin(12.9898 * k + 4.1414)
f = lambda x, A, c0, s: A * np.exp(-(x - c0)**2 / (2 * s**2))
p, cov = curve_fit(f, c, dtrue + noise, p0=(0.4, 0.0, 30.0))
print("gauss1d params", p)
print("gauss1d stderr", np.sqrt(np.diag(cov)))
