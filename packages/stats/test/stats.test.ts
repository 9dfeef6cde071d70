import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { median, medianAbsDeviation, medianHigh, medianInPlace, medianLow, quantile, quantileInPlace, quantileSorted, selectInPlace, selectNear, weightedMedian } from '../src';

// Reference: numpy 1.24 on Debian's /usr/bin/python3 (not the python3 on PATH).
const PY = '/usr/bin/python3';
function numpy(expr: string, data: unknown): number[] {
  const code = `import sys,json,numpy as np; d=json.load(sys.stdin); a=np.array(d,dtype=np.float64); print(json.dumps([float(x) for x in ${expr}]))`;
  return JSON.parse(execFileSync(PY, ['-c', code], { input: JSON.stringify(data) }).toString()) as number[];
}

function seeded(n: number, seed: number): Float64Array {
  let s = seed;
  return Float64Array.from({ length: n }, () => ((s = (s * 16807) % 2147483647) / 2147483647) * 20 - 7);
}

const qs = [0, 0.02, 0.25, 0.5, 0.73, 0.98, 1];

describe('median and MAD against numpy', () => {
  for (const n of [1, 2, 3, 10, 11, 1000, 1001]) {
    it(`n = ${n}`, () => {
      const v = seeded(n, n + 7);
      const [med, mad] = numpy('[np.median(a), np.median(np.abs(a - np.median(a)))]', [...v]);
      expect(median(v)).toBe(med);
      expect(medianInPlace(Float32Array.from(v))).toBeCloseTo(numpy('[np.median(a.astype(np.float32).astype(np.float64))]', [...v])[0]!, 12);
      expect(medianAbsDeviation(v)).toBeCloseTo(mad!, 12);
      // a guess where the selection starts gives the same median, whatever it is
      for (const guess of [med!, med! + 0.5, -100, 100, v[0]!, Infinity, NaN]) expect(medianInPlace(v.slice(), guess)).toBe(med);
    });
  }
  it('median ignores NaN like numpy.nanmedian, and is NaN for nothing', () => {
    const v = [3, NaN, 1, 2, NaN, 10];
    // JSON has no NaN: numpy gets null, which np.array(dtype=float64) reads as nan
    expect(median(v)).toBe(numpy('[np.nanmedian(a)]', v.map((x) => (Number.isNaN(x) ? null : x)))[0]);
    expect(median([])).toBeNaN();
    expect(median([NaN])).toBeNaN();
  });
  it('does not modify its input; the in-place form reorders only', () => {
    const v = seeded(101, 3);
    const copy = v.slice();
    median(v);
    expect(v).toEqual(copy);
    const w = v.slice();
    medianInPlace(w);
    expect(Array.from(w).sort((a, b) => a - b)).toEqual(Array.from(copy).sort((a, b) => a - b));
  });
});

describe('quantiles against numpy.quantile (method "linear")', () => {
  for (const n of [1, 2, 5, 1000, 1001]) {
    it(`n = ${n}`, () => {
      const v = seeded(n, 11 * n);
      const ref = numpy(`np.quantile(a, ${JSON.stringify(qs)})`, [...v]);
      const sorted = v.slice().sort();
      qs.forEach((q, i) => {
        expect(quantile(v, q)).toBeCloseTo(ref[i]!, 12);
        expect(quantileSorted(sorted, q)).toBeCloseTo(ref[i]!, 12);
        expect(quantileInPlace(v.slice(), q)).toBe(quantileSorted(sorted, q));
      });
    });
  }
  it('is NaN for an empty array', () => {
    expect(quantile([], 0.5)).toBeNaN();
    expect(quantileInPlace(new Float64Array(0), 0.5)).toBeNaN();
  });
});

