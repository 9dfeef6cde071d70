import { describe, expect, it } from 'vitest';
import { cellShape, linkMembers, type Member } from '../src';
import { grid } from './helpers';

// Members of two neighbouring slices on a 0.1 m grid: bands 0.5 m wide (5 cells) from a common start.
const g = grid(300, 200);
const band = (c0: number, r0: number, lengthCells: number, azDeg: number): Int32Array => {
  const a = (azDeg * Math.PI) / 180;
  const ux = Math.sin(a), uy = -Math.cos(a);
  const out = new Set<number>();
  for (let t = 0; t < lengthCells; t += 0.25)
    for (let s = -2; s <= 2; s += 0.25) out.add(Math.round(r0 + t * uy - s * ux) * g.width + Math.round(c0 + t * ux + s * uy));
  return Int32Array.from(out).sort();
};
const member = (id: number, slice: number, cells: Int32Array): Member => {
  const shape = cellShape(cells, g);
  return { id, slice, topM: 0.2 * slice, bottomM: 0.2 * slice + 0.2, cells, scores: new Float32Array(cells.length).fill(10), x: 0, y: 0, areaM2: cells.length * 0.01, peakValue: 1, peakScore: 10, noiseEnergy: Number.NaN, strengthDb: Number.NaN, shape };
};
const shared = (a: Int32Array, b: Int32Array) => a.filter((k) => b.includes(k)).length;

describe('linking members of neighbouring slices', () => {
  it('two long thin utilities diverging at 20 degrees stay apart where they share a fifth to a half of the shorter; two pieces of one utility 3 degrees apart link', () => {
    // a 7 m band along the grid's x axis (azimuth 90) and a 3 m one at azimuth 110 from the same start
    const a = band(50, 100, 70, 90);
    const b = band(50, 100, 30, 110);
    const frac = shared(a, b) / Math.min(a.length, b.length);
    // the shared part lies between the link's two overlap levels (0.2 and, for crossing members, 0.5)
    expect(frac).toBeGreaterThan(0.2);
    expect(frac).toBeLessThan(0.5);
    const A = member(0, 0, a), B = member(1, 1, b);
    expect(A.shape.kind).toBe('linear');
    expect(B.shape.kind).toBe('linear');
    // their shapes fix their directions within atan(W / L): about 4 and 9 degrees, well under 20
    expect(linkMembers([A, B], g.width * g.height, g.cellSize)).toHaveLength(2);
    // it is the crossing rule that keeps them apart (the fixed 30 degrees before 2026-12-04 linked them)
    expect(linkMembers([A, B], g.width * g.height, g.cellSize, { crossingOverlap: 0.2 })).toHaveLength(1);
    // one utility: a 3 m piece 3 degrees off the 7 m one, sharing as much, links
    const c = band(50, 100, 30, 93);
    expect(shared(a, c) / Math.min(a.length, c.length)).toBeGreaterThan(0.2);
    expect(linkMembers([A, member(1, 1, c)], g.width * g.height, g.cellSize)).toHaveLength(1);
  });
});
