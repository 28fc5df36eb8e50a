"""Reference values for test/wake-stats.test.ts and test/wake-downstream.test.ts.
Student t quantiles (scipy.stats.t.ppf), a least-squares line with standard errors (scipy.stats.linregress) and
the mean / sd / 95 % CI of a small sample. Run: python3 test/reference/wake_stats.py
"""
import numpy as np
from scipy import stats

for nu in (1, 2, 3, 4, 7, 10, 30, 100):
    print(f"t975 nu={nu} {stats.t.ppf(0.975, nu):.12f}")

x = np.array([3.0, 5.0, 7.0, 10.0])
y = np.array([0.331, 0.352, 0.418, 0.471])
r = stats.linregress(x, y)
t = stats.t.ppf(0.975, len(x) - 2)
print(f"linregress slope {r.slope:.10f} se {r.stderr:.10f} ci [{r.slope - t * r.stderr:.10f}, {r.slope + t * r.stderr:.10f}]")
print(f"linregress intercept {r.intercept:.10f} se {r.intercept_stderr:.10f} ci [{r.intercept - t * r.intercept_stderr:.10f}, {r.intercept + t * r.intercept_stderr:.10f}]")

s = np.array([21.0, 25.5, 18.2, 23.9, 26.4])
m, sd = s.mean(), s.std(ddof=1)
ci = stats.t.ppf(0.975, len(s) - 1) * sd / np.sqrt(len(s))
print(f"sample mean {m:.10f} sd {sd:.10f} ci95 {ci:.10f}")
