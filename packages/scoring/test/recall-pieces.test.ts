import { describe, expect, it } from 'vitest';
import { scoreRun } from '../src';
import { empty, feat, identity, k9Truth } from './fixtures';

// Recall counts the buried objects the data record (README "Recorded objects"): an object whose own
// response the simulator drew on no trace above three times the noise is left out of `linear` and
// `compact` and counted in `linearAll` / `compactAll`. Arithmetic on the definitions.

describe('scoreRun: recall over the recorded objects', () => {
  const truth = k9Truth([
      // found along its whole length, recorded on 40 traces
      { id: 'seen', kind: 'pipe', from: [0, 0, 1], to: [10, 0, 1], radiusM: 0.05, response: { traces: 40 } },
      // as long, deep and weak: recorded on no trace, not found
      { id: 'unseen', kind: 'pipe', from: [0, 20, 4], to: [10, 20, 4], radiusM: 0.01, response: { traces: 0 } },
      // a truth written elsewhere (no response): counted as recorded
      { id: 'other', kind: 'pipe', from: [0, 40, 1], to: [10, 40, 1], radiusM: 0.05 },
      { id: 'tank', kind: 'compact', center: [30, 0, 1], radiusM: 0.5, response: { traces: 0 } },
  ]);
  const seen = feat('T', { type: 'LineString', coordinates: [[0, 0], [10, 0]] }, { depthTopM: 0.9, depthBottomM: 1.1, origin: 'subsurface' });

  it('leaves the objects recorded on no trace out of recall and counts them in the All figures', () => {
    const r = scoreRun({ type: 'FeatureCollection', features: [seen] }, empty, truth, identity);
    expect(r.buried.map((b) => b.recorded)).toEqual([true, false, true, false]);
    // recorded pipes: 'seen' (all of its 10 m) and 'other' (none of its 10 m)
    expect(r.buriedRecall.linear).toBeCloseTo(0.5, 12);
    // all three pipes of 10 m: one found
    expect(r.buriedRecall.linearAll).toBeCloseTo(1 / 3, 12);
    // no recorded compact object: recall 1 by the empty-set rule; all: 0 of 1
    expect(r.buriedRecall.compact).toBe(1);
    expect(r.buriedRecall.compactAll).toBe(0);
    expect(r.buriedRecall.unrecorded).toBe(2);
    expect(r.buriedRecall.minimum).toBe(0);
  });

  it('keeps pieces per utility over every utility', () => {
    const under = feat('U', { type: 'LineString', coordinates: [[0, 20], [10, 20]] }, { depthTopM: 3.9, depthBottomM: 4.1, origin: 'subsurface' });
    const r = scoreRun({ type: 'FeatureCollection', features: [seen, under] }, empty, truth, identity);
    expect(r.precision.pieces.map((p) => p.id)).toEqual(['seen', 'unseen', 'other']);
    expect(r.precision.piecesMean).toBe(1);
  });
});

// Pieces per utility count the targets that run along it (README "Pieces per utility"): a linear target
// crossing it at more than 45 degrees is the crossing object's. Arithmetic on the definitions.
describe('scoreRun: pieces per utility along the utility', () => {
  const truth = k9Truth([
    { id: 'east', kind: 'pipe', from: [0, 0, 1], to: [10, 0, 1], radiusM: 0.05 },
    { id: 'north', kind: 'pipe', from: [5, -5, 1], to: [5, 5, 1], radiusM: 0.05 },
  ]);
  const line = (id: string, a: [number, number], b: [number, number]) => feat(id, { type: 'LineString', coordinates: [a, b] }, { depthTopM: 0.9, depthBottomM: 1.1, origin: 'subsurface' });

  it('two crossing pipes, each reported whole: one piece each (each target covers both at the crossing)', () => {
    const r = scoreRun({ type: 'FeatureCollection', features: [line('E', [0, 0], [10, 0]), line('N', [5, -5], [5, 5])] }, empty, truth, identity);
    expect(r.buried.map((b) => b.targets.length)).toEqual([2, 2]);
    expect(r.precision.pieces).toEqual([{ id: 'east', pieces: 1 }, { id: 'north', pieces: 1 }]);
    expect(r.precision.piecesMean).toBe(1);
  });

  it('counts every piece along a pipe, a compact target on it, and a piece 40 degrees off its axis', () => {
    const off = (() => {
      const a = (40 * Math.PI) / 180;
      return line('D', [8 - Math.cos(a), -Math.sin(a)], [8 + Math.cos(a), Math.sin(a)]);
    })();
    const box = feat('B', { type: 'Polygon', coordinates: [[[2, -0.3], [3, -0.3], [3, 0.3], [2, 0.3], [2, -0.3]]] }, { depthTopM: 0.9, depthBottomM: 1.1, origin: 'subsurface' });
    const r = scoreRun({ type: 'FeatureCollection', features: [line('A', [0, 0], [1.5, 0]), box, line('C', [6, 0], [7, 0]), off] }, empty, truth, identity);
    expect(r.precision.pieces.find((p) => p.id === 'east')!.pieces).toBe(4);
  });
});
