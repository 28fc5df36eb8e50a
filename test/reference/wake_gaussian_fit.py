"""Reference values for test/wake-gaussian.test.ts: scipy.optimize.curve_fit on the deterministic field of
REFERENCES.md section 7 (5 parameters, no offset) and, additionally, the same field plus a constant background
0.03 fitted with 6 parameters (offset). Covariance scaled by SSR/(N - p) (absolute_sigma=False).
Run: python3 test/reference/wake_gaussian_fit.py
"""
import numpy as np
from scipy.optimize import curve_fit

i = np.arange(41)
j = np.arange(31)
I, J = np.meshgrid(i, j, indexing="ij")
Y = -150 + 7.5 * I
Z = 10 + 5 * J
noise = 0.02 * np.sin(12.9898 * I + 78.233 * J)


def g5(X, A, y0, z0, sy, sz):
    y, z = X
    return A * np.exp(-((y - y0) ** 2) / (2 * sy**2) - (z - z0) ** 2 / (2 * sz**2))


def g6(X, A, y0, z0, sy, sz, c):
    return g5(X, A, y0, z0, sy, sz) + c


X = (Y.ravel(), Z.ravel())
truth = (0.4, 12, 95, 35, 28)
f = g5(X, *truth) + noise.ravel()
p, cov = curve_fit(g5, X, f, p0=(0.3, 0, 80, 30, 30))
ssr = float(np.sum((f - g5(X, *p)) ** 2))
print("5-parameter fit")
print("params ", " ".join(f"{v:.8f}" for v in p))
print("stderr ", " ".join(f"{v:.8f}" for v in np.sqrt(np.diag(cov))))
print(f"ssr {ssr:.8f}")

f6 = f + 0.03
p6, cov6 = curve_fit(g6, X, f6, p0=(0.3, 0, 80, 30, 30, 0))
ssr6 = float(np.sum((f6 - g6(X, *p6)) ** 2))
print("6-parameter fit (background 0.03 added)")
print("params ", " ".join(f"{v:.8f}" for v in p6))
print("stderr ", " ".join(f"{v:.8f}" for v in np.sqrt(np.diag(cov6))))
print(f"ssr {ssr6:.8f}")

p0, cov0 = curve_fit(g5, X, g5(X, *truth), p0=(0.3, 0, 80, 30, 30))
print("noise-free fit params ", " ".join(f"{v:.10f}" for v in p0))

# curve_fit estimates the Jacobian by forward differences (MINPACK lmdif), so its standard errors carry ~1e-6
# relative error. The same covariance with the analytic Jacobian at curve_fit's solution:
def jac5(X, A, y0, z0, sy, sz):
    y, z = X
    e = np.exp(-((y - y0) ** 2) / (2 * sy**2) - (z - z0) ** 2 / (2 * sz**2))
    return np.stack([e, A * e * (y - y0) / sy**2, A * e * (z - z0) / sz**2, A * e * (y - y0) ** 2 / sy**3, A * e * (z - z0) ** 2 / sz**3], axis=1)


Ja = jac5(X, *p)
cova = np.linalg.inv(Ja.T @ Ja) * ssr / (len(f) - 5)
print("5-parameter stderr, analytic Jacobian ", " ".join(f"{v:.10f}" for v in np.sqrt(np.diag(cova))))
Ja6 = np.hstack([jac5(X, *p6[:5]), np.ones((len(f6), 1))])
cova6 = np.linalg.inv(Ja6.T @ Ja6) * ssr6 / (len(f6) - 6)
print("6-parameter stderr, analytic Jacobian ", " ".join(f"{v:.10f}" for v in np.sqrt(np.diag(cova6))))

# Weighted fit: sigma_ij = 0.01 (1 + 3 ((i + 2 j) mod 3)), absolute_sigma=False (covariance scaled by chi2/(N - 5)).
S = 0.01 * (1 + 3 * ((I + 2 * J) % 3))
pw, covw = curve_fit(g5, X, f, p0=(0.3, 0, 80, 30, 30), sigma=S.ravel())
chi2 = float(np.sum(((f - g5(X, *pw)) / S.ravel()) ** 2))
print("weighted 5-parameter fit")
print("params ", " ".join(f"{v:.8f}" for v in pw))
print("stderr ", " ".join(f"{v:.8f}" for v in np.sqrt(np.diag(covw))))
Jw = jac5(X, *pw) / S.ravel()[:, None]
covwa = np.linalg.inv(Jw.T @ Jw) * chi2 / (len(f) - 5)
print("stderr, analytic Jacobian ", " ".join(f"{v:.10f}" for v in np.sqrt(np.diag(covwa))))
print(f"chi2 {chi2:.8f}")
