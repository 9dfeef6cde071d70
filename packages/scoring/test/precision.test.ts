import { C_M_PER_NS } from '@lamina/velocity';
import { describe, expect, it } from 'vitest';
import { scoreRun, type ScoreTruth } from '../src';
import { permittivityAt, ringsArea, surveyedAreaM2 } from '../src/precision';
import { feat, identity, k9Truth } from './fixtures';

// Hand-built fixtures: every expected value below is arithmetic on the frozen definitions (README).
const C = C_M_PER_NS;
const fc = (features: ReturnType<typeof feat>[]) => ({ type: 'FeatureCollection' as const, features });
const rect = (x0: number, y0: number, x1: number, y1: number) => ({ type: 'Polygon', coordinates: [[[x0, y0], [x1, y0], [x1, y1], [x0, y1], [x0, y0]]] });
const ring = (cx: number, cy: number, r: number) => ({
  type: 'Polygon',
  coordinates: [Array.from({ length: 65 }, (_, i) => [cx + r * Math.cos((i * Math.PI) / 32), cy + r * Math.sin((i * Math.PI) / 32)])],
});
const sub = { origin: 'subsurface' };

const truth = k9Truth(
  [
    { id: 'pipe', kind: 'pipe', from: [0, 0, 1], to: [10, 0, 1], radiusM: 0.05 },
    { id: 'box', kind: 'compact', center: [20, 20, 0.5], radiusM: 0.2 },
  ],
  [{ id: 'post', kind: 'post', center: [50, 50] }],
);

describe('target precision', () => {
  // two pieces on the pipe (2 m2 and 1 m2), one on the box (0.25 m2), one on the post's locus at 0.5 m
  // (r = 3 z = 1.5 m: a thin ring, area about 0), one clutter block far from everything (4 m2)
  const targets = fc([
    feat('P1', rect(0, -0.5, 2, 0.5), { depthTopM: 0.9, depthBottomM: 1.1, ...sub }),
    feat('P2', rect(5, -0.25, 7, 0.25), { depthTopM: 0.9, depthBottomM: 1.1, ...sub }),
    feat('B', rect(19.75, 19.75, 20.25, 20.25), { depthTopM: 0.4, depthBottomM: 0.6, ...sub }),
    feat('R', ring(50, 50, 1.5), { depthTopM: 0.45, depthBottomM: 0.55, ...sub }),
    feat('X', rect(30, 0, 32, 2), { depthTopM: 0.2, depthBottomM: 1.7, ...sub }),
    // flagged above-ground by the tool: not a target the precision counts
    feat('F', rect(40, 0, 41, 1), { depthTopM: 0.2, depthBottomM: 0.3, origin: 'above-ground' }),
  ]);
  const r = scoreRun(targets, fc([]), truth, identity);
  const p = r.precision;

  it('by count: targets covering a buried object / targets', () => {
    expect(p.targets).toBe(5);
    expect([p.buriedTargets, p.airTargets, p.clutterTargets]).toEqual([3, 1, 1]);
    expect(p.byCount).toBeCloseTo(3 / 5, 12);
  });

  it('by area: plan area of matching targets / plan area of all (shoelace, m2)', () => {
    const ringArea = ringsArea([[ring(50, 50, 1.5).coordinates[0] as [number, number][]]]);
    // a regular 64-gon of circumradius 1.5: (64/2) r^2 sin(2 pi / 64)
    expect(ringArea).toBeCloseTo(32 * 2.25 * Math.sin((2 * Math.PI) / 64), 9);
    expect(p.buriedAreaM2).toBeCloseTo(2 + 1 + 0.25, 9);
    expect(p.areaM2).toBeCloseTo(3.25 + ringArea + 4, 9);
    expect(p.byArea).toBeCloseTo(3.25 / (7.25 + ringArea), 9);
  });

  it('pieces per utility: distinct targets covering the pipe', () => {
    expect(p.pieces).toEqual([{ id: 'pipe', pieces: 2 }]);
    expect(p.piecesMean).toBe(2);
    expect(p.piecesMax).toBe(2);
  });

  it('largest target: area and depth extent', () => {
    expect(p.largest!.id).toBe('R');
    expect(p.largest!.depthExtentM).toBeCloseTo(0.1, 12);
    const noRing = scoreRun(fc(targets.features.filter((f) => f.properties.id !== 'R')), fc([]), truth, identity).precision;
    expect(noRing.largest).toMatchObject({ id: 'X', areaM2: 4 });
    expect(noRing.largest!.depthExtentM).toBeCloseTo(1.5, 12);
  });

  it('no targets: precision 1 by count and by area, no pieces', () => {
    const e = scoreRun(fc([]), fc([]), truth, identity).precision;
    expect([e.byCount, e.byArea, e.piecesMean, e.piecesMax]).toEqual([1, 1, null, 0]);
  });
});

