import { describe, expect, it } from 'vitest';
import { scoreRun } from '../src';
import { empty, feat, identity, k9Truth } from './fixtures';

describe('scoreRun over the surveyed length', () => {
  // a pipe from x = 0 to 20 m; survey lines cross it at x = 5 .. 15 every 0.5 m (cover = half the spacing)
  const truth = k9Truth([{ id: 'pipe', kind: 'pipe', from: [0, 0, 1], to: [20, 0, 1], radiusM: 0.05 }]);
  const lines = Array.from({ length: 21 }, (_, i) => [[5 + 0.5 * i, -5], [5 + 0.5 * i, 5]] as [number, number][]);
  const target = feat('T', { type: 'LineString', coordinates: [[5, 0], [15, 0]] }, { depthTopM: 0.9, depthBottomM: 1.1, origin: 'subsurface' });

  it('counts only samples within half the line spacing of a line, and reports the full length beside it', () => {
    const r = scoreRun({ type: 'FeatureCollection', features: [target] }, empty, truth, identity, { survey: { lines } });
    const b = r.buried[0]!;
    // surveyed: x in [4.75, 15.25] -> samples 4.8 .. 15.2 (105 of 201); covered: within 0.55 m of [5, 15]
    // -> 4.5 .. 15.5, so every surveyed sample is covered (arithmetic on the definitions)
    expect(b.recall).toBe(1);
    expect(b.surveyedLengthM).toBeCloseTo((20 * 105) / 201, 9);
    // full length: samples 4.5 .. 15.5 = 111 of 201
    expect(b.recallFullLength).toBeCloseTo(111 / 201, 9);
    expect(r.buriedRecall.linearFullLength).toBeCloseTo(111 / 201, 9);
  });

  it('without survey lines, recall is over the whole length (as before)', () => {
    const r = scoreRun({ type: 'FeatureCollection', features: [target] }, empty, truth, identity);
    expect(r.buried[0]!.recall).toBeCloseTo(111 / 201, 9);
    expect(r.buried[0]!.surveyedLengthM).toBeCloseTo(20, 9);
  });

  it("reads a linear target's properties.outline as its plan extent", () => {
    const wide = feat('W', { type: 'LineString', coordinates: [[0, 3], [20, 3]] }, {
      depthTopM: 0.9, depthBottomM: 1.1, origin: 'subsurface',
      outline: { type: 'Polygon', coordinates: [[[0, -1], [20, -1], [20, 4], [0, 4], [0, -1]]] },
    });
    const r = scoreRun({ type: 'FeatureCollection', features: [wide] }, empty, truth, identity);
    expect(r.buried[0]!.recall).toBe(1);
  });
});
