"""Reference values for the weighted least-squares retrieval and error amplification (REFERENCES.md section 2).

Run: python3 test/reference/wls_reference.py  (numpy). Output is pasted into test/retrieval-wls.test.ts and
test/geometry-amplification.test.ts beside the values it gives.
"""
import numpy as np

np.set_printoptions(precision=10)


def unit(az, el):
    a, e = np.radians(az), np.radians(el)
    return np.array([np.cos(e) * np.sin(a), np.cos(e) * np.cos(a), np.sin(e)])


# Weighted example: beams (az, el), true U, noise added to v_r, sigma of each v_r.
A = np.array([unit(0, 15), unit(120, 15), unit(240, 15), unit(30, 60)])
U = np.array([6.0, -2.0, 0.3])
vr = A @ U + np.array([0.05, -0.03, 0.02, -0.04])
sigma = np.array([0.1, 0.1, 0.2, 0.1])
W = np.diag(1 / sigma**2)
C = np.linalg.inv(A.T @ W @ A)
Uhat = C @ A.T @ W @ vr
print("weighted example")
print("  A rows =", A.tolist())
print("  v_r =", vr.tolist())
print("  U_hat =", Uhat.tolist())
print("  diag Cov =", np.diag(C).tolist())
print("  sqrt diag Cov =", np.sqrt(np.diag(C)).tolist())
print("  unweighted DOP =", np.sqrt(np.diag(np.linalg.inv(A.T @ A))).tolist())

# Two horizontal beams symmetric about the x axis, crossing angle gamma.
print("two horizontal beams: gamma, trace((A^T A)^-1), along bisector, across bisector")
for g in (90, 60, 30, 15):
    h = np.radians(g / 2)
    A2 = np.array([[np.cos(h), np.sin(h)], [np.cos(h), -np.sin(h)]])
    Ci = np.linalg.inv(A2.T @ A2)
    print(f"  {g}: {np.trace(Ci):.6f} {np.sqrt(Ci[0, 0]):.6f} {np.sqrt(Ci[1, 1]):.6f}")

# Ground-level layout: instruments on the ground, target (200, 150, h).
inst = np.array([[0, 0, 0], [400, 0, 0], [200, 350, 0]], float)
print("ground layout: h, DOP u, DOP v, DOP w, cond(A)")
for h in (10, 50, 100, 150, 1, 2, 5):
    t = np.array([200, 150, h], float)
    d = t - inst
    A3 = d / np.linalg.norm(d, axis=1)[:, None]
    dop = np.sqrt(np.diag(np.linalg.inv(A3.T @ A3)))
    print(f"  {h}: {dop[0]:.6f} {dop[1]:.6f} {dop[2]:.6f} {np.linalg.cond(A3):.6f}")
