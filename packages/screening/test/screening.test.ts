import { C_M_PER_NS, depthAtVerticalTimeNs, verticalTwoWayTimeNs } from '@lamina/velocity';
import { describe, expect, it } from 'vitest';
import type { SliceGrid } from '@lamina/slices';
import { airRadiusM, airRate, combine, forecastLoci, reflectorsOf, screenSite, type ScreenedAnomaly } from '../src';
import { constantVelocity, feature, identity, segDist, surveyLines, synthStack } from './synth';

const C = C_M_PER_NS;

describe('air-wave physics', () => {
  it('z = r v / c: K 9 puts a reflector 3 m away at 1 m depth', () => {
    // Davis & Annan (1989): K 9 -> v 0.10 m/ns; r = z c / v
    const v = C / 3;
    const vel = constantVelocity(v);
    expect(airRadiusM(1, vel.model)).toBeCloseTo(3, 9);
    expect(airRate(0.5, vel.model)).toBeCloseTo(3, 9);
    // air: K 1 -> v = c, locus radius equals depth
    expect(airRadiusM(0.7, constantVelocity(C).model)).toBeCloseTo(0.7, 9);
  });

  it('layered model: time-depth round trip and r = c t / 2', () => {
    const model = {
      kind: 'layered' as const,
      layers: [
        { topM: 0, bottomM: 0.5, velocityMPerNs: 0.12, permittivity: (C / 0.12) ** 2 },
        { topM: 0.5, bottomM: 3, velocityMPerNs: 0.08, permittivity: (C / 0.08) ** 2 },
      ],
    };
    // two-way time through 0.5 m at 0.12 and 0.5 m at 0.08: 2*0.5/0.12 + 2*0.5/0.08 ns
    expect(verticalTwoWayTimeNs(model, 1)).toBeCloseTo(1 / 0.12 + 1 / 0.08, 9);
    for (const z of [0.1, 0.5, 0.9, 2.5, 4]) expect(depthAtVerticalTimeNs(model, verticalTwoWayTimeNs(model, z))).toBeCloseTo(z, 9);
    expect(airRadiusM(1, model)).toBeCloseTo((C * (1 / 0.12 + 1 / 0.08)) / 2, 9);
    expect(airRate(0.7, model)).toBeCloseTo(C / 0.08, 9);
  });

  it('bistatic: a separation s lengthens the shallow locus (exact at z = 0: r = c s / 2v)', () => {
    const vel = constantVelocity(0.1);
    expect(airRadiusM(1e-9, vel.model, 0.5)).toBeCloseTo((C * 0.25) / 0.1, 5);
    expect(airRadiusM(3, vel.model, 0.5)).toBeCloseTo((C / 0.1) * Math.hypot(3, 0.25), 9);
  });

  it('combines evidence as logistic log-odds', () => {
    const v = combine([]);
    expect(v.origin).toBe('subsurface');
    expect(v.pAboveGround).toBeCloseTo(1 / (1 + Math.E), 9);
  });
});

describe('fence posts', () => {
  it('are placed at the start, every postSpacingM and at the end', () => {
    const f = feature('F1', 'fence', { type: 'LineString', coordinates: [[0, 0], [3, 0], [3, 4.5]] }, { postSpacingM: 1.5 });
    const posts = reflectorsOf([f], 1).find((r) => r.source === 'posts')!;
    expect(Array.from(posts.points)).toEqual([0, 0, 1.5, 0, 3, 0, 3, 1.5, 3, 3, 3, 4.5]);
    // in US survey feet the spacing in metres converts to units
    const ft = 1200 / 3937;
    const pf = reflectorsOf([{ ...f, geometry: { type: 'LineString', coordinates: [[0, 0], [30, 0]] } }], ft).find((r) => r.source === 'posts')!;
    expect(pf.points[2]).toBeCloseTo(1.5 / ft, 9);
  });
});

/**
 * A synthetic site: K 9 soil (c/v = 3), slices 0.15..1.35 m, cell 0.1 m, lines every 0.5 m.
 * Above ground: a post P, a wall W (east-west), a fence F with posts every 2 m, an unsurveyed post U.
 * Buried: a pipe parallel to the wall 8 m from it, a pipe crossing the wall's band obliquely, a compact target
 * near the post (inside its ring at the target's depth), and a regular row of compact targets every 2 m far from the fence.
 */
