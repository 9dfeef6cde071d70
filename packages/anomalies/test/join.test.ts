import { describe, expect, it } from 'vitest';
import { minCellDistance } from '../src';
import { py, rng } from './helpers';

// Reference: scipy.spatial.distance.cdist(...).min() over the cells' (row, column) pairs, Debian's /usr/bin/python3.
function scipyMin(a: Int32Array, b: Int32Array, width: number): number {
  const script = `import sys,json,numpy as np; from scipy.spatial.distance import cdist; d=json.loads(sys.stdin.read()); w=d["w"]
rc=lambda c: np.array([[k//w, k%w] for k in c],dtype=float)
print(json.dumps(float(cdist(rc(d["a"]),rc(d["b"])).min())))`;
  return JSON.parse(py(script, JSON.stringify({ a: Array.from(a), b: Array.from(b), w: width }))) as number;
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
});
