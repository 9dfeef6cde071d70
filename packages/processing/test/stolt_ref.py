"""Reference of the f-k migrations in numpy only (Debian's /usr/bin/python3), written from the formulas
of src/stolt.ts and src/phase-shift.ts (Stolt 1978, Gazdag 1978) without sharing code with them.

Usage: stolt_ref.py <params.json> <in.f32> <out.f32>
params: {"method": "stolt" | "phase-shift", "nTraces", "nSamples", "dtNs", "dxM", "timeZeroNs",
         "velocityMPerNs" | "layers": [{"topM", "velocityMPerNs"}], "maxAngleDeg", "taper", "inverse",
         "halfIntegral", "apertureM" (phase-shift),
         "repeat" (timing runs, default 1)}
in/out: little-endian float32, trace-major nTraces x nSamples. Prints {"seconds": [...]} (the kernel alone,
without file input/output) on stdout.
"""
import json
import math
import sys
import time

import numpy as np


def next_pow2(n):
    p = 2
    while p < n:
        p *= 2
    return p


def next_even_5smooth(n):
    """Smallest even m >= n whose prime factors are 2, 3, 5 (Stolt's padding)."""
    m = max(2, n + (n % 2))
    while True:
        r = m
        for p in (2, 3, 5):
            while r % p == 0:
                r //= p
        if r == 1:
            return m
        m += 2


def padded_sizes(ntr, ns, dt, dx, ve, max_angle, time_factor, size_of=next_pow2):
    reach = ve * ns * dt * math.tan(math.radians(min(max_angle, 89)))
    pad = min(ntr, math.ceil(reach / dx))
    return size_of(ntr + pad), size_of(math.ceil(time_factor * ns))


def dip_weight(s, max_angle, taper):
    s = np.asarray(s, dtype=float)
    th = np.arcsin(np.clip(s, 0, 1))
    thmax = math.radians(max_angle)
    th1 = thmax * (1 - taper)
    w = np.where(th <= th1, 1.0, np.where(th >= thmax, 0.0, 0.5 * (1 + np.cos(np.pi * (th - th1) / max(thmax - th1, 1e-300)))))
    w = np.where(s >= 1, 0.0, w)
    return np.where(s == 0, 1.0, w)


def interpolate(P, u):
    """Windowed sinc (8 taps, Hann, normalised) of each row of P (nx, nw) at fractional bins u (nx, nw)."""
    nx, nw = P.shape
    i0 = np.floor(u).astype(np.int64)
    exact = (u - i0) == 0
    rows = np.arange(nx)[:, None]
    conj_rows = (nx - rows) % nx
    acc = np.zeros(u.shape, dtype=complex)
    wsum = np.zeros(u.shape)
    for t in range(-3, 5):
        n = i0 + t
        d = u - n
        w = np.sinc(d) * 0.5 * (1 + np.cos(np.pi * d / 4))
        w = np.where(exact, (d == 0).astype(float), w)
        pos = np.clip(n, 0, nw - 1)
        neg = np.clip(-n, 0, nw - 1)
        val = np.where(n >= nw, 0, np.where(n >= 0, P[rows, pos], np.conj(P[conj_rows, neg])))
        acc += w * val
        wsum += w
    return acc / wsum


def stolt(d, p):
    ntr, ns, dt, dx, tz = p["nTraces"], p["nSamples"], p["dtNs"], p["dxM"], p["timeZeroNs"]
    ve = p["velocityMPerNs"] / 2
    max_angle, taper, inverse = p.get("maxAngleDeg", 60), p.get("taper", 0.2), p.get("inverse", False)
    nx, nt = padded_sizes(ntr, ns, dt, dx, ve, max_angle, 2, next_even_5smooth)
    nw = nt // 2 + 1
    dw = 2 * np.pi / (nt * dt)
    tc = nt * dt / 4
    P = np.fft.fft(np.fft.rfft(d, n=nt, axis=1), n=nx, axis=0)
    w = np.arange(nw) * dw
    half = np.where(w > 0, np.where(w > 0, w, 1) ** -0.5 * np.exp(1j * np.pi / 4), 0)
    if p.get("halfIntegral") and not inverse:
        P = P * half[None, :]
    P = P * np.exp(1j * w * (tz + tc))[None, :]
    a = ve * np.abs(2 * np.pi * np.fft.fftfreq(nx, dx))[:, None]
    wj = np.broadcast_to(w[None, :], (nx, nw))
    with np.errstate(divide="ignore", invalid="ignore"):
        if not inverse:
            wq = np.sqrt(wj ** 2 + a ** 2)
            u = wq / dw
            factor = np.where(wq == 0, 1.0, dip_weight(np.where(wq > 0, a / wq, 0), max_angle, taper) * np.where(wq > 0, wj / wq, 1))
            phase = -wq * tc
            ok = np.ones_like(u, dtype=bool)
        else:
            ok = ~((wj <= a) & (a > 0))
            wt = np.sqrt(np.maximum(wj ** 2 - a ** 2, 0))
            u = wt / dw
            factor = np.where(wj == 0, 1.0, dip_weight(np.where(wj > 0, a / wj, 0), max_angle, taper) / np.where(wj > 0, wt / wj, 1))
            phase = -wt * tc
    ok &= (factor != 0) & (u <= nw - 1)
    u = np.where(ok, u, 0)
    R = np.where(ok, interpolate(P, u) * factor * np.exp(1j * phase), 0)
    R = R * np.exp(-1j * w * tz)[None, :]
    if p.get("halfIntegral") and inverse:
        R = R * np.where(w > 0, np.sqrt(w) * np.exp(-1j * np.pi / 4), 0)[None, :]
    return np.fft.irfft(np.fft.ifft(R, axis=0), n=nt, axis=1)[:ntr, :ns]


