import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { robustStats, robustStatsInJs } from '../src/normalise';
import { fitNoiseLaw, validQuartilesInJs } from '../src/noise';
import { validMedianMad, validQuantiles } from '../src/select-wasm';
import { bits } from '@lamina/test-utils';

const NODATA = -9999;

// slices with nodata, NaN, infinities, repeated values and zeros of both signs among ordinary ones
const slice = fc
  .array(
    fc.oneof(
      { weight: 6, arbitrary: fc.float({ noNaN: true, noDefaultInfinity: true, min: -1e6, max: 1e6 }) },
      { weight: 2, arbitrary: fc.constantFrom(0, -0, 1, 2.5, NODATA) },
      { weight: 1, arbitrary: fc.constantFrom(Number.NaN, Infinity, -Infinity) },
    ),
    { minLength: 0, maxLength: 300 },
  )
  .map((v) => Float32Array.from(v));

describe('selection kernels (WebAssembly) against the JavaScript selections of @lamina/stats', () => {
  it('median and MAD of the valid values: the same numbers bit for bit', () => {
    fc.assert(
      fc.property(slice, (values) => {
        const w = validMedianMad(values, NODATA)!;
        const j = robustStatsInJs(values, NODATA);
        expect([bits(w.median), bits(w.mad), w.count]).toEqual([bits(j.median), bits(j.mad), j.count]);
        expect(robustStats(values, NODATA)).toEqual(w);
      }),
      { numRuns: 400 },
    );
  });

  it('the noise law quartiles: the same numbers bit for bit', () => {
    fc.assert(
      fc.property(slice, (values) => {
        const w = validQuantiles(values, NODATA, [0.25, 0.5])!;
        const j = validQuartilesInJs(values, NODATA);
        expect(w.count).toBe(j.count);
        if (j.count >= 16) expect(w.quantiles.map(bits)).toEqual(j.quantiles.map(bits));
      }),
      { numRuns: 400 },
    );
  });

  it('a slice larger than the module memory grows it, and a law is fitted as before', () => {
    const n = 300_000;
    const values = Float32Array.from({ length: n }, (_, i) => ((i * 7919) % 1000) / 10 + (i % 13 === 0 ? NODATA : 0));
    expect(validMedianMad(values, NODATA)).toEqual(robustStatsInJs(values, NODATA));
    const law = fitNoiseLaw(values, NODATA)!;
    const j = validQuartilesInJs(values, NODATA);
    expect(validQuantiles(values, NODATA, [0.25, 0.5])!.quantiles).toEqual(j.quantiles);
    expect(law.count).toBe(j.count);
  });
});
