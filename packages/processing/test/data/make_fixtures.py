#!/usr/bin/python3
"""Fixtures for @lamina/processing tests: scipy.signal reference results on seeded synthetic traces.

Run with Debian's interpreter: /usr/bin/python3 packages/processing/test/data/make_fixtures.py
Writes scipy-signal.json beside this script. Deterministic for a given numpy/scipy (seeded generator).
"""
import json
import os

import numpy as np
import scipy
from scipy import signal

SEED = 20261201
rng = np.random.default_rng(SEED)
DT_NS = 0.1
F_MHZ = 400.0


def ricker(t_ns, f_mhz):
    # Ricker wavelet written out (newer scipy dropped signal.ricker): (1 - 2 a) exp(-a), a = (pi f t)^2
    a = (np.pi * f_mhz * 1e-3 * t_ns) ** 2
    return (1 - 2 * a) * np.exp(-a)


def trace(n):
    t = np.arange(n) * DT_NS
    x = np.zeros(n)
    for _ in range(4):
        t0 = rng.uniform(2, n * DT_NS - 2)
        x += rng.uniform(-1, 1) * ricker(t - t0, F_MHZ * rng.uniform(0.7, 1.3))
    x += 0.3 * np.sin(2 * np.pi * t / (n * DT_NS * 1.7)) + 0.2  # wow and DC
    x += 0.05 * rng.standard_normal(n)
    return x.astype(np.float32)


def r(a):
    return [float(f"{v:.10g}") for v in np.asarray(a, dtype=np.float64)]


def next_pow2(n):
    p = 2
    while p < n:
        p *= 2
    return p


lengths = [300, 257, 512]
signals = [trace(n) for n in lengths]
out = {
    "origin": "make_fixtures.py, numpy %s, scipy %s, seed %d" % (np.__version__, scipy.__version__, SEED),
    "dtNs": DT_NS,
    "signals": [r(s) for s in signals],
    "hilbert": [],
    "filters": [],
}
for s in signals:
    n = next_pow2(len(s))
    env = np.abs(signal.hilbert(s.astype(np.float64), N=n))[: len(s)]
    out["hilbert"].append({"N": n, "envelope": r(env)})

# (kind, order, corners in MHz); Wn = corner / Nyquist, Nyquist = 500 / dt MHz
cases = [
    ("bandpass", 4, [100.0, 800.0]),  # 0.25 f - 2 f at 400 MHz
    ("bandpass", 2, [300.0, 500.0]),
    ("bandpass", 3, [50.0, 1200.0]),
    ("highpass", 2, [100.0]),
    ("lowpass", 5, [900.0]),
]
nyq = 500.0 / DT_NS
for kind, order, corners in cases:
    wn = [c / nyq for c in corners]
    sos = signal.butter(order, wn if kind == "bandpass" else wn[0], btype=kind, output="sos")
    w = np.linspace(0.001, 0.999, 60) * np.pi
    _, h = signal.sosfreqz(sos, worN=w)
    outs = [r(signal.sosfiltfilt(sos, s.astype(np.float64))) for s in signals]
    out["filters"].append({
        "kind": kind, "order": order, "cornersMHz": corners, "wn": wn,
        "padlen": int(3 * (2 * len(sos) + 1 - min((sos[:, 2] == 0).sum(), (sos[:, 5] == 0).sum()))),
        "freqRadPerSample": r(w), "magnitude": r(np.abs(h)),
        "sosfiltfilt": outs,
    })

path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "scipy-signal.json")
with open(path, "w") as f:
    json.dump(out, f, separators=(",", ":"))
print(path, os.path.getsize(path), "bytes")
