# Reference onset for ModelComparerTests: the mu at which min over theta of
#   f = mu - sin(theta) + 0.12 sin(2 theta)
# reaches zero. Run with Debian's python3-scipy (SciPy 1.10.1): /usr/bin/python3 compare_onset.py
import numpy as np
import scipy
from scipy.optimize import brentq, minimize_scalar

def min_speed(mu):
    g = lambda t: mu - np.sin(t) + 0.12 * np.sin(2 * t)
    grid = np.linspace(0, 2 * np.pi, 4001)
    t0 = grid[np.argmin(g(grid))]
    r = minimize_scalar(g, bracket=(t0 - 0.01, t0, t0 + 0.01), tol=1e-14)
    return r.fun

print("scipy", scipy.__version__)
print("mu* = %.9f" % brentq(min_speed, 0.5, 2.0, xtol=1e-14))
