#!/usr/bin/python3
"""numpy/scipy reference of the processing chain timed by bench/processing.bench.ts.

Same steps and parameters as the recipe in meta.json (time-zero on the Hilbert envelope with a running
median of the picks and Keys cubic shifts, running-mean dewow, Butterworth band-pass with sosfiltfilt,
divergence gain, mean-trace background removal, envelope), vectorised over each line as a numpy user would
write it. Usage: /usr/bin/python3 bench/processing_ref.py <dir with lines.f32 and meta.json>.
Prints one JSON line with the run times (s): single process and a 2-process pool.
"""
import json
import multiprocessing as mp
import os
import sys
import time

import numpy as np
import scipy
from scipy import ndimage, signal

C = 0.2998


def next_pow2(n):
    p = 2
    while p < n:
        p *= 2
    return p


def keys(x):
    ax = np.abs(x)
    return np.where(ax < 1, 1.5 * ax**3 - 2.5 * ax**2 + 1, np.where(ax < 2, -0.5 * ax**3 + 2.5 * ax**2 - 4 * ax + 2, 0.0))


def time_zero(d, dt, f, sep, p):
    nt, ns = d.shape
    env = np.abs(signal.hilbert(d, N=next_pow2(ns), axis=1))[:, :ns]
    mx = env.max(axis=1)
    dead = ~(mx > 0)
    c = np.argmax(env >= p.get("threshold", 0.25) * mx[:, None], axis=1)
    per = int(round(1000 / f / dt))
    idx = np.clip(c[:, None] + np.arange(per + 1)[None, :], 0, ns - 1)
    if p.get("pick", "firstPeak") == "firstPeak":
        j = np.take_along_axis(idx, np.argmax(np.abs(np.take_along_axis(d, idx, axis=1)), axis=1)[:, None], axis=1)[:, 0]
        h = max(1, int(round(per / 10)))
        u = np.arange(-h, h + 1)
        y = np.take_along_axis(d, np.clip(j[:, None] + u[None, :], 0, ns - 1), axis=1)
        s0, s2, s4 = len(u), (u**2).sum(), (u**4).sum()
        b = (y * u).sum(axis=1) / s2
        cc = (s0 * (y * u**2).sum(axis=1) - s2 * y.sum(axis=1)) / (s0 * s4 - s2 * s2)
        ok = (cc != 0) & (np.sign(cc) == -np.sign(d[np.arange(nt), j]))
        picks = (j + np.where(ok, np.clip(-b / np.where(cc == 0, 1, 2 * cc), -1, 1), 0)) * dt
    else:
        k = np.take_along_axis(idx, np.argmax(np.take_along_axis(env, idx, axis=1), axis=1)[:, None], axis=1)[:, 0]
        half = 0.5 * env[np.arange(nt), k]
        widx = np.clip(k[:, None] + np.arange(-per // 2, per // 2 + 1)[None, :], 0, ns - 1)
        w = np.maximum(np.take_along_axis(env, widx, axis=1) - half[:, None], 0)
        picks = (w * widx).sum(axis=1) / np.maximum(w.sum(axis=1), 1e-30) * dt
    picks[dead] = np.nan
    med = ndimage.generic_filter(picks, np.nanmedian, size=p.get("medianTraces", 11), mode="nearest")
    used = np.where(np.isfinite(picks) & (np.abs(picks - med) <= 1000 / f / 4), picks, med)
    pick = np.median(used)
    sh = (pick - used) / dt
    whole = np.floor(sh).astype(int)
    fr = sh - whole
    out = np.zeros_like(d)
    i = np.arange(ns)[None, :]
    for m, wm in enumerate([keys(2 - fr), keys(1 - fr), keys(fr), keys(1 + fr)]):
        src = i - whole[:, None] - 2 + m
        ok = (src >= 0) & (src < ns)
        out += np.where(ok, np.take_along_axis(d, np.clip(src, 0, ns - 1), axis=1), 0) * wm[:, None]
    return out, pick - (sep / C if p.get("separationCorrection", True) else 0)


def dewow(d, dt, p):
    ns = d.shape[1]
    w = max(3, int(round(p["windowNs"] / dt)))
    w += 1 - w % 2
    h = (w - 1) // 2
    cum = np.concatenate([np.zeros((d.shape[0], 1)), np.cumsum(d, axis=1)], axis=1)
    i = np.arange(ns)
    a = np.maximum(0, i - h)
    b = np.minimum(ns, i + h + 1)
    return d - (cum[:, b] - cum[:, a]) / (b - a)


def process(d, meta, with_time_zero=False):
    """The chain of meta["recipe"] on one line (traces x samples); with_time_zero: also its time-zero (ns)."""
    dt, f, sep = meta["dtNs"], meta["frequencyMHz"], meta["separationM"]
    d = d.astype(np.float64)
    tz = 0.0
    for p in meta["recipe"]["steps"]:
        s = p["step"]
        if s == "timeZero":
            d, tz = time_zero(d, dt, f, sep, p)
        elif s == "dewow":
            d = dewow(d, dt, p)
        elif s == "bandpass":
            nyq = 500 / dt
            sos = signal.butter(p["order"], [p["lowMHz"] / nyq, p["highMHz"] / nyq], btype="band", output="sos")
            d = signal.sosfiltfilt(sos, d, axis=1)
        elif s == "gain":
            t = np.arange(d.shape[1]) * dt - tz
            t1 = p["startNs"]
            g = np.where(t <= t1, 1.0, np.minimum(10 ** (p["maxGainDb"] / 20), (np.maximum(t, t1) / t1) ** p["power"] * np.exp(p["alphaPerNs"] * (t - t1))))
            d = d * g[None, :]
        elif s == "backgroundRemoval":
            d = d - d.mean(axis=0, keepdims=True)
        elif s == "envelope":
            d = np.abs(signal.hilbert(d, N=next_pow2(d.shape[1]), axis=1))[:, : d.shape[1]]
    return (d.astype(np.float32), tz) if with_time_zero else d.astype(np.float32)


_data = None
_meta = None


def _init(path, meta):
    global _data, _meta
    _meta = meta
    raw = np.fromfile(path, dtype="<f4")
    _data = [raw[l["offset"] : l["offset"] + l["nTraces"] * meta["nSamples"]].reshape(l["nTraces"], meta["nSamples"]) for l in meta["lines"]]


def _one(k):
    process(_data[k], _meta)
    return k


def main():
    folder = sys.argv[1]
    meta = json.load(open(os.path.join(folder, "meta.json")))
    path = os.path.join(folder, "lines.f32")
    _init(path, meta)
    n = len(meta["lines"])
    runs = meta.get("runs", 3)
    process(_data[0], meta).astype("<f4").tofile(os.path.join(folder, "out0.f32"))  # warm-up, and line 0 for the side-by-side check
    single = []
    for _ in range(runs):
        t0 = time.perf_counter()
        for k in range(n):
            process(_data[k], meta)
        single.append(time.perf_counter() - t0)
    procs = max(2, os.cpu_count() or 2)
    multi = []
    with mp.get_context("fork").Pool(procs, initializer=_init, initargs=(path, meta)) as pool:
        pool.map(_one, range(procs))  # warm-up
        for _ in range(runs):
            t0 = time.perf_counter()
            pool.map(_one, range(n), chunksize=1)
            multi.append(time.perf_counter() - t0)
    print(json.dumps({"single": single, "multi": multi, "processes": procs, "numpy": np.__version__, "scipy": scipy.__version__}))


if __name__ == "__main__":
    main()
