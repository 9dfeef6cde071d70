#!/usr/bin/python3
# What each velocity fit of a kept field-bench folder sits on, from the simulator's truth (never read by
# the pipeline): the nearest buried object, stone or root in plan within 0.5 m, else "far". Prints per
# scene the fits' K over the truth K by category, and pooled medians of the point fit's K and of the K the
# site model uses (`siteVelocityOf`: the radius-free velocity when the radius is unresolved).
# Usage: /usr/bin/python3 bench/fit-sources.py <kept-dir> [scene ...]   (LAMINA_BENCH_FIELD_KEEP=1 keeps them)
# A diagnostic, not a score.
import glob, json, os, sys
import numpy as np

C = 0.2998  # m/ns


def seg_dist(p, a, b):
    a, b = np.array(a[:2]), np.array(b[:2])
    ab = b - a
    L = ab @ ab
    u = 0.0 if L == 0 else max(0.0, min(1.0, (p - a) @ ab / L))
    return float(np.linalg.norm(p - a - u * ab))


def category(fit, truth):
    p = np.array([fit['x'], fit['y']])
    best = (np.inf, 'far')
    for o in truth['buried']:
        d = seg_dist(p, o['from'], o['to']) if 'from' in o else max(0.0, float(np.hypot(*(p - np.array(o['center'][:2])))) - 0.7 * o['radiusM'])
        if d < best[0]:
            best = (d, o['id'].split('-')[0])
    for c in truth.get('clutter', []):
        d = float(np.hypot(*(p - np.array(c[:2]))))
        if d < best[0]:
            best = (d, 'stone')
    for r in truth.get('roots', []):
        d = seg_dist(p, r[:3], r[3:])
        if d < best[0]:
            best = (d, 'root')
    return best[1] if best[0] < 0.5 else 'far'


def site_k(fit):
    v = fit.get('radiusFreeVelocityMPerNs') if fit.get('radiusResolved') is False else fit['velocityMPerNs']
    return (C / v) ** 2 if v else float('nan')


kd = sys.argv[1]
scenes = sys.argv[2:] or sorted(os.path.basename(p)[:-4] for p in glob.glob(kd + '/*-out') if not p.endswith('-keep-air-out'))
point, used = {}, {}
for s in scenes:
    try:
        truth = json.load(open(f'{kd}/{s}-site/truth.json'))
        vel = json.load(open(f'{kd}/{s}-out/velocity.json'))
    except FileNotFoundError:
        continue
    kt = truth['soil']['permittivity']
    cats = {}
    for f in vel['hyperbolas']:
        if f['origin'] != 'subsurface':
            continue
        c = category(f, truth)
        cats.setdefault(c, []).append(f['permittivity'] / kt)
        point.setdefault(c, []).append(f['permittivity'] / kt)
        used.setdefault(c, []).append(site_k(f) / kt)
    print(f"{s} K true {kt:.1f}, site {vel['site']['permittivity']:.1f}, {vel['site'].get('fitCount', 0)} fits, {truth['antenna']['frequencyMHz']} MHz")
    for c, ks in sorted(cats.items()):
        print(f"   {c:10s} {len(ks):3d} fits, K / K true: {' '.join(f'{k:.2f}' for k in sorted(ks)[:12])}")
print('pooled, K / K true (median, quartiles):')
for c in sorted(point):
    a, b = np.array(point[c]), np.array(used[c])
    print(f"  {c:10s} {len(a):4d} fits  point fit {np.median(a):.2f} ({np.quantile(a, .25):.2f}-{np.quantile(a, .75):.2f})"
          f"  site model's {np.nanmedian(b):.2f} ({np.nanquantile(b, .25):.2f}-{np.nanquantile(b, .75):.2f})")
