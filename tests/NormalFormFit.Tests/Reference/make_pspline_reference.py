#!/usr/bin/python3
"""Reference values for PenalizedSpline (tests/NormalFormFit.Tests/Smoothing/PenalizedSplineReferenceTests.cs).

Written independently of the C# code: a dense NumPy solve of the penalised normal equations of Eilers & Marx (1996),
(BᵀB + w·DᵀD) c = Bᵀy, with B the cubic B-spline design matrix from SciPy (BSpline.design_matrix) on equally spaced
knots and D the second-difference matrix; w = λ/Δ³ for λ in the caller's units (Δ the knot spacing).
Trace of the influence matrix by a dense solve; GCV score (Σr²/n)/(1 − tr/n)²; GCV λ by a bounded scalar search
in log λ (scipy.optimize.minimize_scalar, xatol 1e-6).

Run with Debian's interpreter: /usr/bin/python3 make_pspline_reference.py  (NumPy 1.24.2, SciPy 1.10.1).
Writes pspline_data.csv and pspline_reference.json beside this script.
"""
import json
import os

import numpy as np
import scipy
from scipy.interpolate import BSpline
from scipy.optimize import minimize_scalar

here = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(20261202)
n = 400
# Non-uniform sampling: spacings uniform in [0.5, 1.5], scaled to [0, 10]; y = sin t + 0.3 t + N(0, 0.1²).
t = np.concatenate([[0.0], np.cumsum(rng.uniform(0.5, 1.5, n - 1))])
t *= 10.0 / t[-1]
y = np.sin(t) + 0.3 * t + rng.normal(0.0, 0.1, n)
np.savetxt(os.path.join(here, "pspline_data.csv"), np.column_stack([t, y]), delimiter=",", header="t,y", comments="", fmt="%.17g")

intervals = 50  # n / 8 samples per knot interval
delta = (t[-1] - t[0]) / intervals
knots = t[0] + delta * np.arange(-3, intervals + 4)
m = intervals + 3
B = BSpline.design_matrix(t, knots, 3).toarray()
D = np.diff(np.eye(m), 2, axis=0)
G = B.T @ B
P = D.T @ D


def fit(lam):
    A = G + (lam / delta**3) * P
    c = np.linalg.solve(A, B.T @ y)
    f = B @ c
    trace = np.trace(np.linalg.solve(A, G))
    rss = float(np.sum((y - f) ** 2))
    score = rss / n / (1.0 - trace / n) ** 2
    spline = BSpline(knots, c, 3)
    return c, f, spline.derivative()(t), trace, rss, score


cases = []
for lam in [1e-4, 1e-2, 1.0]:
    c, f, d, trace, rss, score = fit(lam)
    cases.append({"lambda": lam, "trace": trace, "rss": rss, "gcv": score,
                  "values": f[::40].tolist(), "derivatives": d[::40].tolist()})

best = minimize_scalar(lambda x: fit(10.0**x)[5], bounds=(-8, 4), method="bounded", options={"xatol": 1e-6})
c, f, d, trace, rss, score = fit(10.0**best.x)
out = {
    "source": f"make_pspline_reference.py, NumPy {np.__version__}, SciPy {scipy.__version__}",
    "intervals": intervals,
    "every": 40,
    "fixed": cases,
    "gcv": {"log10_lambda": best.x, "trace": trace, "gcv": score, "derivatives": d[::40].tolist()},
}
with open(os.path.join(here, "pspline_reference.json"), "w") as fh:
    json.dump(out, fh, indent=1)
print(out["source"], "GCV log10 λ =", best.x, "tr =", trace)
