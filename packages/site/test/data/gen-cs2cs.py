#!/usr/bin/python3
"""Reference coordinates from PROJ's cs2cs (Debian proj-bin) for test/crs-cs2cs.test.ts.

Forward: WGS84 lat/lon -> projected x/y; inverse: projected x/y -> WGS84 lat/lon, on a fixed grid of
invented points. cs2cs takes EPSG:4326 in lat, lon order. Prints JSON to stdout:
  /usr/bin/python3 gen-cs2cs.py > cs2cs-points.json
"""
import json
import subprocess

CASES = {
    # UTM zone 17N on WGS84, metres
    "EPSG:32617": {"lat": [33.9, 34.7, 35.5, 36.3], "lon": [-83.7, -81.2, -79.4, -78.1]},
    # NAD83 / North Carolina state plane, US survey feet
    "EPSG:2264": {"lat": [34.0, 34.9, 35.6, 36.4], "lon": [-83.9, -80.8, -78.6, -75.9]},
}


def cs2cs(src, dst, rows):
    text = "".join(f"{a!r} {b!r}\n" for a, b in rows)
    out = subprocess.run(["cs2cs", "-f", "%.9f", src, dst], input=text, capture_output=True, text=True, check=True).stdout
    return [tuple(float(v) for v in line.split()[:2]) for line in out.strip().splitlines()]


def main():
    version = subprocess.run(["cs2cs"], capture_output=True, text=True).stderr.splitlines()[0].strip()
    result = {"generator": "packages/site/test/data/gen-cs2cs.py", "proj": version, "crs": {}}
    for crs, grid in CASES.items():
        latlon = [(la, lo) for la in grid["lat"] for lo in grid["lon"]]
        xy = cs2cs("EPSG:4326", crs, latlon)
        forward = [{"lon": lo, "lat": la, "x": x, "y": y} for (la, lo), (x, y) in zip(latlon, xy)]
        # inverse from round numbers near the forward results, so both directions are checked independently
        grid_xy = [(round(x, -2) + 12.345, round(y, -2) - 6.789) for x, y in xy]
        back = cs2cs(crs, "EPSG:4326", grid_xy)
        inverse = [{"x": x, "y": y, "lat": la, "lon": lo} for (x, y), (la, lo) in zip(grid_xy, back)]
        result["crs"][crs] = {"forward": forward, "inverse": inverse}
    print(json.dumps(result, indent=1))


main()
