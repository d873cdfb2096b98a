#!/usr/bin/python3
"""Reference events for SignalEventsTests.

An invented spike train (demo data): a 20 kHz signal of 1.2 s, baseline -65 mV with Gaussian noise of SD 0.4 mV
(seeded), and spikes of the shape A * x * exp(1 - x), x = (t - t_k) / 0.4 ms, heights 85 to 100 mV, at irregular
times 18 to 90 ms apart, with one doublet 3 ms apart. Written with 4 decimals to signal_events_data.csv and read back,
so that SciPy and the library see the same numbers.

Peaks by scipy.signal.find_peaks(v, height=-20.0, prominence=30.0, distance=40) (SciPy 1.10.1 from Debian
python3-scipy): a peak rises above -20 mV, stands 30 mV above its surroundings, and is at least 40 samples (2 ms) from
a higher one. For each peak, the time the upstroke crosses -20 mV: scipy.signal.peak_widths(v, [p],
rel_height=(v[p] + 20) / prominence[p], prominence_data=...)[2] (left_ips, linear interpolation between samples),
converted to ms. Run: /usr/bin/python3 make_signal_events_reference.py
"""
import json
import numpy as np
import scipy
from scipy.signal import find_peaks, peak_widths

fs = 20000.0
dt_ms = 1000.0 / fs
n = int(1.2 * fs)
t = np.arange(n) * dt_ms
rng = np.random.default_rng(13013)
v = -65.0 + rng.normal(0.0, 0.4, n)
times = []
tk = 11.3
while tk < 1150.0:
    times.append(tk)
    tk += rng.uniform(18.0, 90.0)
times.insert(5, times[4] + 3.0)
for tk in times:
    x = (t - tk) / 0.4
    m = x > 0
    v[m] += rng.uniform(85.0, 100.0) * x[m] * np.exp(1.0 - x[m])

with open("signal_events_data.csv", "w") as f:
    f.write("time_ms,Vm_mV\n")
    for a, b in zip(t, v):
        f.write(f"{a:.2f},{b:.4f}\n")

data = np.loadtxt("signal_events_data.csv", delimiter=",", skiprows=1)
t, v = data[:, 0], data[:, 1]
threshold = -20.0
peaks, props = find_peaks(v, height=threshold, prominence=30.0, distance=40)
crossings = []
for i, p in enumerate(peaks):
    prom = props["prominences"][i : i + 1]
    rel = (v[p] - threshold) / prom[0]
    w = peak_widths(v, [p], rel_height=rel, prominence_data=(prom, props["left_bases"][i : i + 1], props["right_bases"][i : i + 1]))
    crossings.append(float(w[2][0]) * dt_ms)

json.dump(
    {
        "source": "scipy.signal.find_peaks(v, height=-20.0, prominence=30.0, distance=40) and peak_widths left_ips at -20 mV",
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "threshold": threshold,
        "sample_ms": dt_ms,
        "peak_times_ms": [float(t[p]) for p in peaks],
        "crossing_times_ms": crossings,
    },
    open("signal_events_reference.json", "w"),
    indent=1,
)
print(len(peaks), "peaks;", len(times), "spikes placed")
