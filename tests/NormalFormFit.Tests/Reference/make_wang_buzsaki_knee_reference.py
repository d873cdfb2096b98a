"""Onset of the Wang-Buzsaki interneuron (Wang & Buzsaki 1996, J. Neurosci. 16:6402): the knee of the steady-state
current I_inf(V), i.e. its first local maximum (the fold of the rest states). Independent of nffit: SciPy's
minimize_scalar (bounded) on -I_inf(V) between -70 and -55 mV. Run with Debian's /usr/bin/python3 (SciPy 1.10.1):
    /usr/bin/python3 make_wang_buzsaki_knee_reference.py > wang_buzsaki_knee.json
"""
import json
import math

import scipy
from scipy.optimize import minimize_scalar

GNA, GK, GL, ENA, EK, EL = 35.0, 9.0, 0.1, 55.0, -90.0, -65.0


def am(v): return -0.1 * (v + 35) / (math.exp(-0.1 * (v + 35)) - 1)
def bm(v): return 4 * math.exp(-(v + 60) / 18)
def ah(v): return 0.07 * math.exp(-(v + 58) / 20)
def bh(v): return 1 / (math.exp(-0.1 * (v + 28)) + 1)
def an(v): return -0.01 * (v + 34) / (math.exp(-0.1 * (v + 34)) - 1)
def bn(v): return 0.125 * math.exp(-(v + 44) / 80)


def i_inf(v):
    m = am(v) / (am(v) + bm(v))
    h = ah(v) / (ah(v) + bh(v))
    n = an(v) / (an(v) + bn(v))
    return GNA * m ** 3 * h * (v - ENA) + GK * n ** 4 * (v - EK) + GL * (v - EL)


res = minimize_scalar(lambda v: -i_inf(v), bounds=(-70.0, -55.0), method="bounded", options={"xatol": 1e-10})
print(json.dumps({
    "source": "scipy.optimize.minimize_scalar(bounded, xatol=1e-10) on -I_inf(V), V in [-70, -55] mV",
    "scipy_version": scipy.__version__,
    "knee_voltage_mV": res.x,
    "onset_current_uA_per_cm2": i_inf(res.x),
}, indent=2))