describe('clutter per 100 m2 of surveyed area', () => {
  it('counts the cells within the cover of the lines once, also for two survey directions', () => {
    // 11 lines 1 m apart over [0, 10] x [0, 10], cover 0.5 m: the square grown by 0.5 m in y and x
    const ns = Array.from({ length: 11 }, (_, i) => [[i, 0], [i, 10]] as [number, number][]);
    const a = surveyedAreaM2(ns, 1, 0.5, 0.05);
    // [-0.5, 10.5] in x, and [0, 10] in y plus two half-discs' worth at the line ends (within the cells' resolution)
    expect(a).toBeGreaterThan(11 * 10 - 0.5);
    expect(a).toBeLessThan(11 * 10 + 11 * Math.PI * 0.25 + 1);
    const ew = Array.from({ length: 11 }, (_, i) => [[0, i], [10, i]] as [number, number][]);
    expect(surveyedAreaM2([...ns, ...ew], 1, 0.5, 0.05)).toBeLessThan(11 * 11 + 1);
    // US survey feet: the same lines in feet give the same area in m2
    const ft = 0.3048006096012192;
    const nsFt = ns.map((l) => l.map(([x, y]) => [x / ft, y / ft] as [number, number]));
    expect(surveyedAreaM2(nsFt, ft, 0.5, 0.05)).toBeCloseTo(a, 6);
  });

  it('divides the clutter targets by the surveyed area', () => {
    const lines = Array.from({ length: 11 }, (_, i) => [[30 + 0.5 * i, -5], [30 + 0.5 * i, 5]] as [number, number][]);
    const targets = fc([feat('X1', rect(31, 0, 31.5, 0.5), { depthTopM: 0.2, depthBottomM: 0.3, ...sub }), feat('X2', rect(32, 1, 32.5, 1.5), { depthTopM: 0.2, depthBottomM: 0.3, ...sub })]);
    const r = scoreRun(targets, fc([]), truth, identity, { survey: { lines } });
    // cover 0.25 m (half the 0.5 m spacing): x in [29.75, 35.25] by y in [-5, 5] (+ rounded ends)
    expect(r.precision.surveyedAreaM2!).toBeGreaterThan(5.5 * 10 - 0.1);
    expect(r.precision.surveyedAreaM2!).toBeLessThan(5.5 * 10 + 11 * Math.PI * 0.0625 + 0.5);
    expect(r.precision.clutterPer100M2!).toBeCloseTo((100 * 2) / r.precision.surveyedAreaM2!, 12);
    expect(scoreRun(targets, fc([]), truth, identity).precision.clutterPer100M2).toBeNull();
  });
});

