"""Reference for the top-hat decay-constant fit (wakeModels.fitTopHatK): scipy.optimize.curve_fit of
d(x) = a / (1 + 2 k x)^2, a = 1 - sqrt(1 - Ct), to centreline deficits at x/D = 3, 5, 7, 10. The deficits are the
model's at k = 0.05, Ct = 0.76, plus fixed perturbations (+0.004, -0.006, +0.003, -0.002). curve_fit scales the
covariance by SSR / (n - 1) (absolute_sigma=False), the standard error used by the fit."""
import numpy as np
from scipy.optimize import curve_fit

ct = 0.76
a = 1 - np.sqrt(1 - ct)
x = np.array([3.0, 5.0, 7.0, 10.0])
d = a / (1 + 2 * 0.05 * x) ** 2 + np.array([0.004, -0.006, 0.003, -0.002])
popt, pcov = curve_fit(lambda xx, k: a / (1 + 2 * k * xx) ** 2, x, d, p0=[0.03])
print("deficits", " ".join(f"{v:.9f}" for v in d))
print(f"k = {popt[0]:.9f}, se = {np.sqrt(pcov[0, 0]):.9f}")
# One plane: k solves the model exactly.
print(f"one plane x = 5, d = 0.2: k = {(np.sqrt(a / 0.2) - 1) / (2 * 5):.9f}")
