"""Reference onset of the damped pendulum with constant torque, th'' + g th' + sin th = tau.

The running (turning) branch is born in a homoclinic bifurcation at tau_c(g): the unstable manifold of
the saddle (th_s = pi - asin(tau), w = 0) that leaves with w > 0 reaches the next copy of the saddle,
th_s + 2 pi. Shooting: start on that manifold at distance eps along the unstable eigenvector, integrate
with SciPy solve_ivp (DOP853, rtol 1e-12, atol 1e-14); below tau_c the velocity returns to zero before
th_s + 2 pi, above it the orbit passes th_s + 2 pi. Bisection on tau to 1e-12.
Run with /usr/bin/python3 (Debian python3-scipy 1.10.1).
"""
import json
import math
import sys

import numpy as np
import scipy
from scipy.integrate import solve_ivp


def overshoots(tau, g, eps=1e-9):
    ths = math.pi - math.asin(tau)
    c = math.sqrt(1.0 - tau * tau)  # -cos(th_s)
    lam = 0.5 * (-g + math.sqrt(g * g + 4.0 * c))
    y0 = [ths + eps, eps * lam]

    def rhs(t, y):
        return [y[1], tau - g * y[1] - math.sin(y[0])]

    def stall(t, y):
        return y[1]
    stall.terminal = True
    stall.direction = -1

    def passed(t, y):
        return y[0] - (ths + 2.0 * math.pi)
    passed.terminal = True
    passed.direction = 1

    sol = solve_ivp(rhs, (0.0, 1e4), y0, method="DOP853", rtol=1e-12, atol=1e-14, events=[stall, passed])
    if sol.t_events[1].size > 0:
        return True
    if sol.t_events[0].size > 0:
        return False
    raise RuntimeError("neither event")


def onset(g):
    lo, hi = 0.01, 0.99
    assert not overshoots(lo, g) and overshoots(hi, g)
    while hi - lo > 1e-12:
        mid = 0.5 * (lo + hi)
        if overshoots(mid, g):
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi)


if __name__ == "__main__":
    out = {"scipy": scipy.__version__, "numpy": np.__version__, "python": sys.version.split()[0],
           "method": "solve_ivp DOP853 rtol=1e-12 atol=1e-14, eps=1e-9, bisection to 1e-12", "cases": []}
    for g in (0.2, 0.25, 0.3):
        out["cases"].append({"gamma": g, "tau_c": onset(g)})
    with open("pendulum_onset.json", "w") as f:
        json.dump(out, f, indent=2)
    print(json.dumps(out, indent=2))