describe('air flags per anomaly', () => {
  const member = (z: number, r: number) => ({ topM: z - 0.05, bottomM: z + 0.05, outline: ring(50, 50, r) });
  const anomalies = fc([
    // on the post's locus (K 9: r = 3 z), flagged and not flagged
    feat('L1', ring(50, 50, 1.5), { depthTopM: 0.45, depthBottomM: 0.55, origin: 'above-ground', members: [member(0.5, 1.5)] }),
    feat('L2', ring(50, 50, 2.4), { depthTopM: 0.75, depthBottomM: 0.85, ...sub, members: [member(0.8, 2.4)] }),
    // real: on the pipe, on no locus; one wrongly flagged
    feat('R1', rect(1, -0.2, 3, 0.2), { depthTopM: 0.9, depthBottomM: 1.1, origin: 'above-ground' }),
    feat('R2', rect(4, -0.2, 6, 0.2), { depthTopM: 0.9, depthBottomM: 1.1, ...sub }),
    feat('R3', rect(7, -0.2, 9, 0.2), { depthTopM: 0.9, depthBottomM: 1.1, ...sub }),
    feat('R4', rect(19.9, 19.9, 20.1, 20.1), { depthTopM: 0.45, depthBottomM: 0.55, ...sub }),
    // neither: not counted in either figure
    feat('N', rect(70, 70, 71, 71), { depthTopM: 0.45, depthBottomM: 0.55, origin: 'above-ground' }),
  ]);
  it('recall over anomalies on a locus; share of real anomalies flagged', () => {
    const a = scoreRun(undefined, anomalies, truth, identity).precision.airFlags;
    expect(a).toMatchObject({ onLocus: 2, onLocusFlagged: 1, real: 4, realFlagged: 1 });
    expect(a.recall).toBeCloseTo(0.5, 12);
    expect(a.realFlaggedShare).toBeCloseTo(0.25, 12);
  });

  it('tabulates properties.class against the truth match; absent class scores as none', () => {
    const withClass = fc(anomalies.features.map((f, i) => ({ ...f, properties: { ...f.properties, ...(i < 2 ? { class: 'above-ground' } : i < 5 ? { class: 'utility' } : {}) } })));
    const c = scoreRun(undefined, withClass, truth, identity).precision.classes;
    expect(c['above-ground']).toEqual({ buried: 0, air: 2, ambiguous: 0, unmatched: 0 });
    expect(c.utility).toEqual({ buried: 3, air: 0, ambiguous: 0, unmatched: 0 });
    expect(c.none).toEqual({ buried: 1, air: 0, ambiguous: 0, unmatched: 1 });
    expect(c.clutter).toEqual({ buried: 0, air: 0, ambiguous: 0, unmatched: 0 });
    const plain = scoreRun(undefined, anomalies, truth, identity).precision.classes;
    expect(plain.none).toEqual({ buried: 4, air: 2, ambiguous: 0, unmatched: 1 });
  });
});

describe('site K error', () => {
  it('relative error of the fitted site K against the top layer; per object in a layered truth', () => {
    const layered: ScoreTruth = {
      ...truth,
      soil: {
        permittivity: 9,
        velocityMPerNs: C / 3,
        layers: [
          { topM: 0, bottomM: 0.8, permittivity: 9, velocityMPerNs: C / 3 },
          { topM: 0.8, bottomM: null, permittivity: 16, velocityMPerNs: C / 4 },
        ],
      },
    };
    const runModel = { kind: 'layered' as const, layers: [{ topM: 0, bottomM: 0.6, velocityMPerNs: C / 3.3, permittivity: 10.89 }, { topM: 0.6, bottomM: 3, velocityMPerNs: C / 3.9, permittivity: 15.21 }] };
    const k = scoreRun(undefined, fc([]), layered, identity, { runModel, runPermittivity: 10.89 }).precision.siteK;
    expect(k.truth).toBe(9);
    expect(k.relError!).toBeCloseTo(10.89 / 9 - 1, 12);
    // pipe at 1 m: truth K 16 below 0.8 m, run K 15.21 below 0.6 m; box at 0.5 m: 9 vs 10.89
    expect(k.atObjects.find((o) => o.id === 'pipe')!.relError).toBeCloseTo(15.21 / 16 - 1, 12);
    expect(k.atObjects.find((o) => o.id === 'box')!.relError).toBeCloseTo(10.89 / 9 - 1, 12);
    expect(permittivityAt(5, runModel)).toBe(15.21);
    const uniform = scoreRun(undefined, fc([]), truth, identity).precision.siteK;
    expect(uniform).toEqual({ truth: 9, fitted: null, relError: null, atObjects: [] });
  });
});
