"""Mean passage time of dx = (a + b x^2) dt + sqrt(2D) dW from a reflecting edge at -L to an absorbing edge at +L.

T = (1/D) int_{-L}^{L} dx int_{-L}^{x} exp((U(x) - U(y))/D) dy, U(x) = -(a x + b x^3/3)
(Gardiner, Handbook of Stochastic Methods, section 5.2.7), by SciPy 1.10.1 nested scipy.integrate.quad
(limit 500, outer epsrel 1e-10 with break points at multiples of the bottleneck width). Reported with the deterministic outer parts 2/(bL) added and divided by
pi/sqrt(ab), as PhaseDiffusion.PassageRatio does, with L = 20 max(sqrt(a/b), (D/b)^(1/3)).
Run with /usr/bin/python3.
"""
import json
import math

import scipy
from scipy.integrate import quad


def ratio(a, b, d):
    L = 20.0 * max(math.sqrt(a / b), (d / b) ** (1.0 / 3.0))
    U = lambda x: -(a * x + b * x ** 3 / 3.0)
    # inner variable y in [-L, x], outer x in [-L, L]; dblquad integrates func(y, x).
    w = max(math.sqrt(a / b), (d / b) ** (1.0 / 3.0))
    brk = [k * w for k in (-4, -2, -1, 0, 1, 2, 4)]

    def inner(x):
        # Since f >= a, the integrand is below exp(-(x - y) a / D): nothing beyond x - 40 D/a counts (e^-40).
        lo = max(-L, x - 40.0 * d / a)
        fx = a + b * x * x
        pts = [p for p in (x - 10.0 * d / fx, x - d / fx) if lo < p < x]
        return quad(lambda y: math.exp((U(x) - U(y)) / d), lo, x, points=pts or None, limit=500, epsabs=1e-14, epsrel=1e-11)[0]

    val, err = quad(inner, -L, L, points=brk, limit=500, epsabs=1e-12, epsrel=1e-10)
    T = val / d + 2.0 / (b * L)
    return T / (math.pi / math.sqrt(a * b)), err / d / (math.pi / math.sqrt(a * b))


cases = []
for a, b, d in [(0.01, 0.5, 0.005), (0.1, 0.5, 0.005), (0.3, 0.5, 0.005), (0.01, 0.5, 1e-4)]:
    r, e = ratio(a, b, d)
    cases.append({"a": a, "b": b, "D": d, "ratio": r, "abs_error_estimate": e})
out = {"scipy": scipy.__version__, "method": "nested quad limit=500 epsrel=1e-10 (outer), 1e-11 (inner)", "cases": cases}
with open("passage_reference.json", "w") as f:
    json.dump(out, f, indent=2)
print(json.dumps(out, indent=2))
