#!/usr/bin/python3
"""numpy/scipy reference of the slicing part of `lamina process`, timed by bench/process.bench.ts.

Reads the site's SEG-Y lines with segyio and their positions (trace headers, line start/end or a CSV, as
site.json says), runs the processing chain of processing_ref.py (time-zero, dewow, band-pass, gain,
background removal, envelope; no migration and no hyperbola fitting), converts time to depth for the
bistatic antenna with the site's velocity model, cuts the same depth slices (mean square of the envelope
over each window, samples weighted by their overlap with it) and grids them by k-nearest inverse
distance on the same grid with scipy's cKDTree (the same anisotropic search frame). Lines are processed
in a pool of 2 processes, as the tool uses 2 worker threads here.

Usage: /usr/bin/python3 bench/process_ref.py <meta.json>  (written by the bench from a lamina run)
Writes the slices (float32, band-major) to meta["out"] and prints one JSON line with its own times.
"""
import csv
import json
import multiprocessing as mp
import os
import sys
import time

import numpy as np
import segyio
from scipy.spatial import cKDTree

from processing_ref import process  # same folder

C = 0.2998


def positions(site_dir, line, n):
    """Trace positions of a line in site CRS units, from the source site.json names."""
    if "start" in line:
        s, e = np.array(line["start"], float), np.array(line["end"], float)
        f = np.linspace(0, 1, n)
        return s[0] + f * (e[0] - s[0]), s[1] + f * (e[1] - s[1])
    if "positions" in line:
        with open(os.path.join(site_dir, line["positions"])) as fh:
            rows = [(float(r["trace"]), float(r["x"]), float(r["y"])) for r in csv.DictReader(fh)]
        t, x, y = (np.array(c) for c in zip(*rows))
        k = np.arange(1, n + 1)
        return np.interp(k, t, x), np.interp(k, t, y)
    return None


def read_line(site_dir, line):
    with segyio.open(os.path.join(site_dir, line["file"]), ignore_geometry=True) as f:
        data = segyio.tools.collect(f.trace[:]).astype(np.float32)
        pos = positions(site_dir, line, f.tracecount)
        if pos is None:
            sc = f.attributes(segyio.TraceField.SourceGroupScalar)[:].astype(float)
            sc = np.where(sc < 0, -1 / sc, np.where(sc > 0, sc, 1))
            pos = (f.attributes(segyio.TraceField.CDP_X)[:] * sc, f.attributes(segyio.TraceField.CDP_Y)[:] * sc)
    return data, pos


def sample_depths(ns, dt, tz, meta):
    """Bistatic depth of each sample (NaN before the ground wave): straight rays, time-averaged velocity."""
    t = np.arange(ns) * dt - tz
    h = meta["separationM"] / 2
    layers = meta["model"]["layers"]
    if len(layers) == 1:
        a = layers[0]["velocityMPerNs"] * t / 2
        d = a * a - h * h
        return np.where((t >= 0) & (d >= 0), np.sqrt(np.maximum(d, 0)), np.nan)
    # layered: two-way time of depth z on a fine grid, inverted by interpolation (monotonic in z)
    z = np.linspace(0, 20, 200001)
    tv = np.zeros_like(z)
    for i, l in enumerate(layers):
        bottom = np.inf if i == len(layers) - 1 else l["bottomM"]
        tv += np.clip(np.minimum(z, bottom) - l["topM"], 0, None) / l["velocityMPerNs"]
    vbar = np.where(z > 0, z / np.where(tv > 0, tv, 1), layers[0]["velocityMPerNs"])
    tz_ = 2 * np.sqrt(z * z + h * h) / vbar
    return np.where(t >= tz_[0], np.interp(t, tz_, z, right=np.nan), np.nan)


