import { describe, expect, it } from 'vitest';
import { scoreRun, type ScoreTruth } from '../src';
import { feat, identity, k9Truth } from './fixtures';

const truth = k9Truth(
  [
    { id: 'pipe', kind: 'pipe', from: [0, 0, 1], to: [10, 0, 1], radiusM: 0.05 },
    { id: 'box', kind: 'compact', center: [20, 20, 0.5], radiusM: 0.2 },
  ],
  [{ id: 'post', kind: 'post', center: [50, 50] }],
);
const ring = (cx: number, cy: number, r: number) => ({
  type: 'Polygon',
  coordinates: [Array.from({ length: 33 }, (_, i) => [cx + r * Math.cos((i * Math.PI) / 16), cy + r * Math.sin((i * Math.PI) / 16)])],
});

describe('scoreRun', () => {
  it('covers the length of a pipe a centreline runs along, within the depth tolerance', () => {
    const targets = {
      type: 'FeatureCollection' as const,
      features: [
        feat('T1', { type: 'LineString', coordinates: [[0, 0.3], [5, 0.3]] }, { depthTopM: 0.9, depthBottomM: 1.1, origin: 'subsurface' }),
        // right place, wrong depth: no cover
        feat('T2', { type: 'LineString', coordinates: [[5, 0], [10, 0]] }, { depthTopM: 2, depthBottomM: 2.2, origin: 'subsurface' }),
        feat('T3', { type: 'Point', coordinates: [20.2, 20] }, { depthTopM: 0.4, depthBottomM: 0.6, origin: 'subsurface' }),
      ],
    };
    const r = scoreRun(targets, { type: 'FeatureCollection', features: [] }, truth, identity);
    const pipe = r.buried.find((b) => b.id === 'pipe')!;
    // samples every 0.1 m from 0 to 10 m; covered while within 0.5 + 0.05 m of the centreline, which
    // ends at (5, 0.3): up to x = 5 + sqrt(0.55^2 - 0.3^2) = 5.46, i.e. samples 0 .. 5.4 (55 of 101)
    expect(pipe.recall).toBeCloseTo(55 / 101, 9);
    expect(r.buried.find((b) => b.id === 'box')!.recall).toBe(1);
    expect(r.targets.find((t) => t.id === 'T2')!.kind).toBe('unmatched');
  });

  it("covers a big pipe's body, not only its axis: the radar sees the top", () => {
    // a 0.6 m pipe with its axis at 1.0 m: its top at 0.7 m. A target 0.4-0.5 m widened by
    // max(0.25, 0.25 x 1.0) reaches 0.75 m: it holds the top (0.7) but not the axis (1.0).
    const big: ScoreTruth = { ...truth, buried: [{ id: 'main', kind: 'pipe', from: [0, 0, 1], to: [10, 0, 1], radiusM: 0.3 }, { id: 'tank', kind: 'compact', center: [20, 20, 1.5], radiusM: 0.5, topDepthM: 0.9, bottomDepthM: 2.1 }] };
    const targets = {
      type: 'FeatureCollection' as const,
      features: [
        feat('T1', { type: 'LineString', coordinates: [[0, 0], [10, 0]] }, { depthTopM: 0.4, depthBottomM: 0.5, origin: 'subsurface' }),
        // 0.2-0.35 m widened by 0.25 reaches 0.6 m: above the top, no cover
        feat('T2', { type: 'LineString', coordinates: [[0, 0], [10, 0]] }, { depthTopM: 0.2, depthBottomM: 0.35, origin: 'subsurface' }),
        // the tank's top at 0.9 m (truth topDepthM), its centre at 1.5 m: 0.5-0.6 m widened by 0.375 reaches it
        feat('T3', { type: 'Point', coordinates: [20, 20] }, { depthTopM: 0.5, depthBottomM: 0.6, origin: 'subsurface' }),
      ],
    };
    const r = scoreRun(targets, { type: 'FeatureCollection', features: [] }, big, identity);
    expect(r.buried.find((b) => b.id === 'main')!.targets).toEqual(['T1']);
    expect(r.buried.find((b) => b.id === 'main')!.recall).toBe(1);
    expect(r.buried.find((b) => b.id === 'tank')!.targets).toEqual(['T3']);
    expect(r.targets.find((t) => t.id === 'T2')!.kind).toBe('unmatched');
  });

  it('counts an anomaly on the ring r = z c / v of a post as its reflection', () => {
    // K 9: r = 3 z; members at 0.5 and 0.6 m on rings of 1.5 and 1.8 m
    const member = (z: number) => ({ topM: z - 0.05, bottomM: z + 0.05, outline: ring(50, 50, 3 * z) });
    const anomalies = {
      type: 'FeatureCollection' as const,
      features: [
        feat('A1', ring(50, 50, 1.8), { depthTopM: 0.45, depthBottomM: 0.65, origin: 'above-ground', members: [member(0.5), member(0.6)] }),
        // same place, stationary at 1.5 m while z goes to 1 m: not on the locus
        feat('A2', ring(50, 50, 1.5), { depthTopM: 0.95, depthBottomM: 1.05, origin: 'subsurface', members: [{ topM: 0.95, bottomM: 1.05, outline: ring(50, 50, 1.5) }] }),
        // flagged but nowhere near a reflector: a false positive
        feat('A3', ring(80, 80, 0.3), { depthTopM: 0.45, depthBottomM: 0.55, origin: 'above-ground' }),
      ],
    };
    const r = scoreRun(undefined, anomalies, truth, identity);
    expect(r.aboveGround).toMatchObject({ truePositive: 1, falsePositive: 1, falseNegative: 0 });
    expect(r.aboveGround.precision).toBeCloseTo(0.5, 9);
    expect(r.anomalies.find((a) => a.id === 'A2')!.reflector).toBeNull();
  });
});
