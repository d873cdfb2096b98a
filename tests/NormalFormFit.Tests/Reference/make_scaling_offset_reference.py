"""Reference values for the scaling law with an additive offset (tests/NormalFormFit.Tests/Scaling/ScalingOffsetTests.cs).

Run with Debian's Python and SciPy:  /usr/bin/python3 make_scaling_offset_reference.py
Produced with SciPy 1.10.1, NumPy 1.24.2 (Debian 12 python3-scipy, python3-numpy).

Data: a small invented set, T = C d^(-beta) + T0 with C = 1, beta = 1/2, T0 = 3, muc = 1 (T0 larger than the power
term at the farthest run), plus fixed invented perturbations of about one standard error.

Independent of the C# code (which profiles muc and beta by nested grids and Brent's method and solves the linear
coefficients by QR):
- offset forms T = C d^-beta + T0 [+ s d]: scipy.optimize.least_squares(resid, x0, method="trf", xtol=ftol=gtol=1e-15,
  x_scale="jac") on all parameters at once (resid = (model - T)/se), from several starts, best kept; cross-checked
  against scipy.optimize.curve_fit(law, mu, T, sigma=se, absolute_sigma=False);
- standard errors: sqrt(diag(inv(J'J) chi2/(n - p))), J from least_squares (curve_fit's pcov convention, checked);
- log-T forms log T = c - beta log d + kappa_1 d + kappa_2 d^2: the same least_squares call on log T with sigma se/T;
- AICc on one likelihood of the measured periods, computed here without the shortcut the C# code uses: the full
  Gaussian -2 ln L of T at the maximum-likelihood scale s^2 = chi2/n, for the log-T forms the density of log T times
  the Jacobian 1/T (i.e. + 2 sum ln T); AICc = -2 ln L + 2k + 2k(k+1)/(n-k-1), k = p + 1 (Hurvich & Tsai 1989).
Also the binomial acceptance band for the seeded Monte-Carlo calibration of beta's 95% interval: with R repeats and
true coverage 0.95, [scipy.stats.binom.ppf(0.005, R, 0.95), scipy.stats.binom.ppf(0.995, R, 0.95)] holds 99% of outcomes.
"""
import json
import numpy as np
import scipy
from scipy.optimize import least_squares, curve_fit
from scipy.stats import binom

mu = np.array([1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3])
d0 = mu - 1.0
pert = np.array([0.8, -1.1, 0.5, 1.2, -0.7, -0.4, 1.0, -0.9])
se = 0.002 * (1.0 / np.sqrt(d0) + 3.0)
T = 1.0 / np.sqrt(d0) + 3.0 + pert * se
n = len(mu)
opts = dict(method="trf", xtol=1e-15, ftol=1e-15, gtol=1e-15, x_scale="jac", max_nfev=200000)


def full_aicc(neg2lnl, p):
    k = p + 1
    return neg2lnl + 2 * k + 2 * k * (k + 1) / (n - k - 1)


def offset_model(x, m):
    C, beta, muc = x[0], x[m], x[m + 1]
    dd = mu - muc
    t = C * dd ** (-beta) + x[1]
    if m == 3:
        t = t + x[2] * dd
    return t


def fit_offset(m):
    def resid(x):
        if mu[0] - x[m + 1] <= 0:
            return np.full(n, 1e6)
        return (offset_model(x, m) - T) / se

    best = None
    for beta0 in (0.3, 0.5, 0.8):
        for muc0 in (0.99, 0.999, 0.9999):
            x0 = np.array([1.0, 3.0, 0.0][:m] + [beta0, muc0])
            ls = least_squares(resid, x0, **opts)
            if best is None or ls.cost < best.cost:
                best = ls
    p = m + 2
    chi2 = 2 * best.cost
    dof = n - p
    cov = np.linalg.inv(best.jac.T @ best.jac) * chi2 / dof

    def law(x, *c):
        C, beta, muc = c[0], c[m], c[m + 1]
        t = C * (x - muc) ** (-beta) + c[1]
        return t + (c[2] * (x - muc) if m == 3 else 0)

    popt, pcov = curve_fit(law, mu, T, p0=best.x, sigma=se, absolute_sigma=False, maxfev=200000)
    assert np.allclose(popt, best.x, rtol=1e-5, atol=1e-8), (popt, best.x)
    assert np.allclose(pcov, cov, rtol=1e-3, atol=1e-14), (pcov, cov)
    s2 = chi2 / n
    neg2 = np.sum(((offset_model(best.x, m) - T) / se) ** 2) / s2 + np.sum(np.log(2 * np.pi * s2 * se ** 2))
    return {"coefficients": best.x[:m].tolist(), "beta": best.x[m], "beta_se": float(np.sqrt(cov[m, m])),
            "onset": best.x[m + 1], "onset_se": float(np.sqrt(cov[m + 1, m + 1])), "chi2": chi2,
            "aicc_full": full_aicc(neg2, p)}


def fit_log(kappas):
    y = np.log(T)
    sl = se / T

    def model(x):
        dd = mu - x[-1]
        v = x[0] - x[1] * np.log(dd)
        for k in range(kappas):
            v = v + x[2 + k] * dd ** (k + 1)
        return v

    def resid(x):
        if mu[0] - x[-1] <= 0:
            return np.full(n, 1e6)
        return (model(x) - y) / sl

    best = None
    for muc0 in (0.9, 0.99, 0.999, 0.9999):
        ls = least_squares(resid, np.array([0.5, 0.3] + [0.0] * kappas + [muc0]), **opts)
        if best is None or ls.cost < best.cost:
            best = ls
    p = 3 + kappas
    chi2 = 2 * best.cost
    s2 = chi2 / n
    # density of T = density of log T times |d log T / dT| = 1/T
    neg2 = np.sum(((model(best.x) - y) / sl) ** 2) / s2 + np.sum(np.log(2 * np.pi * s2 * sl ** 2)) + 2 * np.sum(np.log(T))
    cov = np.linalg.inv(best.jac.T @ best.jac) * chi2 / (n - p)
    return {"beta": best.x[1], "beta_se": float(np.sqrt(cov[1, 1])), "onset": best.x[-1], "chi2": chi2,
            "aicc_full": full_aicc(neg2, p)}


repeats = 200
out = {
    "generator": "make_scaling_offset_reference.py",
    "scipy": scipy.__version__,
    "numpy": np.__version__,
    "mu": mu.tolist(), "period": T.tolist(), "se": se.tolist(),
    "offset": fit_offset(2), "offset_linear": fit_offset(3),
    "log0": fit_log(0), "log1": fit_log(1), "log2": fit_log(2),
    "calibration": {"repeats": repeats, "low": int(binom.ppf(0.005, repeats, 0.95)), "high": int(binom.ppf(0.995, repeats, 0.95))},
}
with open("scaling_offset_reference.json", "w") as f:
    json.dump(out, f, indent=2)
print(json.dumps(out, indent=2))
