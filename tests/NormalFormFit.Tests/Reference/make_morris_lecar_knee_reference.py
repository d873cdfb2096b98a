#!/usr/bin/python3
"""Reference onset of the class-I Morris-Lecar model for SignalSweepAcceptanceTests.

For a saddle-node on the invariant circle the onset current is the knee of the steady-state current-voltage curve,
the local maximum of I_ss(V) = gL(V - VL) + gCa m_inf(V)(V - VCa) + gK w_inf(V)(V - VK) (Rinzel & Ermentrout 1989;
the parameters are those of src/NormalFormFit/Simulation/MorrisLecar.cs, class-I set: C 20, gL 2, gCa 4, gK 8,
VL -60, VCa 120, VK -84, V1 -1.2, V2 18, V3 12, V4 17.4 in mV, uA/cm2, mS/cm2). Solved by
scipy.optimize.minimize_scalar(-I_ss, bounds=(-40, -10), method='bounded', options={'xatol': 1e-10}), a different
method (Brent's bounded minimiser on I_ss itself) from the library's bisection on the analytic dI_ss/dV.
SciPy 1.10.1 from Debian python3-scipy. Run: /usr/bin/python3 make_morris_lecar_knee_reference.py
"""
import json
import numpy as np
import scipy
from scipy.optimize import minimize_scalar

gL, gCa, gK, VL, VCa, VK, V1, V2, V3, V4 = 2, 4, 8, -60, 120, -84, -1.2, 18, 12, 17.4


def iss(v):
    m = 0.5 * (1 + np.tanh((v - V1) / V2))
    w = 0.5 * (1 + np.tanh((v - V3) / V4))
    return gL * (v - VL) + gCa * m * (v - VCa) + gK * w * (v - VK)


r = minimize_scalar(lambda v: -iss(v), bounds=(-40, -10), method="bounded", options={"xatol": 1e-10})
json.dump(
    {
        "source": "scipy.optimize.minimize_scalar(-I_ss, bounds=(-40, -10), method='bounded', options={'xatol': 1e-10})",
        "scipy": scipy.__version__,
        "knee_voltage_mV": float(r.x),
        "onset_current_uA_per_cm2": float(iss(r.x)),
    },
    open("morris_lecar_knee.json", "w"),
    indent=1,
)
print(r.x, iss(r.x))
