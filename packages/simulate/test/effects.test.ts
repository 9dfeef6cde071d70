import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import { buildModel, parseScenario, reflectionCoefficient, rng, simulateLine, velocityOf, type LineGeom } from '../src';
import { normalQuantile, pinkNoise, randomField } from '../src/fields';
import { pickPeak, quietScenario } from './helpers';

// The richer scene's effects, each against hand-computed geometry or a reference library.
const E0 = 500000;
const N0 = 4000000;

function lineAt(points: [number, number][], dir: [number, number] = [1, 0]): LineGeom {
  return { id: 'l01', index: 0, mx: Float64Array.from(points, (p) => p[0]), my: Float64Array.from(points, (p) => p[1]), dx: dir[0], dy: dir[1], positionSource: 'headers' };
}
function traces(over: Record<string, unknown>, points: [number, number][]) {
  const m = buildModel(quietScenario(over), 1, () => 0.5);
  const res = simulateLine(m, lineAt(points));
  return { m, res, tr: (j: number) => res.data.subarray(j * m.nSamples, (j + 1) * m.nSamples) };
}

describe('overhead objects', () => {
  it('a cable h above the line arrives at 2 sqrt(d^2 + h^2) / c (slant path; apex 2 h / c)', () => {
    // cable along y at x = 2 (local), 1.5 m high; traces at plan distances d = 0, 1, 2 (zero offset)
    const h = 1.5;
    const { m, tr } = traces({ plan: [{ id: 'cable', kind: 'overhead', heightM: h, path: [[E0 + 2, N0 - 20], [E0 + 2, N0 + 20]] }] }, [[2, 0], [1, 0], [0, 0]]);
    [0, 1, 2].forEach((d, j) => {
      const p = pickPeak(tr(j), m.dtNs);
      expect(p.t - m.timeZeroNs).toBeCloseTo((2 * Math.hypot(d, h)) / C_M_PER_NS, 1);
    });
  });

  it('an overhead point with a bistatic offset: |Tx P| + |P Rx| over c', () => {
    const h = 2, sep = 0.4;
    const m = buildModel(quietScenario({ antenna: { frequencyMHz: 400, separationM: sep, directWave: 0, groundWave: 0, beamExponent: 0, shielding: 0.5 }, plan: [{ id: 'lamp', kind: 'overhead', heightM: h, at: [E0 + 1, N0], radiusM: 0.01 }] }), 1, () => 0.5);
    const res = simulateLine(m, lineAt([[1, 0], [3, 0]]));
    for (const [j, mx] of [[0, 1], [1, 3]] as const) {
      const L = Math.hypot(mx - sep / 2 - 1, h) + Math.hypot(mx + sep / 2 - 1, h) - 2 * 0.01;
      expect(pickPeak(res.data.subarray(j * m.nSamples, (j + 1) * m.nSamples), m.dtNs).t - m.timeZeroNs).toBeCloseTo(L / C_M_PER_NS, 1);
    }
  });

  it('needs a height and exactly one of path or at', () => {
    expect(() => quietScenario({ plan: [{ id: 'c', kind: 'overhead', path: [[E0, N0], [E0 + 1, N0]] }] })).toThrow(/heightM/);
    expect(() => quietScenario({ plan: [{ id: 'c', kind: 'overhead', heightM: 2 }] })).toThrow(/path.*at/);
  });
});

describe('mesh fence', () => {
  it('adds a flat reflection at 2 d / c along a line parallel to it at distance d', () => {
    const d = 1.2;
    const { m, tr } = traces({ plan: [{ id: 'mesh', kind: 'fence', mesh: true, postSpacingM: 50, path: [[E0 - 30, N0 + d], [E0 + 30, N0 + d]] }] }, [[0, 0], [1, 0], [2, 0]]);
    for (let j = 0; j < 3; j++) {
      const p = pickPeak(tr(j), m.dtNs);
      expect(p.t - m.timeZeroNs).toBeCloseTo((2 * d) / C_M_PER_NS, 1);
      // metal mesh: reflectivity 0.9 by default, negative like the fence panels'
      expect(Math.abs(p.v)).toBeGreaterThan(0.05);
    }
  });
});

