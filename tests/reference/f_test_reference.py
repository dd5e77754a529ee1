"""Reference values for tests/after_fit.rs::extra_sum_of_squares_f_test_matches_scipy.

Invented data (ours). Fits a straight line (reduced) and a quadratic (full)
by ordinary least squares with numpy, then the extra-sum-of-squares F
statistic and its upper-tail p-value with scipy.stats.f.sf. Run with
numpy/scipy installed: python3 tests/reference/f_test_reference.py
Output of the committed run (numpy/scipy in a venv, scipy 1.17.1) is quoted
in the test.
"""
import numpy as np
from scipy import stats

x = np.array([0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 3.5, 4.0, 4.5, 5.0, 5.5, 6.0])
y = np.array([1.92, 2.61, 3.05, 3.72, 4.01, 4.35, 4.88, 5.02, 5.31, 5.47, 5.80, 5.84])

def ssr(cols):
    X = np.column_stack(cols)
    beta, *_ = np.linalg.lstsq(X, y, rcond=None)
    r = y - X @ beta
    return float(r @ r)

one = np.ones_like(x)
ssr_r, df_r = ssr([one, x]), len(x) - 2
ssr_f, df_f = ssr([one, x, x * x]), len(x) - 3
F = ((ssr_r - ssr_f) / (df_r - df_f)) / (ssr_f / df_f)
p = stats.f.sf(F, df_r - df_f, df_f)
print(f"ssr_reduced = {ssr_r:.17g}")
print(f"ssr_full = {ssr_f:.17g}")
print(f"F = {F:.17g}")
print(f"p = {p:.17g}")
# A second tail value with several numerator degrees of freedom.
print(f"sf(2.7, 3, 11) = {stats.f.sf(2.7, 3, 11):.17g}")
