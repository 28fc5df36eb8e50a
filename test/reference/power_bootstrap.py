"""Reference values for test/power-gain.test.ts: the two-sample bootstrap of an energy-ratio gain and of a
distribution-weighted combined gain, computed with scipy.stats.bootstrap (percentile intervals, paired=False: each
group resampled on its own), on a fixed data set. Run: python3 test/reference/power_bootstrap.py
"""
import numpy as np
from scipy import stats

# Bin A: window-mean powers (kW) of the downstream turbine and the reference, baseline and steered windows.
a_base_t = np.array([410.0, 385.5, 452.1, 398.7, 377.2, 441.9, 420.3, 395.0, 388.8, 430.6, 402.4, 415.7])
a_base_r = np.array([980.2, 940.8, 1050.3, 990.1, 925.4, 1032.7, 1001.5, 960.0, 950.6, 1020.9, 975.3, 995.8])
a_steer_t = np.array([505.3, 470.2, 530.8, 488.1, 512.6, 476.9, 520.4, 495.5, 482.0, 509.9])
a_steer_r = np.array([905.1, 860.7, 950.2, 880.4, 930.8, 870.3, 945.6, 899.9, 875.2, 920.5])
# Bin B: fewer windows.
b_base_t = np.array([610.4, 655.2, 590.9, 640.3, 622.8, 601.7])
b_base_r = np.array([1350.2, 1420.7, 1310.5, 1400.1, 1375.9, 1330.4])
b_steer_t = np.array([700.6, 735.1, 690.2, 720.8, 710.3])
b_steer_r = np.array([1290.4, 1335.8, 1270.1, 1320.6, 1305.2])

def ratio(t, r, i):
    return t[i].sum() / r[i].sum()

def gain_a(ib, is_):
    return ratio(a_steer_t, a_steer_r, is_) / ratio(a_base_t, a_base_r, ib) - 1

na, nb = len(a_base_t) + len(a_steer_t), len(b_base_t) + len(b_steer_t)
fa, fb = na / (na + nb), nb / (na + nb)

def combined(iab, ias, ibb, ibs):
    rab, ras = ratio(a_base_t, a_base_r, iab), ratio(a_steer_t, a_steer_r, ias)
    rbb, rbs = ratio(b_base_t, b_base_r, ibb), ratio(b_steer_t, b_steer_r, ibs)
    return (fa * (ras - rab) + fb * (rbs - rbb)) / (fa * rab + fb * rbb)

idx = lambda x: np.arange(len(x))
print(f"gain A estimate {gain_a(idx(a_base_t), idx(a_steer_t)):.10f}")
print(f"combined estimate {combined(idx(a_base_t), idx(a_steer_t), idx(b_base_t), idx(b_steer_t)):.10f}")
for seed in (1, 2):
    rng = np.random.default_rng(seed)
    r = stats.bootstrap((idx(a_base_t), idx(a_steer_t)), gain_a, paired=False, vectorized=False, n_resamples=20000,
                        confidence_level=0.95, method='percentile', random_state=rng)
    print(f"seed {seed} gain A percentile95 [{r.confidence_interval.low:.6f}, {r.confidence_interval.high:.6f}] se {r.standard_error:.6f}")
    rng = np.random.default_rng(seed)
    r = stats.bootstrap((idx(a_base_t), idx(a_steer_t), idx(b_base_t), idx(b_steer_t)), combined, paired=False, vectorized=False,
                        n_resamples=20000, confidence_level=0.95, method='percentile', random_state=rng)
    print(f"seed {seed} combined percentile95 [{r.confidence_interval.low:.6f}, {r.confidence_interval.high:.6f}] se {r.standard_error:.6f}")

# One-sample check of the bootstrap standard error of a mean: its ideal value (B -> infinity) is the plug-in
# sigma_hat / sqrt(n) with sigma_hat^2 = sum (x - mean)^2 / n (Efron & Tibshirani 1993, eq. 6.9 [from memory]).
x = a_base_t
print(f"plug-in se of the mean {np.sqrt(((x - x.mean()) ** 2).sum() / len(x)) / np.sqrt(len(x)):.10f}")
