import { describe, expect, it } from 'vitest';
import { minCellDistance } from '../src';
import { minCellDistanceInJs } from '../src/join';
import { edgeCells } from '../src/split';
import { py, rng } from './helpers';

// Reference: scipy.spatial.distance.cdist(...).min() over the cells' (row, column) pairs, Debian's /usr/bin/python3.
function scipyMin(a: Int32Array, b: Int32Array, width: number): number {
  const script = `import sys,json,numpy as np; from scipy.spatial.distance import cdist; d=json.loads(sys.stdin.read()); w=d["w"]
rc=lambda c: np.array([[k//w, k%w] for k in c],dtype=float)
print(json.dumps(float(cdist(rc(d["a"]),rc(d["b"])).min())))`;
  return JSON.parse(py(script, JSON.stringify({ a: Array.from(a), b: Array.from(b), w: width }))) as number;
}


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
  it('agrees with scipy cdist on random cell sets (apart, interleaved, touching, one inside the other)', () => {
    const r = rng(5);
    const width = 40;
    const cells = (n: number, r0: number, r1: number, c0: number, c1: number) =>
      Int32Array.from(new Set(Array.from({ length: n }, () => (r0 + Math.floor(r() * (r1 - r0))) * width + c0 + Math.floor(r() * (c1 - c0))))).sort();
    const cases: [Int32Array, Int32Array][] = [
      [cells(30, 0, 10, 0, 10), cells(25, 15, 30, 20, 35)],
      [cells(30, 15, 30, 20, 35), cells(25, 0, 10, 0, 10)],
      [cells(60, 0, 30, 0, 40), cells(60, 0, 30, 0, 40)],
      [cells(40, 5, 25, 5, 15), cells(3, 12, 14, 30, 32)],
      [Int32Array.of(5 * width + 5), Int32Array.of(5 * width + 6)],
      [Int32Array.of(9 * width + 3), Int32Array.of(0, 39, 20 * width + 3)],
    ];
    for (const [a, b] of cases) expect(minCellDistance(a, b, width)).toBeCloseTo(scipyMin(a, b, width), 12);
  });

  it('equals the brute-force distance over all cell pairs (the exhaustive rule it replaces), in WebAssembly and in JavaScript', () => {
    let s = 12345;
    const rand = () => ((s = (s * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff);
    const width = 23, height = 17;
    for (let t = 0; t < 500; t++) {
      const a = blob(rand, width, height), b = blob(rand, width, height);
      let best = Infinity;
      for (const p of a)
        for (const q of b) best = Math.min(best, (Math.floor(p / width) - Math.floor(q / width)) ** 2 + ((p % width) - (q % width)) ** 2);
      expect(minCellDistance(a, b, width)).toBe(Math.sqrt(best));
      expect(minCellDistanceInJs(a, b, width)).toBe(Math.sqrt(best));
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