function site(mpu: number) {
  const u = 1 / mpu; // metres -> units
  const g: SliceGrid = { crs: 'local', originX: 500 * u, originY: 900 * u, cellSize: 0.1 * u, width: 240, height: 200, nodata: -9999 };
  const X = (m: number) => g.originX + m * u, Y = (m: number) => g.originY - m * u; // metres from the top-left
  const depths = Array.from({ length: 13 }, (_, i) => 0.15 + 0.1 * i);
  const P: [number, number] = [X(5), Y(5)];
  const W: [[number, number], [number, number]] = [[X(2), Y(19.5)], [X(14), Y(19.5)]];
  const F: [[number, number], [number, number]] = [[X(23.5), Y(1)], [X(23.5), Y(19)]];
  const U: [number, number] = [X(14), Y(1)];
  const rate = 3;
  const ring = (d: number, z: number, amp: number) => (amp / (1 + rate * z)) * Math.exp(-((d - rate * z) ** 2) / (2 * 0.15 ** 2));
  const gauss = (d: number, s: number) => Math.exp(-(d * d) / (2 * s * s));
  const stack = synthStack(g, depths, 0.1, (x, y, z) => {
    const xm = (x - g.originX) * mpu, ym = (g.originY - y) * mpu;
    let v = 0;
    v += ring(Math.hypot(x - P[0], y - P[1]) * mpu, z, 60);
    if (xm > 2.5 && xm < 13.5 && ym < 19.5) v += ring(19.5 - ym, z, 60);
    for (let s = 1; s <= 19; s += 2) v += ring(Math.hypot(xm - 23.5, ym - s), z, 60);
    v += ring(Math.hypot(x - U[0], y - U[1]) * mpu, z, 60);
    // buried pipe parallel to the wall, 8 m south of it (ym = 11.5), depth 0.6
    if (xm > 3 && xm < 13) v += 20 * gauss(ym - 11.5, 0.15) * gauss(z - 0.6, 0.08);
    // oblique pipe crossing the wall's band (at ym 16.65 in the slice at 0.95 m) at depth 0.95
    v += 20 * gauss(segDist(xm, ym, [3, 14], [12, 18.8]), 0.15) * gauss(z - 0.95, 0.08);
    // compact target near the post, inside the ring at its own depth: 0.75 m depth, 1.3 m east of P
    // (the ring is at 2.25 m there). One exactly on the ring at its own depth merges with it: a known limit.
    v += 25 * gauss(Math.hypot(xm - 6.3, ym - 5), 0.2) * gauss(z - 0.75, 0.08);
    // regular row every 2 m (like the posts), far from the fence, at 0.5 m
    for (let s = 3; s <= 17; s += 2) v += 25 * gauss(Math.hypot(xm - 17, ym - s), 0.2) * gauss(z - 0.5, 0.08);
    return v;
  });
  const plan = [
    feature('P1', 'post', { type: 'Point', coordinates: P }),
    feature('W1', 'wall', { type: 'LineString', coordinates: W }),
    feature('F1', 'fence', { type: 'LineString', coordinates: F }, { postSpacingM: 2 }),
  ];
  // the fence line in the plan starts at the first post (ym = 1)
  return { g, X, Y, stack, plan, P, U, lines: surveyLines(g, 0.5 * u, 0.05 * u), velocity: constantVelocity(C / 3) };
}

function at(screened: ScreenedAnomaly[], x: number, y: number, tolUnits: number) {
  return screened.filter((s) => s.anomaly.members.some((m) => Math.hypot(m.x - x, m.y - y) < tolUnits));
}

