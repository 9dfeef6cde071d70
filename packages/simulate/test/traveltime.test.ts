import { describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import { bistaticOnSegment, buildModel, reflectionCoefficient, simulateLine, velocityOf, type LineGeom } from '../src';
import { pickPeak, quietScenario } from './helpers';

const E0 = 500000;
const N0 = 4000000;

/** One line of traces at the given local (metre) midpoints, travelling east. */
function lineAt(points: [number, number][]): LineGeom {
  return { id: 'l01', index: 0, mx: Float64Array.from(points, (p) => p[0]), my: Float64Array.from(points, (p) => p[1]), dx: 1, dy: 0, positionSource: 'headers' };
}

function arrivals(over: Record<string, unknown>, points: [number, number][]): { t: number; v: number }[] {
  const s = quietScenario(over);
  const m = buildModel(s, 1, () => 0.5);
  const res = simulateLine(m, lineAt(points));
  const ns = m.nSamples;
  return points.map((_, j) => pickPeak(res.data.subarray(j * ns, (j + 1) * ns), m.dtNs));
}

describe('velocity and reflection', () => {
  it('v = c / sqrt(K): K 9 gives about 0.1 m/ns, as in the Davis & Annan (1989) table', () => {
    // Davis & Annan 1989, table of typical K and v: K 9 -> ~0.10 m/ns (value given in the brief);
    // fresh water K 80 -> 0.033 m/ns and air K 1 -> 0.30 m/ns (from memory).
    expect(velocityOf(9)).toBeCloseTo(0.1, 3);
    expect(velocityOf(80)).toBeCloseTo(0.033, 2);
    expect(velocityOf(1)).toBeCloseTo(0.3, 2);
  });
  it('normal-incidence reflection coefficient from the permittivity contrast', () => {
    // R = (sqrt K1 - sqrt K2) / (sqrt K1 + sqrt K2): air over water (K 81) -> (1 - 9) / 10 = -0.8 (hand computed).
    expect(reflectionCoefficient(1, 81)).toBeCloseTo(-0.8, 12);
    expect(reflectionCoefficient(9, 1)).toBeCloseTo(0.5, 12);
    expect(reflectionCoefficient(4, 4)).toBe(0);
  });
});

describe('bistatic travel times (hand-computed geometry)', () => {
  it('finds the reflection point of a pipe crossing the line', () => {
    // Pipe along y at x = 1, depth 1; Tx at (0.9, 0), Rx at (1.3, 0): by symmetry in y the point has y = 0, and
    // along x the path |Tx-P| + |P-Rx| is constant on the axis, so the sum is sqrt(0.1^2+1) + sqrt(0.3^2+1).
    const hit = bistaticOnSegment({ x: 0.9, y: 0, z: 0 }, { x: 1.3, y: 0, z: 0 }, 1, -5, 1, 1, 5, 1);
    expect(hit.sum).toBeCloseTo(Math.hypot(0.1, 1) + Math.hypot(0.3, 1), 9);
    expect(hit.u).toBeCloseTo(0.5, 6);
  });
  it('finds the specular point on a pipe along the line', () => {
    // Pipe along x at depth 1; Tx at x = 0, Rx at x = 0.4: specular point midway, path 2 sqrt(0.2^2 + 1).
    const hit = bistaticOnSegment({ x: 0, y: 0, z: 0 }, { x: 0.4, y: 0, z: 0 }, -5, 0, 1, 5, 0, 1);
    expect(hit.sum).toBeCloseTo(2 * Math.hypot(0.2, 1), 9);
  });

  it('a small buried sphere arrives at (|Tx-P| + |P-Rx|) / v after time-zero', () => {
    const s = 0.4;
    const d = 1.2;
    const points: [number, number][] = [[0, 0], [0.5, 0], [1, 0], [2, 0]];
    const got = arrivals(
      {
        antenna: { frequencyMHz: 400, separationM: s, directWave: 0, groundWave: 0, beamExponent: 0 },
        buried: [{ id: 'ball', kind: 'compact', shape: 'sphere', center: [E0, N0, d], radiusM: 0.001, material: 'metal' }],
      },
      points,
    );
    const v = velocityOf(9);
    points.forEach(([x], j) => {
      const tx = x - s / 2;
      const rx = x + s / 2;
      const expected = 5 + (Math.hypot(tx, d) + Math.hypot(rx, d) - 0.002) / v;
      expect(got[j]!.t).toBeCloseTo(expected, 2);
    });
  });

  it('a pipe reflects from its surface: t(x) = 2 (sqrt(x^2 + d^2) - a) / v, the cylinder-radius bias of hyperbola fits', () => {
    const d = 1.0;
    const a = 0.25;
    const points: [number, number][] = [[0, 0], [0.4, 0], [0.8, 0], [1.5, 0]];
    const got = arrivals({ buried: [{ id: 'p', kind: 'pipe', from: [E0, N0 - 10, d], to: [E0, N0 + 10, d], radiusM: a, material: 'metal' }] }, points);
    const v = velocityOf(9);
    points.forEach(([x], j) => {
      expect(got[j]!.t).toBeCloseTo(5 + (2 * (Math.hypot(x, d) - a)) / v, 2);
      // A point-diffractor hyperbola through the apex time would arrive later on the flanks.
      if (x > 0) expect(got[j]!.t).toBeLessThan(5 + (2 * Math.hypot(x, d - a)) / v - 0.05);
    });
  });

  it('metal and water-filled pipes reflect with the opposite sign to air-filled ones', () => {
    const pipe = (material: string) => ({ id: material, kind: 'pipe', from: [E0, N0 - 10, 0.8], to: [E0, N0 + 10, 0.8], radiusM: 0.1, material });
    const metal = arrivals({ buried: [pipe('metal')] }, [[0, 0]])[0]!;
    const water = arrivals({ buried: [pipe('water')] }, [[0, 0]])[0]!;
    const air = arrivals({ buried: [pipe('plastic')] }, [[0, 0]])[0]!;
    expect(metal.v).toBeLessThan(0);
    expect(water.v).toBeLessThan(0);
    expect(air.v).toBeGreaterThan(0);
    expect(Math.abs(metal.v)).toBeGreaterThan(Math.abs(water.v));
  });

  it('an above-ground post at horizontal distance r arrives at 2r/c; bistatic 2 sqrt(r^2 + (s/2)^2)/c', () => {
    const r = 3;
    const radius = 0.001;
    const post = { plan: [{ id: 'p1', kind: 'post', at: [E0, N0 + r], radiusM: radius, material: 'metal' }] };
    const mono = arrivals(post, [[0, 0]])[0]!;
    expect(mono.t).toBeCloseTo(5 + (2 * (r - radius)) / C_M_PER_NS, 2);
    const s = 0.5;
    const bi = arrivals({ ...post, antenna: { frequencyMHz: 400, separationM: s, directWave: 0, groundWave: 0 } }, [[0, 0]])[0]!;
    expect(bi.t).toBeCloseTo(5 + (2 * Math.hypot(r, s / 2) - 2 * radius) / C_M_PER_NS, 2);
  });

  it('a wall arrives from the nearest point of its face: 2 r / c, in soil at apparent depth r / sqrt(K)', () => {
    const r = 2.5;
    const got = arrivals({ plan: [{ id: 'w', kind: 'wall', path: [[E0 - 20, N0 - r], [E0 + 20, N0 - r]] }] }, [[0, 0]])[0]!;
    const t = got.t - 5;
    expect(t).toBeCloseTo((2 * r) / C_M_PER_NS, 2);
    // Converted with the soil velocity the event sits at z = v t / 2 = r / sqrt(K).
    expect((velocityOf(9) * t) / 2).toBeCloseTo(r / 3, 2);
  });

  it('direct air wave at s/c and ground wave at s/v', () => {
    const s = 0.6;
    const base = { recording: { sampleIntervalNs: 0.02, samples: 3000, timeZeroNs: 5 } };
    const air = arrivals({ ...base, antenna: { frequencyMHz: 400, separationM: s, directWave: 1, groundWave: 0 } }, [[0, 0]])[0]!;
    const ground = arrivals({ ...base, antenna: { frequencyMHz: 400, separationM: s, directWave: 0, groundWave: 1 } }, [[0, 0]])[0]!;
    expect(air.t).toBeCloseTo(5 + s / C_M_PER_NS, 2);
    expect(ground.t).toBeCloseTo(5 + s / velocityOf(9), 2);
  });

  it('a flat layer interface at depth d arrives at 2 sqrt(d^2 + (s/2)^2) / v', () => {
    const s = 0.3;
    const d = 1.5;
    const got = arrivals(
      { antenna: { frequencyMHz: 400, separationM: s, directWave: 0, groundWave: 0 }, soil: { permittivity: 9, attenuationDbPerM: 0, layers: [{ depthM: d, permittivity: 16 }] } },
      [[0, 0]],
    )[0]!;
    expect(got.t).toBeCloseTo(5 + (2 * Math.hypot(d, s / 2)) / velocityOf(9), 2);
    expect(got.v).toBeLessThan(0); // into a wetter layer: R < 0
  });

  it('targets below a layer travel at the layer velocities (vertical incidence: 2 d1/v1 + 2 d2/v2)', () => {
    const s = quietScenario({ soil: { permittivity: 4, attenuationDbPerM: 0, layers: [{ depthM: 0.5, permittivity: 16 }] }, buried: [{ id: 'p', kind: 'pipe', from: [E0, N0 - 10, 1.0], to: [E0, N0 + 10, 1.0], radiusM: 0.001, material: 'metal' }] });
    const m = buildModel(s, 1, () => 0.5);
    const res = simulateLine(m, lineAt([[0, 0]]));
    const tInterface = 5 + (2 * 0.5) / velocityOf(4);
    const expected = tInterface + (2 * (0.5 - 0.001)) / velocityOf(16);
    // Pick after the interface event, which arrives first.
    const from = Math.ceil((tInterface + 2.5) / m.dtNs);
    expect(pickPeak(res.data, m.dtNs, from).t).toBeCloseTo(expected, 2);
  });
});

describe('amplitudes', () => {
  it('soil attenuation: two-way loss of dB/m times path, on top of spreading', () => {
    const pipe = { id: 'p', kind: 'pipe', from: [E0, N0 - 10, 1.0], to: [E0, N0 + 10, 1.0], radiusM: 0.1, material: 'metal' };
    const lossless = arrivals({ buried: [pipe] }, [[0, 0]])[0]!;
    const lossy = arrivals({ buried: [pipe], soil: { permittivity: 9, attenuationDbPerM: 6 } }, [[0, 0]])[0]!;
    // Path in the soil 2 (d - a) = 1.8 m at 6 dB/m: 10.8 dB.
    expect(20 * Math.log10(Math.abs(lossy.v) / Math.abs(lossless.v))).toBeCloseTo(-10.8, 1);
  });
  it('the beam pattern fades hyperbola flanks faster than spreading alone', () => {
    const pipe = { id: 'p', kind: 'pipe', from: [E0, N0 - 10, 1.0], to: [E0, N0 + 10, 1.0], radiusM: 0.05, material: 'metal' };
    const flat = arrivals({ buried: [pipe] }, [[0, 0], [1, 0]]);
    const beamed = arrivals({ buried: [pipe], antenna: { frequencyMHz: 400, separationM: 0, directWave: 0, groundWave: 0, beamExponent: 1 } }, [[0, 0], [1, 0]]);
    const r0 = Math.abs(flat[1]!.v / flat[0]!.v);
    const r1 = Math.abs(beamed[1]!.v / beamed[0]!.v);
    // cos^2 of 45 degrees (each antenna cos^1) = 0.5.
    expect(r1 / r0).toBeCloseTo(0.5, 2);
  });
  it('above-ground reflectors through the shield are comparable to buried targets', () => {
    const over = {
      soil: { permittivity: 7.5, attenuationDbPerM: 5 },
      plan: [{ id: 'p1', kind: 'post', at: [E0 + 2, N0 + 2], radiusM: 0.04, material: 'metal' }],
      buried: [{ id: 'p', kind: 'pipe', from: [E0 - 1, N0 - 10, 0.8], to: [E0 - 1, N0 + 10, 0.8], radiusM: 0.05, material: 'metal' }],
    };
    const s = quietScenario(over);
    const m = buildModel(s, 1, () => 0.5);
    const res = simulateLine(m, lineAt([[-1, 0], [2, 0]]));
    const ns = m.nSamples;
    const pipe = pickPeak(res.data.subarray(0, ns), m.dtNs);
    const post = pickPeak(res.data.subarray(ns, 2 * ns), m.dtNs);
    const ratio = Math.abs(post.v / pipe.v);
    expect(ratio).toBeGreaterThan(0.2);
    expect(ratio).toBeLessThan(5);
  });
});
