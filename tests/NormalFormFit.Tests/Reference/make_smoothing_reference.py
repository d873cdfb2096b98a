#!/usr/bin/python3
"""Reference values for the cubic smoothing spline tests (tests/NormalFormFit.Tests/Smoothing).

Run with Debian's interpreter and SciPy:  /usr/bin/python3 make_smoothing_reference.py
Produced with SciPy 1.10.1 (Debian python3-scipy), NumPy as installed beside it; the versions actually
used are written into smoothing_reference.json.

Writes, next to this script:
  smoothing_data.csv        the data sets (case, x, y, w), generated deterministically below
  smoothing_reference.json  per case: lam, and at the data points spl(x), spl.derivative()(x),
                            spl.derivative(2)(x); at off-knot points spl(xe), spl.derivative()(xe);
                            for fixed-lam cases tr(A) and the GCV score from the hat matrix;
                            for GCV cases the lam SciPy chose.

Every spline comes from scipy.interpolate.make_smoothing_spline(x, y, w=w, lam=lam).
tr(A): column j of the influence matrix A is make_smoothing_spline(x, e_j, w=w, lam=lam)(x) (the fit
is linear in y), so tr(A) comes from SciPy's public API alone. GCV score as SciPy's _gcv defines it:
(sum(r**2)/n) / (1 - tr(A)/n)**2 with r = y - spl(x) (unweighted residuals).
The lam chosen by GCV is not returned by make_smoothing_spline; it is recorded by wrapping
scipy.interpolate._bsplines._compute_optimal_gcv_parameter, which make_smoothing_spline calls.
"""
import json
import os

import numpy as np
import scipy
from scipy.interpolate import _bsplines
from scipy.interpolate import make_smoothing_spline

HERE = os.path.dirname(os.path.abspath(__file__))

_chosen = []
_original = _bsplines._compute_optimal_gcv_parameter


def _recording(*args, **kwargs):
    lam = _original(*args, **kwargs)
    _chosen.append(float(lam))
    return lam


_bsplines._compute_optimal_gcv_parameter = _recording


def nonuniform_times(rng, n, t0, t1, gap_factor):
    """Sorted random times on [t0, t1] with one gap gap_factor times the mean spacing."""
    spacing = rng.uniform(0.3, 1.7, size=n - 1)
    mid = (n - 1) // 2
    spacing[mid] = gap_factor
    x = np.concatenate(([0.0], np.cumsum(spacing)))
    return t0 + (t1 - t0) * x / x[-1]


def cases():
    rng = np.random.default_rng(20240607)
    out = []
    # 1. Non-uniform times with a 10x gap, no weights, fixed lam.
    x = nonuniform_times(rng, 40, 0.0, 6.0, 10.0)
    y = np.sin(x) + 0.05 * rng.standard_normal(x.size)
    out.append(dict(name="nonuniform_fixed", x=x, y=y, w=None, lam=0.01))
    # 2. Same shape, offset times and weights, fixed lam.
    x = nonuniform_times(rng, 50, 100.0, 112.0, 5.0)
    w = rng.uniform(0.2, 3.0, size=x.size)
    y = np.cos(0.8 * x) + 0.1 * rng.standard_normal(x.size) / np.sqrt(w)
    out.append(dict(name="weighted_fixed", x=x, y=y, w=w, lam=0.3))
    # 3. Uniform times, larger lam (close to a straight line), fixed.
    x = np.linspace(-2.0, 2.0, 30)
    y = x ** 3 - x + 0.2 * rng.standard_normal(x.size)
    out.append(dict(name="uniform_stiff", x=x, y=y, w=None, lam=50.0))
    # 4. Millisecond sampling (small time unit): lam spans many decades.
    x = nonuniform_times(rng, 40, 0.0, 0.04, 3.0)
    y = 3.0 * np.sin(150.0 * x) + 0.05 * rng.standard_normal(x.size)
    out.append(dict(name="small_time_unit_fixed", x=x, y=y, w=None, lam=1e-8))
    # 5-7. GCV choice. Scales are chosen so that the GCV minimum lies well inside SciPy's search
    # interval (0, n) and far from 0 compared with its absolute tolerance 1e-5.
    x = nonuniform_times(rng, 80, 0.0, 20.0, 4.0)
    y = np.sin(0.6 * x) + 0.2 * rng.standard_normal(x.size)
    out.append(dict(name="gcv_nonuniform", x=x, y=y, w=None, lam=None))
    x = nonuniform_times(rng, 100, 0.0, 25.0, 8.0)
    w = rng.uniform(0.5, 2.0, size=x.size)
    y = 2.0 * np.cos(0.4 * x) + 0.3 * rng.standard_normal(x.size) / np.sqrt(w)
    out.append(dict(name="gcv_weighted", x=x, y=y, w=w, lam=None))
    x = np.linspace(0.0, 30.0, 120)
    y = np.exp(-0.05 * x) * np.sin(x / 2.0) + 0.1 * rng.standard_normal(x.size)
    out.append(dict(name="gcv_uniform", x=x, y=y, w=None, lam=None))
    return out


def hat_trace(x, w, lam):
    n = x.size
    tr = 0.0
    for j in range(n):
        e = np.zeros(n)
        e[j] = 1.0
        tr += make_smoothing_spline(x, e, w=w, lam=lam)(x)[j]
    return tr


def main():
    data_rows = []
    ref = dict(scipy=scipy.__version__, numpy=np.__version__, cases=[])
    for c in cases():
        x, y, w, lam = c["x"], c["y"], c["w"], c["lam"]
        _chosen.clear()
        spl = make_smoothing_spline(x, y, w=w, lam=lam)
        if lam is None:
            assert len(_chosen) == 1
            lam_used = _chosen[0]
        else:
            lam_used = lam
        n = x.size
        xe = np.linspace(x[0], x[-1], 2 * n + 1)[1:-1:2]  # midpoints of an even grid: off the knots
        entry = dict(
            name=c["name"],
            weighted=w is not None,
            lam_given=lam,
            lam=lam_used,
            value=spl(x).tolist(),
            first=spl.derivative()(x).tolist(),
            second=spl.derivative(2)(x).tolist(),
            x_eval=xe.tolist(),
            value_eval=spl(xe).tolist(),
            first_eval=spl.derivative()(xe).tolist(),
        )
        tr = hat_trace(x, w, lam_used)
        r = y - spl(x)
        entry["trace"] = tr
        entry["gcv"] = float(np.sum(r ** 2) / n / (1.0 - tr / n) ** 2)
        ref["cases"].append(entry)
        for i in range(n):
            data_rows.append("%s,%r,%r,%r" % (c["name"], x[i], y[i], 1.0 if w is None else w[i]))

    with open(os.path.join(HERE, "smoothing_data.csv"), "w") as f:
        f.write("# Data for make_smoothing_reference.py (SciPy %s); weight 1 where none was given\n"
                % scipy.__version__)
        f.write("case,x,y,w\n")
        f.write("\n".join(data_rows) + "\n")
    with open(os.path.join(HERE, "smoothing_reference.json"), "w") as f:
        json.dump(ref, f, indent=1)


if __name__ == "__main__":
    main()
