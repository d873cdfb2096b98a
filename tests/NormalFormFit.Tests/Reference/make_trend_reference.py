"""Reference values for the onset trend fits (tests/NormalFormFit.Tests/Onset/TrendFitTests.cs).

Run with Debian's Python and SciPy:  /usr/bin/python3 make_trend_reference.py
Produced with SciPy 1.10.1, NumPy 1.24.2 (Debian 12 python3-scipy, python3-numpy).

Independent of the C# code: the weighted straight line comes from numpy.linalg.lstsq on the rows divided by
their standard errors, its covariance is inv(X'WX) scaled by the reduced chi-square (the convention of
scipy.optimize.curve_fit with absolute_sigma=False, checked below against curve_fit to 1e-6, curve_fit being
iterative), the quantile from scipy.stats.t.ppf, and
the interval from Fieller's theorem (Fieller 1954) written out as the roots of the quadratic
(b1^2 - q^2 v11) m^2 + 2 (b0 b1 - q^2 v01) m + (b0^2 - q^2 v00) = 0 in the parameter m.
"""
import json
import numpy as np
import scipy
from scipy.optimize import curve_fit
from scipy.stats import t as student_t
from scipy.stats import norm

mu = np.array([1.01, 1.02, 1.04, 1.07, 1.10, 1.15])
y = np.array([0.0102, 0.0197, 0.0405, 0.0698, 0.1003, 0.1496])
se = np.array([0.0004, 0.0005, 0.0006, 0.0008, 0.0009, 0.0012])

def line(m, b0, b1):
    return b0 + b1 * m

X = np.column_stack([np.ones_like(mu), mu]) / se[:, None]
p, *_ = np.linalg.lstsq(X, y / se, rcond=None)
r = y / se - X @ p
cov = np.linalg.inv(X.T @ X) * (r @ r) / (len(mu) - 2)
p_cf, cov_cf = curve_fit(line, mu, y, sigma=se, absolute_sigma=False)
assert np.allclose(p, p_cf, rtol=1e-6) and np.allclose(cov, cov_cf, rtol=1e-4)
b0, b1 = p
v00, v01, v11 = cov[0, 0], cov[0, 1], cov[1, 1]
dof = len(mu) - 2
q = student_t.ppf(0.975, dof)
A = b1 * b1 - q * q * v11
B = 2 * (b0 * b1 - q * q * v01)
C = b0 * b0 - q * q * v00
disc = B * B - 4 * A * C
lo, hi = sorted([(-B - np.sqrt(disc)) / (2 * A), (-B + np.sqrt(disc)) / (2 * A)])
root = -b0 / b1

# The same runs with errors three times larger, so that the runs scatter less than their errors say (chi2/dof < 1):
# the bottleneck route keeps the stated errors then (no scaling down), i.e. curve_fit with absolute_sigma=True, and
# with the error scale not estimated the quantile is the normal one, scipy.stats.norm.ppf(0.975).
se3 = 3 * se
X3 = np.column_stack([np.ones_like(mu), mu]) / se3[:, None]
p3, *_ = np.linalg.lstsq(X3, y / se3, rcond=None)
r3 = y / se3 - X3 @ p3
red3 = (r3 @ r3) / dof
assert red3 < 1
cov3 = np.linalg.inv(X3.T @ X3)
p3_cf, cov3_cf = curve_fit(line, mu, y, sigma=se3, absolute_sigma=True)
assert np.allclose(p3, p3_cf, rtol=1e-6) and np.allclose(cov3, cov3_cf, rtol=1e-4)
z = norm.ppf(0.975)
A3 = p3[1] ** 2 - z * z * cov3[1, 1]
B3 = 2 * (p3[0] * p3[1] - z * z * cov3[0, 1])
C3 = p3[0] ** 2 - z * z * cov3[0, 0]
d3 = B3 * B3 - 4 * A3 * C3
lo3, hi3 = sorted([(-B3 - np.sqrt(d3)) / (2 * A3), (-B3 + np.sqrt(d3)) / (2 * A3)])

out = {
    "generator": "make_trend_reference.py",
    "scipy": scipy.__version__,
    "numpy": np.__version__,
    "mu": mu.tolist(), "y": y.tolist(), "se": se.tolist(),
    "intercept": b0, "slope": b1,
    "root": root, "ci95_low": lo, "ci95_high": hi,
    "t975": q,
    "stated_errors": {"se": se3.tolist(), "reduced_chi2": red3, "root": -p3[0] / p3[1], "z975": z, "ci95_low": lo3, "ci95_high": hi3},
}
with open("trend_reference.json", "w") as f:
    json.dump(out, f, indent=2)
print(json.dumps(out, indent=2))