describe('big pipes', () => {
  it('an air-filled pipe returns its far wall 4 r / c after its crown, with the opposite sign', () => {
    const r = 0.4;
    const { m, tr } = traces({ buried: [{ id: 'duct', kind: 'pipe', from: [E0, N0 - 10, 1.5], to: [E0, N0 + 10, 1.5], radiusM: r, material: 'air', multiples: 1 }] }, [[0, 0]]);
    const v = velocityOf(9);
    const crown = m.timeZeroNs + (2 * (1.5 - r)) / v;
    const t = tr(0);
    const p1 = pickPeak(t, m.dtNs, Math.round((crown - 1) / m.dtNs), Math.round((crown + 1) / m.dtNs));
    const tEcho = crown + (4 * r) / C_M_PER_NS;
    const p2 = pickPeak(t, m.dtNs, Math.round((tEcho - 1) / m.dtNs), Math.round((tEcho + 1) / m.dtNs));
    expect(p1.t).toBeCloseTo(crown, 1);
    expect(p2.t).toBeCloseTo(tEcho, 1);
    expect(Math.sign(p2.v)).toBe(-Math.sign(p1.v));
    expect(Math.abs(p2.v / p1.v)).toBeCloseTo(0.6, 1);
  });
});

describe('rough ground', () => {
  it('delays everything in the soil by 2 a / c for an air gap a and adds a weak surface reflection', () => {
    const over = { buried: [{ id: 'p', kind: 'pipe', from: [E0, N0 - 10, 1], to: [E0, N0 + 10, 1], radiusM: 0.05, material: 'metal' }] };
    const flat = traces(over, [[0, 0]]);
    const rough = traces({ ...over, soil: { permittivity: 9, attenuationDbPerM: 0, roughness: { rmsM: 0.05, correlationM: 1 } } }, [[0, 0]]);
    const m = rough.m;
    const field = randomField(rng(m.scenario.seed, 'roughness'), 1);
    const gap = Math.abs(0.05 * field(0, 0));
    expect(gap).toBeGreaterThan(0.001);
    const t1 = pickPeak(flat.tr(0), m.dtNs, 500).t, t2 = pickPeak(rough.tr(0), m.dtNs, 500).t;
    expect(t2 - t1).toBeCloseTo((2 * gap) / C_M_PER_NS, 2);
    // surface reflection at t0 + 2a/c, weaker than the air-soil coefficient (sign of R(air -> soil))
    const s = pickPeak(rough.tr(0), m.dtNs, 0, 450);
    expect(s.t - m.timeZeroNs).toBeCloseTo((2 * gap) / C_M_PER_NS, 1);
    expect(Math.abs(s.v)).toBeLessThan(Math.abs(reflectionCoefficient(1, 9)));
  });
});

describe('patchy and dipping layers', () => {
  it('a patchy interface reflects on about (1 - patchiness) of the plan', () => {
    const pts: [number, number][] = Array.from({ length: 400 }, (_, i) => [(i % 20) * 1.5, Math.floor(i / 20) * 1.5]);
    const layer = { depthM: 1, permittivity: 16, patchiness: 0.6, patchSizeM: 2 };
    const { m, tr } = traces({ soil: { permittivity: 9, attenuationDbPerM: 0, layers: [layer] } }, pts);
    const tRef = m.timeZeroNs + 2 / velocityOf(9);
    const i0 = Math.round((tRef - 1.5) / m.dtNs), i1 = Math.round((tRef + 1.5) / m.dtNs);
    const full = Math.abs(pickPeak(traces({ soil: { permittivity: 9, attenuationDbPerM: 0, layers: [{ depthM: 1, permittivity: 16 }] } }, [[0, 0]]).tr(0), m.dtNs, i0, i1).v);
    const seen = pts.filter((_, j) => Math.abs(pickPeak(tr(j), m.dtNs, i0, i1).v) > 0.5 * full).length / pts.length;
    expect(seen).toBeGreaterThan(0.25);
    expect(seen).toBeLessThan(0.55);
  });
});

