"""Reference values for test/plan-trust.test.ts (numpy).

Ground-level layout of REFERENCES.md section 2: instruments (0,0,0), (400,0,0), (200,350,0) m, target (200,150,h).
DOP_k = sqrt(diag((A^T A)^-1)), rows of A the unit vectors from each instrument to the target (Milbert 2008).
Also the same in a rotor frame for wind from 240 deg: downstream d = (-sin D, -cos D, 0), left l = (-d_N, d_E, 0),
covariance C_rot = R C R^T with R's rows d, l, up. Run: python3 test/reference/plan_amplification.py
"""
import numpy as np

ins = np.array([[0, 0, 0], [400, 0, 0], [200, 350, 0]], float)
def amp(h, R=np.eye(3)):
    T = np.array([200, 150, h], float)
    A = T - ins
    A /= np.linalg.norm(A, axis=1)[:, None]
    C = R @ np.linalg.inv(A.T @ A) @ R.T
    return np.sqrt(np.diag(C)), np.linalg.cond(A)

for h in (10, 50, 100, 150):
    d, c = amp(h)
    print(f"site h={h}: dop = {d[0]:.6f} {d[1]:.6f} {d[2]:.6f}  cond = {c:.6f}")

D = np.radians(240.0)
dE, dN = -np.sin(D), -np.cos(D)
R = np.array([[dE, dN, 0], [-dN, dE, 0], [0, 0, 1]])
for h in (50, 100):
    d, c = amp(h, R)
    print(f"rotor (wind 240) h={h}: dop = {d[0]:.6f} {d[1]:.6f} {d[2]:.6f}  cond = {c:.6f}")
T = np.array([200, 150, 0.0])
print(f"rotor coordinates of (200,150): x = {T[:2] @ [dE, dN]:.9f}, y = {T[:2] @ [-dN, dE]:.9f}")
