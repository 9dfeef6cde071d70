import { describe, expect, it } from 'vitest';
import { constantModel, sampleDepths } from '@lamina/velocity';
import { defaultThicknessM, defaultWindows, sliceWindows, traceSliceValues } from '../src';

describe('slice windows', () => {
  it('default thickness is half the wavelength in the soil (common practice, no source)', () => {
    // lambda = v / f: 0.1 m/ns at 400 MHz is 0.25 m (arithmetic), half of it 0.125 m.
    expect(defaultThicknessM(0.1, 400)).toBeCloseTo(0.125, 12);
    expect(() => defaultThicknessM(0, 400)).toThrow(/positive/);
  });

  it('cuts a range into slices of a thickness, with overlap', () => {
    const w = sliceWindows(0, 1, { thicknessM: 0.25 });
    expect(w.map((s) => [s.topM, s.bottomM])).toEqual([[0, 0.25], [0.25, 0.5], [0.5, 0.75], [0.75, 1]]);
    const o = sliceWindows(0, 1, { thicknessM: 0.2, overlap: 0.5 });
    expect(o.length).toBe(9);
    expect(o[1]).toEqual({ index: 1, topM: 0.1, bottomM: 0.3 });
    expect(o.at(-1)!.bottomM).toBeCloseTo(1, 9);
    expect(() => sliceWindows(0, 1, { thicknessM: 0.2, overlap: 1 })).toThrow(/overlap/);
  });

  it('default windows stop one period before the depth of the last sample', () => {
    // 512 samples of 0.2 ns, time-zero 5 ns: last sample 97.2 ns after time-zero; one period at 400 MHz
    // is 2.5 ns, so 94.7 ns: at 0.1 m/ns, s = 0, that is 4.735 m.
    const w = defaultWindows({ model: constantModel(0.1), separationM: 0, frequencyMHz: 400, nSamples: 512, dtNs: 0.2, timeZeroNs: 5 });
    expect(w.length).toBe(Math.floor(4.735 / 0.125 + 1e-9));
    expect(w.at(-1)!.bottomM).toBeLessThanOrEqual(4.735 + 1e-3);
    // a record shorter than a period keeps its whole length: 20 samples of 0.2 ns, 1.8 ns after time-zero
    const short = defaultWindows({ model: constantModel(0.1), separationM: 0, frequencyMHz: 400, nSamples: 20, dtNs: 0.2, timeZeroNs: 2 });
    expect(short.at(-1)!.bottomM).toBeGreaterThan(0.05);
  });
});

describe('trace slice values', () => {
  // A trace whose envelope equals its depth: the mean of z^2 over [a, b] is (b^3 - a^3) / (3 (b - a))
  // (calculus); fine sampling must approach it.
  const nSamples = 2001;
  const depths = sampleDepths(nSamples, 0.1, 0, constantModel(0.1), 0); // 5 mm per sample
  const data = Float32Array.from(depths, (z) => z);

  it('mean-square over a window is the integral mean of value^2', () => {
    const w = sliceWindows(0.2, 4.2, { thicknessM: 0.5 });
    const v = traceSliceValues(data, 1, nSamples, depths, w, 'mean-square');
    for (const [k, s] of w.entries()) {
      const exact = (s.bottomM ** 3 - s.topM ** 3) / (3 * (s.bottomM - s.topM));
      expect(v[k]).toBeCloseTo(exact, 4);
    }
  });

  it('mean-abs over a window is the integral mean of |value|', () => {
    const w = [{ index: 0, topM: 1, bottomM: 2 }];
    expect(traceSliceValues(data, 1, nSamples, depths, w, 'mean-abs')[0]).toBeCloseTo(1.5, 5);
  });

  it('a window thinner than a sample still takes the sample it falls in; windows below the data are NaN', () => {
    const coarse = sampleDepths(11, 2, 0, constantModel(0.1), 0); // 0.1 m per sample
    const d = Float32Array.from({ length: 22 }, (_, i) => (i < 11 ? 3 : 5));
    const v = traceSliceValues(d, 2, 11, coarse, [{ index: 0, topM: 0.31, bottomM: 0.32 }, { index: 1, topM: 7, bottomM: 8 }]);
    expect(Array.from(v.subarray(0, 1))).toEqual([9]);
    expect(v[1]).toBeNaN();
    expect(v[2]).toBe(25);
  });

  it('is conserved: the thickness-weighted mean of adjacent windows is the mean over their union', () => {
    const r = Float32Array.from({ length: nSamples }, (_, i) => Math.sin(i * 0.37) + 2);
    const parts = sliceWindows(0.5, 2.5, { thicknessM: 0.5 });
    const v = traceSliceValues(r, 1, nSamples, depths, parts);
    const whole = traceSliceValues(r, 1, nSamples, depths, [{ index: 0, topM: 0.5, bottomM: 2.5 }])[0]!;
    expect(v.reduce((a, b) => a + b, 0) / v.length).toBeCloseTo(whole, 5);
  });
});
