"""Reference values for the power law of a bent rate, T = C (d + kappa d^2)^(-beta), d = mu - muc
(tests/NormalFormFit.Tests/Scaling/QuadraticRateTests.cs).

Run with Debian's Python and SciPy:  /usr/bin/python3 make_quadratic_rate_reference.py
Produced with SciPy 1.10.1, NumPy 1.24.2 (Debian 12 python3-scipy, python3-numpy).

Data: a small invented set, T = 2.5 (d + 0.8 d^2)^(-1/2), muc = 3, seven runs, errors 0.05% of T, plus fixed invented
perturbations of about one standard error.

Independent of the C# code (which profiles beta with a linear quadratic fit of T^(-1/beta) and polishes by damped
Gauss-Newton): scipy.optimize.least_squares(resid, x0, method="trf", xtol=ftol=gtol=1e-15, x_scale="jac") on
(log C, beta, kappa, muc) at once, resid = (log T - model) T/se, from several starts, best kept; cross-checked
against scipy.optimize.curve_fit(law, mu, log T, sigma=se/T, absolute_sigma=False); standard errors
sqrt(diag(inv(J'J) chi2/(n - p))).
"""
import json
import numpy as np
import scipy
from scipy.optimize import least_squares, curve_fit

mu = np.array([3.02, 3.04, 3.07, 3.1, 3.15, 3.22, 3.3])
d0 = mu - 3.0
pert = np.array([0.7, -1.2, 0.4, 1.1, -0.8, -0.3, 0.9])
T0 = 2.5 * (d0 + 0.8 * d0 ** 2) ** -0.5
se = 0.0005 * T0
T = T0 + pert * se
y = np.log(T)
sy = se / T
n, p = len(mu), 4


def law(m, logc, beta, kappa, muc):
    d = m - muc
    return logc - beta * np.log(d + kappa * d * d)


def resid(x):
    return (law(mu, *x) - y) / sy


opts = dict(method="trf", xtol=1e-15, ftol=1e-15, gtol=1e-15, x_scale="jac", max_nfev=200000)
best = None
for start in [(1.0, 0.5, 0.5, 2.99), (0.5, 0.6, 0.0, 2.98), (1.2, 0.4, 1.5, 2.995)]:
    r = least_squares(resid, np.array(start), bounds=([-np.inf, 0.01, -3.0, -np.inf], [np.inf, 5.0, 3.0, 3.0199]), **opts)
    if best is None or r.cost < best.cost:
        best = r
x = best.x
chi2 = float(np.sum(best.fun ** 2))
J = best.jac
cov = np.linalg.inv(J.T @ J) * chi2 / (n - p)
se_x = np.sqrt(np.diag(cov))
popt, pcov = curve_fit(law, mu, y, p0=x, sigma=sy, absolute_sigma=False, maxfev=100000)
assert np.allclose(popt, x, rtol=1e-7, atol=1e-9), (popt, x)
assert np.allclose(np.sqrt(np.diag(pcov)), se_x, rtol=1e-3), (np.sqrt(np.diag(pcov)), se_x)
out = {
    "scipy": scipy.__version__,
    "mu": mu.tolist(), "period": T.tolist(), "se": se.tolist(),
    "log_c": x[0], "beta": x[1], "kappa": x[2], "onset": x[3],
    "beta_se": se_x[1], "kappa_se": se_x[2], "onset_se": se_x[3], "chi2": chi2,
}
with open("quadratic_rate_reference.json", "w") as f:
    json.dump(out, f, indent=1)
print(json.dumps(out, indent=1))
