"""
Independent reference for the data-driven CNR limit (src/qc/cnrEvidence.ts, src/qc/cnrLimit.ts), written with numpy
from the method's description, not from our code: groups of (time block, azimuth bin, elevation bin, range bin);
each sample's deviation from the median of its stronger-CNR group members (at most the 101 strongest; the four
strongest of a group have none); the good-signal scatter 1.4826 * median |d| over the top quarter of CNR; per 1-dB CNR bin the share of
samples with |d / scatter| >= 4 (x >= 4 or x < -4); classes of at least 200 samples pooled from the top; junk
estimate and the cost-minimising edge, refined over the 1-dB bins of the class below it. Prints what test/qc-cnr-limit.test.ts quotes.

Data (reproduced in the test with Math.sin): for i = 0 .. 5999, u_k(i) = frac(sin(12.9898 i + 78.233 k) * 43758.5453),
time 1.7e9 + 0.1 i, azimuth 100.3 + (floor(i / 8) mod 10), elevation 2.3, range 65 + 30 (i mod 8),
CNR -5 - 3 (i mod 8) + 4 (u_1 - 0.5); v = 6 sin(azimuth) + 0.8 (u_2 - 0.5) * sqrt(12) * 0.5, replaced by
-15 + 30 u_3 where CNR < -20.
"""
import numpy as np

N = 6000
i = np.arange(N, dtype=float)
def u(k):
    x = np.sin(12.9898 * i + 78.233 * k) * 43758.5453
    return x - np.floor(x)
t = 1.7e9 + 0.1 * i
az = 100.3 + np.floor(i / 8) % 10
el = np.full(N, 2.3)
rng = 65 + 30 * (i % 8)
cnr = -5 - 3 * (i % 8) + 4 * (u(1) - 0.5)
v = 6 * np.sin(np.radians(az)) + 0.8 * (u(2) - 0.5) * np.sqrt(12) * 0.5
v = np.where(cnr < -20, -15 + 30 * u(3), v)

key = np.stack([np.floor(t / 600), np.floor(az), np.floor(el + 90), np.floor(rng / 30)], axis=1)
_, group = np.unique(key, axis=0, return_inverse=True)
group = group.ravel()

def deviations():
    d = np.full(N, np.nan)
    for g in np.unique(group):
        m = np.flatnonzero(group == g)
        if len(m) < 5:
            continue
        order = sorted(m, key=lambda j: (-cnr[j], j))
        for k in range(4, len(order)):
            d[order[k]] = v[order[k]] - np.median(v[order[:k][:101]])
    return d

def decide(d):
    ok = ~np.isnan(d)
    c, dd = cnr[ok], d[ok]
    q = np.sort(c)[min(len(c) - 1, int(np.floor(0.75 * len(c))))]
    sigma = max(0.1, 1.482602218505602 * np.median(np.abs(dd[c >= q])))
    x = dd / sigma
    bad = (x >= 4) | (x < -4)
    lo = max(-60, np.floor(c.min()))
    b = np.floor(c - lo).astype(int)
    nb = b.max() + 1
    n_b = np.bincount(b, minlength=nb)
    bad_b = np.bincount(b, weights=bad, minlength=nb)
    classes = []  # [lo, hi, n, bad], built from the top
    cur = None
    for k in range(nb - 1, -1, -1):
        if cur is None:
            cur = [lo + k, lo + k + 1, 0, 0]
        cur[0] = lo + k; cur[2] += n_b[k]; cur[3] += bad_b[k]
        if cur[2] >= 200:
            classes.append(cur); cur = None
    if cur is not None and cur[2] > 0:
        if classes:
            classes[-1][0] = cur[0]; classes[-1][2] += cur[2]; classes[-1][3] += cur[3]
        else:
            classes.append(cur)
    classes = classes[::-1]
    n = np.array([k[2] for k in classes], float); nbad = np.array([k[3] for k in classes], float)
    total = n.sum()
    rn = rb = 0
    for k in range(len(classes) - 1, -1, -1):
        if rn >= total / 4: break
        rn += n[k]; rb += nbad[k]
    p0 = rb / rn
    s = nbad / n
    low = np.maximum(0, s - 2 * np.sqrt(s * (1 - s) / n))
    qj = max(0.5, s.max())
    junk = n * np.clip((low - p0) / max(1e-9, qj - p0), 0, 1)
    costs = [10 * junk[k:].sum() + (n[:k] - junk[:k]).sum() for k in range(len(classes))]
    best = int(np.argmin(costs))
    if best == 0:
        limit = min(-35, classes[0][0])
    else:
        # refinement inside the class below the limit: the same cost over its 1-dB bin edges, each bin's junk from
        # its own share; ties keep the higher edge
        limit = classes[best][0]
        under = classes[best - 1]
        cost = best_cost = 0.0
        for k in range(int(round(under[1] - lo)) - 1, -1, -1):
            if lo + k <= under[0]:
                break
            if n_b[k] == 0:
                continue
            J = n_b[k] * min(1, max(0, (bad_b[k] / n_b[k] - p0) / max(1e-9, qj - p0)))
            cost += 10 * J - (n_b[k] - J)
            if cost < best_cost:
                best_cost = cost; limit = lo + k
    return sigma, classes, s, p0, best, limit, ok.sum()

d = deviations()
sigma, classes, share, p0, best, limit, nref = decide(d)
print(f"referenced {nref}, scatter {sigma:.6f}, reference share {p0:.6f}, limit {limit}")
for c, sh in zip(classes, share):
    print(f"  class [{c[0]:.0f}, {c[1]:.0f}) n {c[2]:.0f} inconsistent share {sh:.6f}")
