import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { medianInPlace, runningMedian } from '../src';

// Reference: numpy.nanmedian over each window clamped to the array, on Debian's /usr/bin/python3.
const PY = '/usr/bin/python3';
function numpyRunning(v: number[], half: number): (number | null)[] {
  const code = [
    'import sys,json,warnings,numpy as np',
    'warnings.simplefilter("ignore")',
    'd=json.load(sys.stdin); a=np.array(d["v"],dtype=np.float64); h=d["h"]; n=len(a)',
    'r=[np.nanmedian(a[max(0,t-h):min(n,t+h+1)]) for t in range(n)]',
    'print(json.dumps([None if np.isnan(x) else float(x) for x in r]))',
  ].join('\n');
  // JSON has no NaN: null in, nan in numpy, null back
  return JSON.parse(execFileSync(PY, ['-c', code], { input: JSON.stringify({ v: v.map((x) => (Number.isFinite(x) ? x : null)), h: half }) }).toString()) as (number | null)[];
}

function seeded(n: number, seed: number): number[] {
  let s = seed;
  return Array.from({ length: n }, () => ((s = (s * 16807) % 2147483647) / 2147483647) * 20 - 7);
}

describe('runningMedian', () => {
  // integers + 0: no -0, which JSON (the way to numpy) cannot carry
  const cases: [string, number[], number][] = [
    ['random, half 5', seeded(200, 3), 5],
    ['random, half 25 (wider than a third of the array)', seeded(120, 9), 25],
    ['window wider than the array', seeded(7, 4), 10],
    ['half 0', seeded(9, 2), 0],
    ['ties (values rounded to integers) and NaN runs', seeded(300, 17).map((x, i) => (i % 37 < 4 || i % 11 === 0 ? Number.NaN : Math.round(x) + 0)), 7],
    ['all NaN', [Number.NaN, Number.NaN, Number.NaN], 1],
    ['empty', [], 3],
  ];
  for (const [name, v, half] of cases) {
    it(`matches numpy.nanmedian of each clamped window: ${name}`, () => {
      const got = Array.from(runningMedian(v, half), (x) => (Number.isNaN(x) ? null : x));
      expect(got).toEqual(numpyRunning(v, half));
    });
    it(`is medianInPlace of each window's finite values, bit for bit: ${name}`, () => {
      const got = runningMedian(Float64Array.from(v), half);
      v.forEach((_, t) => {
        const w = Float64Array.from(v.slice(Math.max(0, t - half), t + half + 1).filter(Number.isFinite));
        expect(Object.is(got[t], medianInPlace(w))).toBe(true);
      });
    });
  }
  it('skips infinite values like NaN and writes into out', () => {
    const out = new Float64Array(5);
    expect(runningMedian([1, Infinity, 3, -Infinity, 5], 1, out)).toBe(out);
    expect(Array.from(out)).toEqual([1, 2, 3, 4, 5]);
  });
});
