import { describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import { dataPicks, matchReadout, matchTimes, radiusThrough, traceAt, velocityThrough, type HandMatch } from '../src/client/match';
import { filterQueue, queueCounts, queueItems, stepIndex } from '../src/client/queue';
import type { Feature } from '../src/client/data';

describe('hand matching maths', () => {
  it('velocityThrough inverts the bistatic curve: a point on a curve of velocity v gives v back', () => {
    for (const v of [0.06, 0.1, 0.15, C_M_PER_NS, 0.4])
      for (const sep of [0, 0.16, 1])
        for (const r of [0, 0.1]) {
          const m: HandMatch = { line: 'L', x0M: 5, t0Ns: 20, velocityMPerNs: v, radiusM: r };
          const t = matchTimes(m, [1.3], sep)[0]!;
          expect(velocityThrough(20, 1.3, t, sep, r)).toBeCloseTo(v, 6);
          expect(velocityThrough(20, -1.3, t, sep, r)).toBeCloseTo(v, 6); // either flank
        }
  });

  it('radiusThrough inverts the curve in the radius at a fixed velocity', () => {
    for (const r of [0, 0.05, 0.3, 0.8]) {
      const m: HandMatch = { line: 'L', x0M: 0, t0Ns: 25, velocityMPerNs: 0.1, radiusM: r };
      const t = matchTimes(m, [0.9], 0.16)[0]!;
      expect(radiusThrough(25, 0.9, t, 0.1, 0.16)).toBeCloseTo(r, 6);
    }
  });

  it('an air event (straight rays at c, monostatic) reads K 1 and above ground; soil of K 9 reads K 9 and subsurface', () => {
    // air: a reflector d = 2.5 m away in air, t(x) = 2 sqrt(d^2 + x^2) / c (geometry, no model of ours)
    const d = 2.5;
    const t0 = (2 * d) / C_M_PER_NS;
    const x = 1.7;
    const v = velocityThrough(t0, x, (2 * Math.hypot(d, x)) / C_M_PER_NS, 0);
    const air = matchReadout({ line: 'L', x0M: 0, t0Ns: t0, velocityMPerNs: v, radiusM: 0 }, 0);
    expect(air.permittivity).toBeCloseTo(1, 6);
    expect(air.origin).toBe('above-ground');
    expect(air.apexDepthM).toBeCloseTo(d, 6);
    const vSoil = C_M_PER_NS / 3;
    const soil = matchReadout({ line: 'L', x0M: 0, t0Ns: 20, velocityMPerNs: vSoil, radiusM: 0 }, 0.16);
    expect(soil.permittivity).toBeCloseTo(9, 9);
    expect(soil.origin).toBe('subsurface');
    // bistatic depth: z = sqrt((v t / 2)^2 - (s / 2)^2)
    expect(soil.apexDepthM).toBeCloseTo(Math.sqrt(((vSoil * 20) / 2) ** 2 - 0.08 ** 2), 9);
  });

  it('traceAt is the inverse of the distances along the line', () => {
    const along = Float64Array.from([0, 0.05, 0.1, 0.2, 0.3]);
    expect(traceAt(along, 0.15)).toBeCloseTo(2.5, 12);
    expect(traceAt(along, -1)).toBe(0);
    expect(traceAt(along, 9)).toBe(4);
  });

  it('dataPicks takes the event times from the data, not from the guiding curve', () => {
    // a synthetic event on a curve of v = 0.1 m/ns; the guide is 5 % slower, the picks follow the event
    const nT = 81;
    const nS = 400;
    const dt = 0.1;
    const along = Float64Array.from({ length: nT }, (_, i) => i * 0.05);
    const truth: HandMatch = { line: 'L', x0M: 2, t0Ns: 15, velocityMPerNs: 0.1, radiusM: 0 };
    const data = new Float32Array(nT * nS);
    const ts = matchTimes(truth, Array.from(along, (x) => x - 2), 0);
    for (let i = 0; i < nT; i++) for (let s = 0; s < nS; s++) data[i * nS + s] = Math.exp(-(((s * dt - ts[i]!) / 0.3) ** 2));
    const guide = { ...truth, velocityMPerNs: 0.095 };
    const picks = dataPicks(guide, { data, nTraces: nT, nSamples: nS, dtNs: dt, timeZeroNs: 0 }, along, 1, 0, 1, 0.8);
    expect(picks.length).toBeGreaterThan(20);
    for (const p of picks) expect(p.timeNs).toBeCloseTo(ts[p.trace]!, 1);
  });
});

describe('review queue', () => {
  const f = (id: string, cls: string, top: number, db: number, origin = 'subsurface'): Feature => ({ type: 'Feature', geometry: null, properties: { id, class: cls, origin, depthTopM: top, depthBottomM: top + 0.2, strengthDb: db, confidence: 0.5 } });
  const features = [f('A1', 'utility', 0.5, 20), f('A2', 'clutter', 0.1, 12), f('A3', 'utility', 1.2, 30), f('A4', 'above-ground', 0.8, 25, 'above-ground')];
  const decisions = [
    { anomalyId: 'A1', decision: 'accept' },
    { anomalyId: 'A4', decision: 'reject' },
  ];

  it('filters by class, origin, decision, depth range and strength, and sorts', () => {
    const items = queueItems(features, decisions);
    expect(filterQueue(items, { cls: 'utility' }).map((q) => q.id)).toEqual(['A1', 'A3']);
    expect(filterQueue(items, { origin: 'above-ground' }).map((q) => q.id)).toEqual(['A4']);
    expect(filterQueue(items, { decision: 'undecided' }).map((q) => q.id)).toEqual(['A2', 'A3']);
    // depth range meets the anomaly's top..bottom
    expect(filterQueue(items, { minDepthM: 0.6, maxDepthM: 0.9 }).map((q) => q.id)).toEqual(['A1', 'A4']);
    expect(filterQueue(items, { minStrengthDb: 24 }).map((q) => q.id)).toEqual(['A3', 'A4']);
    expect(filterQueue(items, {}, 'depth').map((q) => q.id)).toEqual(['A2', 'A1', 'A4', 'A3']);
    expect(filterQueue(items, {}, 'strength').map((q) => q.id)).toEqual(['A3', 'A4', 'A1', 'A2']);
  });

  it('counts add up and next/previous wrap', () => {
    const items = queueItems(features, decisions);
    const c = queueCounts(items);
    expect(c).toEqual({ total: 4, reviewed: 2, left: 2, accepted: 1, rejected: 1 });
    expect(stepIndex(items, null, 1)).toBe(0);
    expect(stepIndex(items, 'A4', 1)).toBe(0);
    expect(stepIndex(items, 'A1', -1)).toBe(3);
    expect(stepIndex([], 'A1', 1)).toBe(-1);
  });
});
