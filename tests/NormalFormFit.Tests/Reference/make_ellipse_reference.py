#!/usr/bin/python3
"""Reference conics for EllipseFitTests.

Solves the original 6x6 generalized eigenproblem of Fitzgibbon, Pilu & Fisher (1999), S a = lambda C a with
S = D^T W D and C the constraint matrix of 4ac - b^2 = 1, by scipy.linalg.eig(S, C) (SciPy 1.10.1 from Debian
python3-scipy, numpy as shipped with it). This is a different formulation from the reduced 3x3 form of Halir &
Flusser (1998) used by the library, so agreement checks the reduction, the undoing of the conditioning and the
choice of eigenvector. The data (invented demo points) are written to ellipse_data.csv, the conics to
ellipse_reference.json (unit norm, a + c > 0).
Run: /usr/bin/python3 make_ellipse_reference.py
"""
import json
import numpy as np
import scipy
import scipy.linalg

rng = np.random.default_rng(20240611)
cases = []
rows = []


def add(name, x, y, w):
    mx, my = np.average(x, weights=w), np.average(y, weights=w)
    k = np.sqrt(np.average((x - mx) ** 2 + (y - my) ** 2, weights=w))
    u, v = (x - mx) / k, (y - my) / k
    D = np.column_stack([u * u, u * v, v * v, u, v, np.ones_like(u)])
    S = D.T @ (w[:, None] * D)
    C = np.zeros((6, 6))
    C[0, 2] = C[2, 0] = 2
    C[1, 1] = -1
    vals, vecs = scipy.linalg.eig(S, C)
    best = None
    for i in range(6):
        if not np.isfinite(vals[i]) or abs(vals[i].imag) > 1e-9:
            continue
        a = vecs[:, i].real
        if 4 * a[0] * a[2] - a[1] ** 2 > 0 and vals[i].real >= -1e-9:
            best = a
    A, B, Cc, Dd, E, F = best
    # undo the conditioning u = (x - mx)/k, v = (y - my)/k
    A2, B2, C2 = A / k**2, B / k**2, Cc / k**2
    D2 = Dd / k - 2 * A2 * mx - B2 * my
    E2 = E / k - 2 * C2 * my - B2 * mx
    F2 = F + A2 * mx * mx + B2 * mx * my + C2 * my * my - Dd / k * mx - E / k * my
    con = np.array([A2, B2, C2, D2, E2, F2])
    con /= np.linalg.norm(con)
    if con[0] + con[2] < 0:
        con = -con
    cases.append({"name": name, "conic": con.tolist()})
    for xi, yi, wi in zip(x, y, w):
        rows.append(f"{name},{xi!r},{yi!r},{wi!r}")


# A tilted ellipse, noisy points over the whole orbit, equal weights.
s = rng.uniform(0, 2 * np.pi, 200)
x = 300 + 120 * np.cos(s) * np.cos(0.4) - 45 * np.sin(s) * np.sin(0.4) + rng.normal(0, 1.5, 200)
y = -80 + 120 * np.cos(s) * np.sin(0.4) + 45 * np.sin(s) * np.cos(0.4) + rng.normal(0, 1.5, 200)
add("noisy-full", x, y, np.ones(200))
# Only a 120 degree arc, noisy, random weights.
s = rng.uniform(0, 2 * np.pi / 3, 150)
x = 5 + 2 * np.cos(s) + rng.normal(0, 0.02, 150)
y = 1 + 0.7 * np.sin(s) + rng.normal(0, 0.02, 150)
add("noisy-arc-weighted", x, y, rng.uniform(0.2, 2.0, 150))

with open("ellipse_data.csv", "w") as f:
    f.write(f"# written by make_ellipse_reference.py, scipy {scipy.__version__}, numpy {np.__version__}\n")
    f.write("case,x,y,w\n")
    f.write("\n".join(rows) + "\n")
with open("ellipse_reference.json", "w") as f:
    json.dump({"scipy": scipy.__version__, "numpy": np.__version__, "cases": cases}, f, indent=1)
