"""Reference values for the square-root period law with an offset (tests/NormalFormFit.Tests/Onset/SquareRootLawFitTests.cs).

Run with Debian's Python and SciPy:  /usr/bin/python3 make_period_law_reference.py
Produced with SciPy 1.10.1, NumPy 1.24.2 (Debian 12 python3-scipy, python3-numpy).

Law: T = alpha (mu - muc)^(-1/2) + beta [+ gamma (mu - muc)^(1/2)], weighted by 1/se^2, on a small invented data set
(periods of the law with alpha = 0.9, beta = 2, muc = 1, plus fixed invented perturbations).

Independent of the C# code (which profiles muc on a grid and Brent's method and fits the coefficients by QR):
- the fit is scipy.optimize.least_squares(residuals, x0, method="trf", xtol=ftol=gtol=1e-15, x_scale="jac") on all
  parameters at once, cross-checked against scipy.optimize.curve_fit(law, mu, T, sigma=se, absolute_sigma=False);
- the standard error of muc is sqrt of the diagonal of inv(J'J) * chi2/(n - p), J the Jacobian least_squares returns at
  the optimum (the covariance convention of curve_fit with absolute_sigma=False, checked against its pcov);
- the 95% interval inverts the profile-likelihood test with the variance scale estimated: all muc with
  chi2_profile(muc) - chi2_min <= t^2 chi2_min/(n - p), t = scipy.stats.t.ppf(0.975, n - p); chi2_profile from
  numpy.linalg.lstsq at fixed muc, the two edges by scipy.optimize.brentq (xtol=1e-14);
- AICc = n ln(chi2/n) + 2k + 2k(k+1)/(n-k-1), k = p + 1 (Hurvich & Tsai 1989).
Also the binomial acceptance band for the seeded Monte-Carlo calibration of the interval: with R repeats and true
coverage 0.95, [scipy.stats.binom.ppf(0.005, R, 0.95), scipy.stats.binom.ppf(0.995, R, 0.95)] holds 99% of outcomes.
"""
import json
import numpy as np
import scipy
from scipy.optimize import least_squares, curve_fit, brentq
from scipy.stats import t as student_t, binom

mu = np.array([1.02, 1.05, 1.1, 1.2, 1.35, 1.5, 1.8, 2.2])
d = mu - 1.0
pert = np.array([0.004, -0.003, 0.002, 0.0025, -0.004, 0.001, -0.0015, 0.003])
T = 0.9 / np.sqrt(d) + 2.0 + 0.05 * d + pert   # a small smooth misfit (0.05 d) as well as scatter
se = np.array([0.003, 0.0028, 0.0025, 0.0024, 0.0022, 0.002, 0.002, 0.0021])
n = len(mu)


def basis(dd, m):
    return np.column_stack([dd ** (0.5 * (k - 1)) for k in range(m)])


def profile(muc, m):
    dd = mu - muc
    X = basis(dd, m) / se[:, None]
    c, *_ = np.linalg.lstsq(X, T / se, rcond=None)
    r = T / se - X @ c
    return r @ r


def fit(m):
    def model(x):
        return basis(mu - x[-1], m) @ x[:-1]

    def resid(x):
        return (model(x) - T) / se

    x0 = np.array([1.0, 1.5, 0.0][:m] + [0.99])
    ls = least_squares(resid, x0, method="trf", xtol=1e-15, ftol=1e-15, gtol=1e-15, x_scale="jac", max_nfev=100000)
    p = m + 1
    chi2 = 2 * ls.cost
    dof = n - p
    cov = np.linalg.inv(ls.jac.T @ ls.jac) * chi2 / dof

    def law(x, *c):
        return basis(x - c[-1], m) @ np.array(c[:-1])

    popt, pcov = curve_fit(law, mu, T, p0=ls.x, sigma=se, absolute_sigma=False, maxfev=100000)
    assert np.allclose(popt, ls.x, rtol=1e-6, atol=1e-9), (popt, ls.x)
    assert np.allclose(pcov, cov, rtol=1e-3, atol=1e-14), (pcov, cov)
    muc = ls.x[-1]
    q = student_t.ppf(0.975, dof)
    thr = chi2 + q * q * chi2 / dof
    g = lambda c: profile(c, m) - thr
    near = brentq(g, muc, mu[0] - 1e-12, xtol=1e-14)
    # the far edge: walk away until the profile exceeds the threshold
    step = 1e-3
    while g(muc - step) <= 0:
        step *= 1.5
    far = brentq(g, muc - step, muc, xtol=1e-14)
    k = p + 1
    aicc = n * np.log(chi2 / n) + 2 * k + 2 * k * (k + 1) / (n - k - 1)
    return {
        "coefficients": ls.x[:-1].tolist(), "onset": muc, "onset_se": float(np.sqrt(cov[-1, -1])),
        "chi2": chi2, "aicc": aicc, "ci95_low": far, "ci95_high": near, "t975": q,
    }


repeats = 1000
out = {
    "generator": "make_period_law_reference.py",
    "scipy": scipy.__version__,
    "numpy": np.__version__,
    "mu": mu.tolist(), "period": T.tolist(), "se": se.tolist(),
    "two": fit(2), "three": fit(3),
    "calibration": {"repeats": repeats, "low": int(binom.ppf(0.005, repeats, 0.95)), "high": int(binom.ppf(0.995, repeats, 0.95))},
}
with open("period_law_reference.json", "w") as f:
    json.dump(out, f, indent=2)
print(json.dumps(out, indent=2))
