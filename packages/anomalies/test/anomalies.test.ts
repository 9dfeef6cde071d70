import { describe, expect, it } from 'vitest';
import { components, extractAnomalies, outlineArea, robustScores, robustStats, traceOutline, cellShape } from '../src';
import { grid, py, rng, synthStack } from './helpers';

describe('robust normalisation', () => {
  it('median and MAD agree with numpy', () => {
    // reference: numpy.median (Debian python3-numpy); MAD = median(|x - median|)
    const r = rng(7);
    const v = Float32Array.from({ length: 5001 }, () => -Math.log(1 - r()));
    v[10] = -9999;
    v[20] = NaN;
    const s = robustStats(v, -9999);
    const ref = JSON.parse(
      py(
        'import sys,json,numpy as np; a=np.array(json.loads(sys.stdin.read()),dtype=np.float32).astype(np.float64); a=a[np.isfinite(a)&(a!=-9999)]; m=np.median(a); print(json.dumps([m,np.median(np.abs(a-m))]))',
        JSON.stringify(Array.from(v, (x) => (Number.isNaN(x) ? null : x))).replace(/null/g, 'NaN'),
      ),
    );
    expect(s.count).toBe(4999);
    expect(s.median).toBeCloseTo(ref[0], 6);
    expect(s.mad).toBeCloseTo(ref[1], 6);
  });

  it('scores a normal sample to unit scale and is invariant to scaling', () => {
    // 1.4826 MAD estimates sigma for a normal (Rousseeuw & Croux 1993)
    const r = rng(3);
    const v = Float32Array.from({ length: 20000 }, () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r()));
    const z = robustScores(v, -9999);
    let ss = 0;
    for (const x of z) ss += x * x;
    expect(Math.sqrt(ss / z.length)).toBeCloseTo(1, 1);
    for (const k of [1e-9, 1e9]) {
      const zk = robustScores(Float32Array.from(v, (x) => x * k), -9999);
      for (let i = 0; i < 100; i++) expect(zk[i]).toBeCloseTo(z[i]!, 3);
    }
  });

  it('a constant slice scores zero, not NaN', () => {
    const z = robustScores(new Float32Array(10).fill(2), -9999);
    expect([...z]).toEqual(new Array(10).fill(0));
  });
});

describe('connected components', () => {
  it('matches scipy.ndimage.label with 8-connectivity and hysteresis', () => {
    // reference: scipy.ndimage.label(mask, structure=np.ones((3,3))) (Debian python3-scipy)
    const w = 60, h = 40;
    const r = rng(11);
    const s = Float32Array.from({ length: w * h }, () => r() * 6);
    const ours = components(s, w, h, 5, 3, 3).map((c) => Array.from(c));
    const ref: number[][] = JSON.parse(
      py(
        `import sys,json,numpy as np
from scipy import ndimage
a=np.array(json.loads(sys.stdin.read()),dtype=np.float32).reshape(${h},${w})
lab,n=ndimage.label(a>=3,structure=np.ones((3,3)))
out=[]
for k in range(1,n+1):
  m=(lab==k)
  if m.sum()>=3 and (a[m]>=5).any(): out.append(np.flatnonzero(m.ravel()).tolist())
print(json.dumps(out))`,
        JSON.stringify(Array.from(s)),
      ),
    );
    const key = (c: number[]) => c.join(',');
    expect(ours.map(key).sort()).toEqual(ref.map(key).sort());
  });
});

describe('outlines', () => {
  it('are valid polygons whose area is the cell area, by GEOS (GDAL/OGR)', () => {
    // reference: ogr.Geometry.IsValid() and GetArea() (Debian python3-gdal, GEOS)
    const g = grid(30, 20, 0.5);
    const r = rng(5);
    const cellsets: number[][] = [];
    for (let t = 0; t < 6; t++) {
      const set: number[] = [];
      for (let k = 0; k < g.width * g.height; k++) if (r() < 0.45) set.push(k);
      cellsets.push(set);
    }
    // a ring with a hole and two cells touching only at a corner
    cellsets.push([0 * 30 + 0, 1 * 30 + 1]);
    cellsets.push([...[0, 1, 2, 30, 32, 60, 61, 62]]);
    const outs = cellsets.map((c) => traceOutline(c, g));
    const ref: [boolean, number][] = JSON.parse(
      py(
        `import sys,json
from osgeo import ogr
print(json.dumps([[ogr.CreateGeometryFromJson(json.dumps(o)).IsValid(), ogr.CreateGeometryFromJson(json.dumps(o)).GetArea()] for o in json.loads(sys.stdin.read())]))`,
        JSON.stringify(outs),
      ),
    );
    outs.forEach((o, i) => {
      expect(ref[i]![0]).toBe(true);
      expect(ref[i]![1]).toBeCloseTo(cellsets[i]!.length * 0.25, 6);
      expect(outlineArea(o)).toBeCloseTo(cellsets[i]!.length * 0.25, 6);
    });
    expect(outs[6]!.type).toBe('MultiPolygon');
    const hole = outs[7]!;
    expect(hole.type === 'Polygon' && hole.coordinates.length).toBe(2);
  });
});