describe('selectNear against numpy.sort', () => {
  it('finds the k-th smallest whatever the guess, with smaller or equal values before k and larger or equal after', () => {
    const v = seeded(301, 5).map((x) => Math.round(x * 4) / 4); // ties
    const sorted = numpy('np.sort(a)', [...v]);
    for (const k of [0, 1, 150, 299, 300]) {
      for (const guess of [-100, -3, 0.25, 2, 100, sorted[k]!]) {
        const a = v.slice();
        expect(selectNear(a, k, 0, a.length - 1, guess)).toBe(sorted[k]);
        for (let i = 0; i < k; i++) expect(a[i]).toBeLessThanOrEqual(a[k]!);
        for (let i = k + 1; i < a.length; i++) expect(a[i]).toBeGreaterThanOrEqual(a[k]!);
      }
    }
    // a sub-range only
    const a = Float32Array.from(v);
    const part = numpy('np.sort(a[40:141])', [...a]);
    expect(selectNear(a, 90, 40, 140, 1)).toBe(part[50]);
    expect(Array.from(a.subarray(0, 40))).toEqual(Array.from(Float32Array.from(v).subarray(0, 40)));
  });
});

describe('selection', () => {
  it('puts the k-th smallest at k, smaller left, larger right (with ties)', () => {
    const v = Float64Array.from(seeded(500, 5), (x) => Math.round(x));
    const sorted = v.slice().sort();
    for (const k of [0, 1, 249, 250, 498, 499]) {
      const a = v.slice();
      expect(selectInPlace(a, k)).toBe(sorted[k]);
      for (let i = 0; i < k; i++) expect(a[i]!).toBeLessThanOrEqual(a[k]!);
      for (let i = k + 1; i < a.length; i++) expect(a[i]!).toBeGreaterThanOrEqual(a[k]!);
    }
  });
});

describe('weighted median', () => {
  it('equals the median of an odd sample with equal weights, and follows the heavy value', () => {
    expect(weightedMedian([5, 1, 3, 2, 4], [1, 1, 1, 1, 1])).toBe(3);
    expect(weightedMedian([1, 2, 3], [1, 1, 10])).toBe(3);
    expect(weightedMedian([1, 2], [0, 0])).toBeNaN();
  });
  it('repeating a value w times is the same as weighting it w (integer weights, lower median of numpy)', () => {
    const vals = [4.5, -1, 2, 7, 3.25];
    const w = [3, 1, 2, 1, 4];
    const expanded = vals.flatMap((v, i) => Array.from({ length: w[i]! }, () => v)).sort((a, b) => a - b);
    // the smallest value whose cumulative count reaches half of 11 is the 6th of 11: numpy's median of an odd count
    expect(weightedMedian(vals, w)).toBe(numpy('[np.median(a)]', expanded)[0]);
  });
});

describe('quantileInPlace on float32 with many ties', () => {
  it('equals the sorted linear quantile, odd and even sizes', () => {
    let s = 9;
    const r = () => (s = (s * 16807) % 2147483647) / 2147483647;
    for (const n of [1, 2, 3, 10, 101, 5000]) {
      const v = Float32Array.from({ length: n }, () => Math.fround(Math.floor(r() * 50) / 7));
      const sorted = Float64Array.from(v).sort();
      for (const q of [0, 0.02, 0.5, 0.98, 1]) expect(quantileInPlace(v.slice(), q)).toBe(quantileSorted(sorted, q));
    }
  });
});

describe('low and high medians against Python statistics.median_low / median_high', () => {
  for (const n of [1, 2, 7, 8, 500]) {
    it(`n = ${n}`, () => {
      const v = Array.from(seeded(n, 3 * n + 1), (x) => Math.round(x * 4) / 4);
      const ref = JSON.parse(
        execFileSync(PY, ['-c', 'import sys,json,statistics as s; d=json.load(sys.stdin); print(json.dumps([s.median_low(d), s.median_high(d)]))'], { input: JSON.stringify(v) }).toString(),
      ) as number[];
      expect(medianLow(v)).toBe(ref[0]);
      expect(medianHigh(v)).toBe(ref[1]);
    });
  }
  it('are NaN for nothing', () => {
    expect(medianLow([])).toBeNaN();
    expect(medianHigh([NaN])).toBeNaN();
  });
});
