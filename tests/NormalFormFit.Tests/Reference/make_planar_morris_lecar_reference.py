#!/usr/bin/python3
"""Reference folds and limit-cycle periods of Morris-Lecar systems for PlanarComparisonTests.

The Morris-Lecar model (Morris & Lecar 1981) with the class-I parameter set of Rinzel & Ermentrout (1989) as in
src/NormalFormFit/Simulation/MorrisLecar.cs (C 20, gL 2, gCa 4, gK 8, VL -60, VCa 120, VK -84, V1 -1.2, V2 18,
V3 12, V4 17.4, phi 1/15; values quoted from memory there) and a second class-I set that differs in gCa (4.4) and phi
(0.1), invented for the tests as a wrong model. Units mV, ms, uA/cm2.

Fold of the equilibria: scipy.optimize.fsolve on (f, g, det J) in (V, w, I), J by the analytic derivatives of f and g,
xtol 1e-13, started at (-30 mV, 0.01, 40). This is a different method from the library's (Newton with finite
differences on the same system) and from make_morris_lecar_knee_reference.py (maximum of I_ss(V)).

Periods: scipy.integrate.solve_ivp(method='DOP853', rtol=1e-11, atol=1e-11) from (V, w) = (0, 0) for 3000 ms, upward
crossings of V = 0 mV located by the solver's event function; period = mean of the last five intervals.

SciPy 1.10.1 from Debian python3-scipy. Run: /usr/bin/python3 make_planar_morris_lecar_reference.py
"""
import json
import numpy as np
import scipy
from scipy.integrate import solve_ivp
from scipy.optimize import fsolve

SETS = {
    "class_one": dict(C=20, gL=2, gCa=4, gK=8, VL=-60, VCa=120, VK=-84, V1=-1.2, V2=18, V3=12, V4=17.4, phi=1 / 15),
    "wrong_class_one": dict(C=20, gL=2, gCa=4.4, gK=8, VL=-60, VCa=120, VK=-84, V1=-1.2, V2=18, V3=12, V4=17.4, phi=0.1),
}


def rates(p, v, w, i):
    m = 0.5 * (1 + np.tanh((v - p["V1"]) / p["V2"]))
    winf = 0.5 * (1 + np.tanh((v - p["V3"]) / p["V4"]))
    f = (i - p["gL"] * (v - p["VL"]) - p["gCa"] * m * (v - p["VCa"]) - p["gK"] * w * (v - p["VK"])) / p["C"]
    g = p["phi"] * (winf - w) * np.cosh((v - p["V3"]) / (2 * p["V4"]))
    return f, g


def jac(p, v, w):
    m = 0.5 * (1 + np.tanh((v - p["V1"]) / p["V2"]))
    dm = 0.5 / p["V2"] / np.cosh((v - p["V1"]) / p["V2"]) ** 2
    winf = 0.5 * (1 + np.tanh((v - p["V3"]) / p["V4"]))
    dwinf = 0.5 / p["V4"] / np.cosh((v - p["V3"]) / p["V4"]) ** 2
    c = np.cosh((v - p["V3"]) / (2 * p["V4"]))
    dc = np.sinh((v - p["V3"]) / (2 * p["V4"])) / (2 * p["V4"])
    fv = (-p["gL"] - p["gCa"] * (dm * (v - p["VCa"]) + m) - p["gK"] * w) / p["C"]
    fw = -p["gK"] * (v - p["VK"]) / p["C"]
    gv = p["phi"] * (dwinf * c + (winf - w) * dc)
    gw = -p["phi"] * c
    return fv, fw, gv, gw


def fold(p):
    def eqs(z):
        v, w, i = z
        f, g = rates(p, v, w, i)
        fv, fw, gv, gw = jac(p, v, w)
        return [f, g, fv * gw - fw * gv]

    z = fsolve(eqs, [-30.0, 0.01, 40.0], xtol=1e-13)
    return [float(x) for x in z]


def period(p, i):
    ev = lambda t, y: y[0]
    ev.direction = 1
    s = solve_ivp(lambda t, y: rates(p, y[0], y[1], i), (0, 3000), [0.0, 0.0], method="DOP853", rtol=1e-11, atol=1e-11, events=ev)
    t = s.t_events[0]
    return float(np.mean(np.diff(t[-6:])))


out = {"scipy": scipy.__version__, "source": "make_planar_morris_lecar_reference.py", "sets": {}}
for name, p in SETS.items():
    v, w, i = fold(p)
    periods = [[c, period(p, c)] for c in (i + 1.0, i + 3.0, i + 8.0)]
    out["sets"][name] = {"parameters": p, "fold_V_mV": v, "fold_w": w, "fold_current": i, "periods_ms": periods}
    print(name, v, w, i, periods)
json.dump(out, open("planar_morris_lecar.json", "w"), indent=1)