describe('shape', () => {
  it('a filled a x b rectangle measures a by b (uniform variance L^2/12)', () => {
    const g = grid(100, 100, 0.1);
    const cells: number[] = [];
    for (let r = 40; r < 50; r++) for (let c = 10; c < 70; c++) cells.push(r * 100 + c);
    const s = cellShape(cells, g);
    expect(s.lengthM).toBeCloseTo(6, 6);
    expect(s.widthM).toBeCloseTo(1, 6);
    expect(s.directionDeg).toBeCloseTo(90, 6); // east-west
    expect(s.kind).toBe('linear');
  });

  it('direction and eigenvalues agree with numpy.linalg.eigh on a diagonal band', () => {
    const g = grid(80, 80, 0.1);
    const cells: number[] = [];
    for (let r = 0; r < 80; r++) for (let c = 0; c < 80; c++) if (Math.abs(r - c) <= 2 && r > 5 && r < 70) cells.push(r * 80 + c);
    const s = cellShape(cells, g, { metresPerUnit: 1 });
    const ref = JSON.parse(
      py(
        `import sys,json,numpy as np
c=np.array(json.loads(sys.stdin.read())); x=(c%80+0.5)*0.1; y=-(c//80+0.5)*0.1
w,v=np.linalg.eigh(np.cov(np.vstack([x,y]),bias=True)+np.eye(2)*0.01/12)
az=np.degrees(np.arctan2(v[0,1],v[1,1]))%180
print(json.dumps([float(np.sqrt(12*w[1])),float(np.sqrt(12*w[0])),float(az)]))`,
        JSON.stringify(cells),
      ),
    );
    expect(s.lengthM).toBeCloseTo(ref[0], 6);
    expect(s.widthM).toBeCloseTo(ref[1], 6);
    expect(s.directionDeg).toBeCloseTo(ref[2], 6);
    // north-west to south-east, near azimuth 135 degrees
    expect(Math.abs(s.directionDeg - 135)).toBeLessThan(1);
  });
});

describe('extraction and linking', () => {
  const g = grid(120, 100, 0.1);
  const depths = [0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0];
  const x0 = g.originX, y0 = g.originY;
  // a pipe (Gaussian ridge, sigma 0.15 m) along y = y0 - 3 at depth 0.55 +- 0.12; a compact target; a band moving with depth
  const stack = synthStack(g, depths, 0.1, (x, y, z) => {
    const pipe = 25 * Math.exp(-((y - (y0 - 3)) ** 2) / (2 * 0.15 ** 2)) * Math.exp(-((z - 0.55) ** 2) / (2 * 0.08 ** 2)) * (x > x0 + 1 && x < x0 + 11 ? 1 : 0);
    const blob = 25 * Math.exp(-((x - (x0 + 9)) ** 2 + (y - (y0 - 8)) ** 2) / (2 * 0.2 ** 2)) * Math.exp(-((z - 0.8) ** 2) / (2 * 0.1 ** 2));
    const band = 15 * Math.exp(-((x - (x0 + 1 + 3 * z)) ** 2) / (2 * 0.2 ** 2)) * (y < y0 - 5 && y > y0 - 9.5 ? 1 : 0);
    return pipe + blob + band;
  });
  const ex = extractAnomalies(stack, { metresPerUnit: 1 });

  it('links a stationary pipe into one linear 3D anomaly with its depth range', () => {
    const pipes = ex.anomalies.filter((a) => a.shape.kind === 'linear' && Math.abs(a.shape.directionDeg - 90) < 5);
    expect(pipes.length).toBe(1);
    const p = pipes[0]!;
    expect(p.depthTopM).toBeLessThanOrEqual(0.45 + 1e-9);
    expect(p.depthBottomM).toBeGreaterThanOrEqual(0.65 - 1e-9);
    expect(p.depthBottomM).toBeLessThanOrEqual(0.85 + 1e-9);
    expect(p.shape.lengthM).toBeGreaterThan(8);
    const cl = p.centreline!;
    for (const [, y] of cl) expect(Math.abs(y - (y0 - 3))).toBeLessThan(0.1);
    for (const m of p.members) expect(Math.abs(m.y - (y0 - 3))).toBeLessThan(0.05);
  });

  it('finds the compact target at its place and depth', () => {
    const blobs = ex.anomalies.filter((a) => Math.hypot(a.members[0]!.x - (x0 + 9), a.members[0]!.y - (y0 - 8)) < 0.3);
    expect(blobs.length).toBe(1);
    expect(blobs[0]!.shape.kind).toBe('compact');
    expect(blobs[0]!.depthTopM).toBeLessThan(0.8);
    expect(blobs[0]!.depthBottomM).toBeGreaterThan(0.8);
  });

  it('links the moving band (shift 0.3 m per slice, width ~0.5 m) and keeps one member per slice', () => {
    const band = ex.anomalies.filter((a) => a.members.some((m) => m.shape.kind === "linear" && (m.shape.directionDeg < 5 || m.shape.directionDeg > 175)));
    expect(band.length).toBe(1);
    const b = band[0]!;
    expect(new Set(b.members.map((m) => m.slice)).size).toBe(b.members.length);
    expect(b.members.length).toBe(depths.length);
    b.members.forEach((m) => expect(m.x - x0).toBeCloseTo(1 + 3 * (m.topM + m.bottomM) / 2, 1));
  });

  it('background noise alone yields few anomalies', () => {
    const noise = extractAnomalies(synthStack(g, depths, 0.1, () => 0, 9));
    expect(noise.anomalies.length).toBeLessThan(3);
  });
});