for (const mpu of [1, 1200 / 3937]) {
  describe(`screening a synthetic site (metres per unit ${mpu.toFixed(4)})`, () => {
    const s = site(mpu);
    const u = 1 / mpu;
    const res = screenSite({ stack: s.stack, plan: s.plan, velocity: s.velocity, lines: s.lines, metresPerUnit: mpu, toWgs84: identity });
    const sc = res.screened;
    const isAir = (a: ScreenedAnomaly) => a.verdict.origin === 'above-ground';

    it('runs in seconds', () => {
      expect(res.summary.elapsedMs).toBeLessThan(20000);
    });

    it('flags the post ring, the wall band and the fence posts above-ground', () => {
      const airish = sc.filter((a) => {
        const m = a.anomaly.members[0]!;
        const xm = (m.x - s.g.originX) * mpu, ym = (s.g.originY - m.y) * mpu;
        return xm > 20.5 || ym > 15.5 && xm < 14 || Math.hypot(xm - 5, ym - 5) < 4.5 && !(Math.hypot(xm - 6.3, ym - 5) < 0.6);
      });
      const frac = airish.filter(isAir).length / airish.length;
      expect(airish.length).toBeGreaterThanOrEqual(3);
      expect(frac).toBeGreaterThanOrEqual(0.9);
      const wall = sc.filter((a) => a.evidence.some((e) => e.featureId === 'W1' && e.test === 'edge-alignment' && e.passed));
      expect(wall.length).toBeGreaterThan(0);
      expect(sc.some((a) => a.evidence.some((e) => e.test === 'move-out-slope' && e.featureId === 'P1' && e.passed))).toBe(true);
    });

    it('keeps the buried pipe, the oblique pipe and the compact target on the ring subsurface', () => {
      const pipe = at(sc, s.X(8), s.Y(11.5), 0.3 * u);
      expect(pipe.length).toBeGreaterThan(0);
      for (const a of pipe) expect(a.verdict.origin).toBe('subsurface');
      const oblique = at(sc, s.X(5.5), s.Y(15.3), 0.5 * u).filter((a) => a.anomaly.shape.kind === 'linear');
      expect(oblique.length).toBeGreaterThan(0);
      for (const a of oblique) expect(a.verdict.origin).toBe('subsurface');
      const onRing = sc.filter((a) => a.anomaly.members.some((m) => Math.hypot(m.x - s.X(6.3), m.y - s.Y(5)) < 0.3 * u) && a.anomaly.shape.kind === 'compact' && a.anomaly.areaM2 < 2);
      expect(onRing.length).toBeGreaterThan(0);
      for (const a of onRing) expect(a.verdict.origin).toBe('subsurface');
    });

    it('keeps the regular row far from the fence subsurface', () => {
      for (let k = 3; k <= 17; k += 2) {
        const row = at(sc, s.X(17), s.Y(k), 0.3 * u);
        expect(row.length).toBeGreaterThan(0);
        for (const a of row) expect(a.verdict.origin).toBe('subsurface');
      }
    });

    it('flags the unsurveyed post and back-projects it to within 0.5 m', () => {
      const hits = sc.filter((a) => a.evidence.some((e) => e.test === 'unsurveyed-obstruction' && e.passed));
      expect(hits.length).toBeGreaterThan(0);
      const best = hits.map((a) => a.evidence.find((e) => e.test === 'unsurveyed-obstruction')!.geometry!);
      const d = Math.min(...best.map((g) => (g.type === 'Point' ? Math.hypot(g.coordinates[0] - s.U[0], g.coordinates[1] - s.U[1]) * mpu : Infinity)));
      expect(d).toBeLessThan(0.5);
    });

    it('reports the unsurveyed-obstruction test without weight unless countUnsurveyed (0 of 34 unsurveyed objects caught on the field bench)', () => {
      const ev = sc.flatMap((a) => a.evidence.filter((e) => e.test === 'unsurveyed-obstruction' && e.passed));
      expect(ev.length).toBeGreaterThan(0);
      for (const e of ev) expect(e.weight).toBe(0);
      const counted = screenSite({ stack: s.stack, plan: s.plan, velocity: s.velocity, lines: s.lines, metresPerUnit: mpu, toWgs84: identity }, { countUnsurveyed: true }).screened;
      const hits = counted.filter((a) => a.evidence.some((e) => e.test === 'unsurveyed-obstruction' && e.passed));
      expect(hits.length).toBeGreaterThan(0);
      for (const a of hits) expect(a.evidence.find((e) => e.test === 'unsurveyed-obstruction')!.weight).toBeGreaterThan(0);
      expect(hits.some((a) => a.verdict.origin === 'above-ground')).toBe(true);
    });

    it('writes the fixed GeoJSON properties', () => {
      for (const f of res.anomalies.features) {
        for (const k of ['id', 'depthTopM', 'depthBottomM', 'origin', 'confidence', 'evidence', 'kind', 'areaM2', 'directionDeg', 'slices', 'peakValue'])
          expect(f.properties).toHaveProperty(k);
        const c = f.properties.confidence as number;
        expect(c).toBeGreaterThanOrEqual(0.5);
        expect(c).toBeLessThanOrEqual(1);
        if (f.properties.kind === 'linear') expect((f.properties.centreline as { type: string }).type).toBe('LineString');
      }
    });

    it('forecasts the post ring at r = 3 z in every slice', () => {
      const ring = res.forecast.features.filter((f) => f.properties.featureId === 'P1');
      expect(ring.length).toBe(s.stack.slices.length);
      for (const f of ring) expect(f.properties.radiusM as number).toBeCloseTo(3 * (f.properties.depthM as number), 9);
      // a vertex of the band's outer ring lies within half a band plus a cell of r
      const f5 = ring[5]!;
      const geom = f5.geometry as { type: 'Polygon'; coordinates: number[][][] };
      const d = Math.hypot(geom.coordinates[0]![0]![0]! - s.P[0], geom.coordinates[0]![0]![1]! - s.P[1]) * mpu;
      expect(Math.abs(d - (f5.properties.radiusM as number))).toBeLessThanOrEqual((f5.properties.bandHalfWidthM as number) + 0.15);
    });
  });
}

