#!/usr/bin/python3
"""Compare the anomalies of two output folders of `lamina process` (e.g. before and after a change).

Usage: /usr/bin/python3 scripts/compare-anomalies.py <out-before> <out-after>
Per slice member (each anomaly's outline in each depth slice it spans): matched when the other run has a
member in a slice whose depth range overlaps it whose outline lies within one grid cell of it (GDAL/OGR
polygon distance, in metres on a local equirectangular projection). Prints counts, the matched shares both
ways, and the matched shares of members flagged above-ground in both runs.
"""
import json
import math
import sys

from osgeo import ogr


def members(out):
    a = json.load(open(f"{out}/anomalies.geojson"))
    s = json.load(open(f"{out}/slices.json"))
    cell = s["cellSize"] * s["metresPerUnit"]
    ms = []
    for f in a["features"]:
        p = f["properties"]
        for m in p["members"]:
            ms.append({"id": p["id"], "origin": p["origin"], "top": m["topM"], "bottom": m["bottomM"], "outline": m["outline"]})
    return a["features"], ms, cell


def to_local(ms, lon0, lat0):
    k = math.cos(math.radians(lat0))

    def conv(c):
        if isinstance(c[0], (int, float)):
            return [(c[0] - lon0) * 111320 * k, (c[1] - lat0) * 110540]
        return [conv(x) for x in c]

    for m in ms:
        g = m["outline"]
        m["geom"] = ogr.CreateGeometryFromJson(json.dumps({"type": g["type"], "coordinates": conv(g["coordinates"])}))
        env = m["geom"].GetEnvelope()
        m["env"] = env


def matched(a, others, tol):
    for o in others:
        if o["bottom"] <= a["top"] or o["top"] >= a["bottom"]:
            continue
        ea, eo = a["env"], o["env"]
        if eo[0] > ea[1] + tol or eo[1] < ea[0] - tol or eo[2] > ea[3] + tol or eo[3] < ea[2] - tol:
            continue
        if a["geom"].Distance(o["geom"]) <= tol:
            return True
    return False


fa, ma, cell = members(sys.argv[1])
fb, mb, _ = members(sys.argv[2])
first = ma[0]["outline"]["coordinates"]
while not isinstance(first[0], (int, float)):
    first = first[0]
lon0, lat0 = first[0], first[1]
to_local(ma, lon0, lat0)
to_local(mb, lon0, lat0)
tol = cell * (1 + 1e-9)
ab = [matched(m, mb, tol) for m in ma]
ba = [matched(m, ma, tol) for m in mb]
flag = lambda fs: sum(1 for f in fs if f["properties"]["origin"] == "above-ground")
print(f"anomalies: before {len(fa)} ({flag(fa)} above-ground), after {len(fb)} ({flag(fb)} above-ground); cell {cell:.3f} m")
print(f"slice members: before {len(ma)}, after {len(mb)}")
print(f"before members with an after member within one cell (overlapping depth): {sum(ab)}/{len(ab)} = {100 * sum(ab) / len(ab):.1f} %")
print(f"after members with a before member within one cell (overlapping depth): {sum(ba)}/{len(ba)} = {100 * sum(ba) / len(ba):.1f} %")
for origin in ("subsurface", "above-ground"):
    sa = [x for x, m in zip(ab, ma) if m["origin"] == origin]
    sb = [x for x, m in zip(ba, mb) if m["origin"] == origin]
    if sa and sb:
        print(f"  {origin}: before->after {100 * sum(sa) / len(sa):.1f} % of {len(sa)}, after->before {100 * sum(sb) / len(sb):.1f} % of {len(sb)}")
