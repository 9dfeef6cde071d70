import { describe, expect, it } from 'vitest';
import { minCellDistance } from '../src/join';
import { edgeCells } from '../src/split';

// Random cell sets on a small grid: blobs (so that they have interiors), some touching the grid's
// columns' ends, some overlapping each other.
function blob(rand: () => number, width: number, height: number): Int32Array {
  const set = new Set<number>();
  const r0 = Math.floor(rand() * height), c0 = Math.floor(rand() * width);
  const rr = 1 + Math.floor(rand() * 5), rc = 1 + Math.floor(rand() * 5);
  for (let r = r0 - rr; r <= r0 + rr; r++)
    for (let c = c0 - rc; c <= c0 + rc; c++) if (r >= 0 && r < height && c >= 0 && c < width && rand() < 0.9) set.add(r * width + c);
  if (set.size === 0) set.add(r0 * width + c0);
  return Int32Array.from(set).sort();
}

describe('minCellDistance', () => {
  it('equals the brute-force distance over all cell pairs (the exhaustive rule it replaces)', () => {
    let s = 12345;
    const rand = () => ((s = (s * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff);
    const width = 23, height = 17;
    for (let t = 0; t < 500; t++) {
      const a = blob(rand, width, height), b = blob(rand, width, height);
      let best = Infinity;
      for (const p of a)
        for (const q of b) best = Math.min(best, (Math.floor(p / width) - Math.floor(q / width)) ** 2 + ((p % width) - (q % width)) ** 2);
      expect(minCellDistance(a, b, width)).toBe(Math.sqrt(best));
    }
  });

  it('keeps the cells with a neighbour outside the set: the ring of a filled square, and the grid columns ends', () => {
    const width = 10;
    const square = Int32Array.from({ length: 16 }, (_, i) => (2 + (i >> 2)) * width + 3 + (i & 3)).sort();
    expect(Array.from(edgeCells(square, width))).toHaveLength(12);
    // a full row across the grid: every cell lacks its up and down neighbours
    const row = Int32Array.from({ length: width }, (_, i) => 4 * width + i);
    expect(edgeCells(row, width)).toEqual(row);
  });
});
