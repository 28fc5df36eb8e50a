"""Two-sided Gaussian tail probabilities for the robust-filter tests. Run: python3 test/reference/robust_reference.py
(scipy). Output pasted into test/retrieval-wls.test.ts.
"""
from scipy.stats import norm

for k in (2.5, 3.5):
    print(f"P(|Z| > {k}) = {2 * norm.sf(k):.6e}")
print(f"1/Phi^-1(3/4) = {1 / norm.ppf(0.75):.15f}")
