// sliceStatsOfRows (strips, radix-selected quantiles) against sliceStats of the whole slice, and the
// quantiles against numpy's default (linear) percentile (Debian numpy via /usr/bin/python3).
import { describe, expect, it } from 'vitest';
import { runPython } from '@lamina/test-utils';
import { sliceStats, sliceStatsOfRows } from '../src';

function random(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
}

const rowsOf = (values: Float32Array, width: number) => ({
  width,
  height: values.length / width,
  readRows: (_b: number, r0: number, r1: number) => values.subarray(r0 * width, r1 * width),
});

describe('sliceStatsOfRows', () => {
  it('gives the numbers of sliceStats (nodata, NaN, negatives, ties, -0) strip by strip', async () => {
    const rnd = random(5);
    for (const [width, height, strip] of [[37, 53, 7], [10, 1, 256], [64, 64, 1]] as const) {
      const v = new Float32Array(width * height);
      for (let i = 0; i < v.length; i++) {
        const u = rnd();
        v[i] = u < 0.1 ? -9999 : u < 0.12 ? Number.NaN : u < 0.2 ? 3 : u < 0.22 ? -0 : (rnd() - 0.3) * 10 ** (6 * rnd() - 3);
      }
      const whole = sliceStats(v, -9999);
      const rows = await sliceStatsOfRows(rowsOf(v, width), 0, -9999, strip);
      expect(rows).toEqual(whole);
    }
  });

  it('quantiles agree with numpy.percentile (linear)', async () => {
    const rnd = random(11);
    const v = Float32Array.from({ length: 5000 }, () => (rnd() < 0.5 ? -1 : 1) * rnd() ** 3 * 100);
    const s = await sliceStatsOfRows(rowsOf(v, 50), 0, -9999, 13);
    const py = `import sys,json,numpy as np\nv=np.array(json.load(sys.stdin),dtype=np.float32).astype(np.float64)\nprint(json.dumps([np.percentile(v,2),np.percentile(v,98)]))`;
    const [p2, p98] = JSON.parse(runPython(py, [], { input: JSON.stringify(Array.from(v)) })) as number[];
    expect(s.p2).toBeCloseTo(p2!, 9);
    expect(s.p98).toBeCloseTo(p98!, 9);
  });

  it('an empty slice has NaN figures and no valid cell', async () => {
    const s = await sliceStatsOfRows(rowsOf(new Float32Array(12).fill(-9999), 4), 0, -9999);
    expect(s.validCount).toBe(0);
    expect(s.p2).toBeNaN();
  });
});