def window_weights(depths, windows):
    """(samples x windows): each sample's depth interval overlapping each window, normalised per window."""
    prev = np.concatenate([[np.nan], depths[:-1]])
    nxt = np.concatenate([depths[1:], [np.nan]])
    lo = np.where(np.isnan(prev), depths, 0.5 * (prev + depths))
    hi = np.where(np.isnan(nxt), depths, 0.5 * (depths + nxt))
    top = np.array([w[0] for w in windows])[None, :]
    bot = np.array([w[1] for w in windows])[None, :]
    o = np.minimum(hi[:, None], bot) - np.maximum(lo[:, None], top)
    w = np.where(np.isnan(o) | (o <= 0), 0, o)
    s = w.sum(axis=0)
    return w / np.where(s > 0, s, 1), s > 0


_meta = None


def _init(meta):
    global _meta
    _meta = meta


def one_line(k):
    meta = _meta
    line = meta["lines"][k]
    data, (x, y) = read_line(meta["siteDir"], line)
    chain = dict(meta, dtNs=line["dtNs"])
    env, tz = process(data, chain, with_time_zero=True)
    w, ok = window_weights(sample_depths(env.shape[1], line["dtNs"], tz, meta), meta["windows"])
    v = (env.astype(np.float64) ** 2) @ w
    v[:, ~ok] = np.nan
    return np.asarray(x, float), np.asarray(y, float), v.astype(np.float32)


def grid(xs, ys, values, meta):
    g, idw = meta["grid"], meta["idw"]
    th = np.radians(idw.get("directionDeg", 0))
    r = idw["radius"]
    s = r / idw.get("radiusAcross", r)
    frame = lambda x, y: np.column_stack([x * np.cos(th) + y * np.sin(th), (-x * np.sin(th) + y * np.cos(th)) * s])
    tree = cKDTree(frame(xs, ys))
    cx = g["originX"] + (np.arange(g["width"]) + 0.5) * g["cellSize"]
    cy = g["originY"] - (np.arange(g["height"]) + 0.5) * g["cellSize"]
    qx, qy = np.meshgrid(cx, cy)
    d, i = tree.query(frame(qx.ravel(), qy.ravel()), k=idw["maxPoints"], distance_upper_bound=r, workers=2)
    found = np.isfinite(d)
    d2 = np.where(found, d * d, 1.0)
    wgt = np.where(found, 1 / np.maximum(d2, 1e-13) ** (idw["power"] / 2), 0)
    exact = found[:, 0] & (d2[:, 0] < 1e-13)
    wgt[exact] = 0
    wgt[exact, 0] = 1
    i = np.where(found, i, 0)
    out = np.empty((values.shape[1], g["height"] * g["width"]), np.float32)
    wsum = wgt.sum(axis=1)
    none = found.sum(axis=1) < max(1, idw.get("minPoints", 1))
    for b in range(values.shape[1]):
        col = values[:, b]
        out[b] = (wgt * col[i]).sum(axis=1) / np.where(wsum > 0, wsum, 1)
        out[b][none] = np.nan
    return out.reshape(values.shape[1], g["height"], g["width"])


def main():
    meta = json.load(open(sys.argv[1]))
    n = len(meta["lines"])
    t0 = time.perf_counter()
    with mp.get_context("fork").Pool(2, initializer=_init, initargs=(meta,)) as pool:
        parts = pool.map(one_line, range(n), chunksize=1)
    t1 = time.perf_counter()
    xs = np.concatenate([p[0] for p in parts])
    ys = np.concatenate([p[1] for p in parts])
    vals = np.concatenate([p[2] for p in parts])
    slices = grid(xs, ys, vals, meta)
    t2 = time.perf_counter()
    slices.astype("<f4").tofile(meta["out"])
    t3 = time.perf_counter()
    print(json.dumps({"lines": t1 - t0, "gridding": t2 - t1, "write": t3 - t2, "slices": int(slices.shape[0]), "cells": int(slices.shape[1] * slices.shape[2])}))


if __name__ == "__main__":
    main()