describe('coupling and noise', () => {
  it('time-zero steps move every arrival of the later traces by the same amount', () => {
    const over = { buried: [{ id: 'p', kind: 'pipe', from: [E0 - 10, N0 + 0, 1], to: [E0 + 10, N0, 1], radiusM: 0.05, material: 'metal' }], noise: { rms: 0, wow: 0, ringing: 0, clutterPerM2: 0, timeZeroStepsPerLine: 1, timeZeroStepNs: 2 } };
    const pts: [number, number][] = Array.from({ length: 20 }, (_, i) => [i * 0.1 - 1, 0]);
    const { m, res, tr } = traces(over, pts);
    for (let j = 0; j < pts.length; j++) expect(pickPeak(tr(j), m.dtNs).t - res.timeZeroNs[j]!).toBeCloseTo(2 / velocityOf(9) - (2 * 0.05) / velocityOf(9), 1);
    const steps = new Set(Array.from(res.timeZeroNs, (t) => t.toFixed(6)));
    expect(steps.size).toBe(2);
  });

  it('coupling scales the whole trace slowly along the line; pink noise has equal power per octave', () => {
    const over = { buried: [{ id: 'p', kind: 'pipe', from: [E0 - 10, N0, 1], to: [E0 + 10, N0, 1], radiusM: 0.05, material: 'metal' }], noise: { rms: 0, wow: 0, ringing: 0, clutterPerM2: 0, couplingGainRms: 0.3, couplingLengthM: 2 } };
    const pts: [number, number][] = Array.from({ length: 40 }, (_, i) => [i * 0.1 - 2, 0]);
    const { m, tr } = traces(over, pts);
    const amps = pts.map((_, j) => Math.abs(pickPeak(tr(j), m.dtNs).v));
    const spread = Math.max(...amps) / Math.min(...amps);
    expect(spread).toBeGreaterThan(1.05);
    // neighbouring traces 0.1 m apart differ little (correlation length 2 m)
    for (let j = 1; j < amps.length; j++) expect(Math.abs(amps[j]! / amps[j - 1]! - 1)).toBeLessThan(0.1);

    // 1/f: the power in each octave band is about the same (numpy's FFT as the reference spectrum)
    const x = pinkNoise(rng(1, 'pink'), 1 << 16);
    const py = `import sys, numpy as np
x = np.frombuffer(sys.stdin.buffer.read(), dtype='<f8')
p = np.abs(np.fft.rfft(x))**2
n = len(x)
print(' '.join(str(p[n >> (k + 1): n >> k].sum()) for k in range(2, 8)))`;
    const out = execFileSync('/usr/bin/python3', ['-c', py], { input: Buffer.from(x.buffer) }).toString().trim().split(' ').map(Number);
    const mean = out.reduce((a, b) => a + b, 0) / out.length;
    for (const v of out) expect(v / mean).toBeGreaterThan(0.6), expect(v / mean).toBeLessThan(1.5);
  });

  it('normalQuantile agrees with scipy.stats.norm.ppf (Debian python3-scipy)', () => {
    const ps = [0.001, 0.02, 0.1, 0.3, 0.5, 0.7, 0.95, 0.999];
    const ref = execFileSync('/usr/bin/python3', ['-c', `from scipy.stats import norm; print(' '.join(repr(norm.ppf(p)) for p in [${ps.join(',')}]))`]).toString().trim().split(' ').map(Number);
    ps.forEach((p, i) => expect(normalQuantile(p)).toBeCloseTo(ref[i]!, 7));
  });
});

describe('second survey direction', () => {
  it('adds lines across the first grid over the same rectangle, ids continuing', () => {
    const s = parseScenario({ ...quietScenario(), survey: { origin: [E0, N0], azimuthDeg: 0, lengthM: 4, widthM: 2, lineSpacingM: 1, traceSpacingM: 0.5, crossAzimuthDeg: 90 } });
    const m = buildModel(s, 1, () => 0.5);
    expect(m.lines.map((l) => l.id)).toEqual(['l01', 'l02', 'l03', 'l04', 'l05', 'l06', 'l07', 'l08']);
    const cross = m.lines.slice(3);
    // first grid runs north (+y) stepped east; the second runs east, stepped north every 1 m over y in [0, 4]
    expect(cross.map((l) => l.my[0])).toEqual([0, 1, 2, 3, 4]);
    for (const l of cross) {
      expect(Math.abs(l.dx)).toBeCloseTo(1, 12);
      expect(Math.min(...l.mx)).toBeCloseTo(0, 12);
      expect(Math.max(...l.mx)).toBeCloseTo(2, 12);
    }
    expect(() => parseScenario({ ...quietScenario(), survey: { ...s.survey, crossAzimuthDeg: 45 } })).toThrow(/right angles/);
  });
});