describe('forecast from lines only', () => {
  it('clips the loci to the surveyed strip', () => {
    const lines = [{ id: 'a', x: Float64Array.from({ length: 101 }, (_, i) => i * 0.1), y: new Float64Array(101) }];
    const plan = [feature('P', 'post', { type: 'Point', coordinates: [5, 2] })];
    const fc = forecastLoci(plan, constantVelocity(C / 3), lines, 1, identity, { depthStepM: 0.2, maxDepthM: 1.2, coverM: 0.25 });
    // ring radius 3z reaches the line (2 m away) from z ~ 0.6 m on
    const slices = fc.features.map((f) => f.properties.slice as number);
    expect(Math.min(...slices)).toBeGreaterThanOrEqual(2);
    for (const f of fc.features) {
      const g = f.geometry as { type: string; coordinates: number[][][] | number[][][][] };
      const ys = JSON.stringify(g.coordinates).match(/-?\d+(\.\d+)?/g)!.map(Number).filter((_, i) => i % 2 === 1);
      for (const y of ys) expect(Math.abs(y)).toBeLessThanOrEqual(0.5);
    }
  });
});

describe('line spacing', () => {
  it('lineSpacingM is the upper median over lines of the distance from the middle trace to the nearest other line (brute force)', async () => {
    const { lineSpacingM, lineSpacingOfM } = await import('../src');
    const { mulberry32 } = await import('@lamina/random');
    const r = mulberry32(9);
    // 7 wandering lines of our own, one longer than 2000 traces (every 2nd trace taken from it)
    const lines = Array.from({ length: 7 }, (_, j) => {
      const n = j === 3 ? 4500 : 300 + 40 * j;
      const x = Float64Array.from({ length: n }, (_, t) => t * 0.02 + 0.01 * r());
      const y = Float64Array.from({ length: n }, (_, t) => j * 0.55 + 0.15 * Math.sin(t / 50 + j) + 0.01 * r());
      return { id: `L${j}`, x, y };
    });
    const d: number[] = [];
    lines.forEach((a, i) => {
      const m = a.x.length >> 1;
      let best = Infinity;
      lines.forEach((b, j) => {
        if (j === i) return;
        const step = Math.max(1, Math.floor(b.x.length / 2000));
        for (let k = 0; k < b.x.length; k += step) best = Math.min(best, Math.hypot(b.x[k]! - a.x[m]!, b.y[k]! - a.y[m]!));
      });
      d.push(best * 0.3048);
    });
    d.sort((p, q) => p - q);
    expect(lineSpacingM(lines, 0.3048)).toBe(d[d.length >> 1]);
    const starts = Int32Array.from([0, ...lines.map((l) => l.x.length)].map((_, i, a) => a.slice(0, i + 1).reduce((s, v) => s + v, 0)));
    const coords = (l: number) => Float64Array.from({ length: 2 * lines[l]!.x.length }, (_, k) => (k % 2 ? lines[l]!.y[k >> 1]! : lines[l]!.x[k >> 1]!));
    expect(lineSpacingOfM({ lineStarts: starts, line: coords }, 0.3048)).toBe(d[d.length >> 1]);
  });
});