def phase_shift(d, p):
    """Gazdag phase shift in steps of vertical two-way time, one sample each (the first from tau = 0)."""
    ntr, ns, dt, dx, tz = p["nTraces"], p["nSamples"], p["dtNs"], p["dxM"], p["timeZeroNs"]
    layers = sorted(p["layers"], key=lambda l: l["topM"])
    max_angle, taper, inverse = p.get("maxAngleDeg", 60), p.get("taper", 0.2), p.get("inverse", False)
    ve = np.array([l["velocityMPerNs"] / 2 for l in layers])
    nx, nt = padded_sizes(ntr, ns, dt, dx, ve.max(), max_angle, 1)
    nw = nt // 2 + 1
    dw = 2 * np.pi / (nt * dt)
    tau_top = [0.0]
    for i in range(1, len(layers)):
        tau_top.append(tau_top[-1] + 2 * (layers[i]["topM"] - layers[i - 1]["topM"]) / layers[i - 1]["velocityMPerNs"])
    tau_top.append(np.inf)
    first = next(k for k in range(ns) if k * dt - tz > 0)
    w = np.arange(nw) * dw
    kx = np.abs(2 * np.pi * np.fft.fftfreq(nx, dx))[:, None]
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(w[None, None, :] > 0, ve[:, None, None] * kx[None] / w[None, None, :], np.where(kx[None] == 0, 0, 2))
    alive = np.cumprod(s < 1, axis=0).astype(bool)  # dropped from the first evanescent layer down
    cos = np.where(alive, np.sqrt(np.clip(1 - s ** 2, 0, 1)), 0)
    aperture = p.get("apertureM", np.inf)

    def depth(tau):
        z, left = 0.0, tau
        for i, l in enumerate(layers):
            nxt = layers[i + 1] if i + 1 < len(layers) else None
            tt = 2 * (nxt["topM"] - l["topM"]) / l["velocityMPerNs"] if nxt else np.inf
            if left <= tt:
                return z + left * l["velocityMPerNs"] / 2
            z, left = nxt["topM"], left - tt
        return z
    half = np.ones(nw)
    half[0] = half[-1] = 0.5
    if not inverse:
        P = np.fft.fft(np.fft.rfft(d, n=nt, axis=1), n=nx, axis=0) * np.exp(1j * w * tz)[None, :]
        if p.get("halfIntegral"):
            P = P * np.where(w > 0, np.where(w > 0, w, 1) ** -0.5 * np.exp(1j * np.pi / 4), 0)[None, :]
    else:
        I = np.fft.fft(d[:, first:], n=nx, axis=0)
        P = np.zeros((nx, nw), dtype=complex)
    img = np.zeros((ns, ntr))
    phi = np.zeros((nx, nw))
    prev = 0.0
    for k in range(first, ns):
        tau = k * dt - tz
        lay = 0
        for l in range(len(layers)):
            a, b = max(prev, tau_top[l]), min(tau, tau_top[l + 1])
            if b > a:
                phi = phi + w[None, :] * (b - a) * cos[l]
                lay = l
        prev = tau
        z = depth(tau)
        angle = min(max_angle, math.degrees(math.atan(aperture / z))) if z > 0 else max_angle
        wgt_k = np.where(alive[lay], dip_weight(np.clip(s[lay], 0, 1), angle, taper), 0)
        if not inverse:
            S = (half[None, :] * wgt_k * P * np.exp(1j * phi)).sum(axis=1)
            img[k] = (2 / nt) * np.real(np.fft.ifft(S))[:ntr]
        else:
            with np.errstate(divide="ignore", invalid="ignore"):
                g = np.where(alive[lay], wgt_k / cos[lay], 0)
            P += g * I[:, k - first][:, None] * np.exp(-1j * phi)
    if not inverse:
        return img.T
    P = P * np.exp(-1j * w * tz)[None, :]
    if p.get("halfIntegral"):
        P = P * np.where(w > 0, np.sqrt(w) * np.exp(-1j * np.pi / 4), 0)[None, :]
    return np.fft.irfft(np.fft.ifft(P, axis=0), n=nt, axis=1)[:ntr, :ns]


def main():
    p = json.load(open(sys.argv[1]))
    d = np.fromfile(sys.argv[2], dtype="<f4").astype(float).reshape(p["nTraces"], p["nSamples"])
    f = stolt if p.get("method", "stolt") == "stolt" else phase_shift
    secs = []
    for _ in range(p.get("repeat", 1)):
        t = time.perf_counter()
        out = f(d, p)
        secs.append(time.perf_counter() - t)
    out.astype("<f4").tofile(sys.argv[3])
    print(json.dumps({"seconds": secs}))


if __name__ == "__main__":
    main()
