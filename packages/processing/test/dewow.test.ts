import { describe, expect, it } from 'vitest';
import { dewow } from '../src';
import { addRicker, makeLine, rms, trace } from './synth';

const F = 400;
const T = 1000 / F; // ns

function lineWithEvents() {
  const line = makeLine(4, 600, 0.1, 0.05);
  for (let t = 0; t < 4; t++) for (const tt of [10, 25, 40]) addRicker(line, t, tt + t, 1, F);
  return line;
}

describe('dewow', () => {
  it('removes a DC offset and a slow wow, keeps the wavelets (running mean over one period)', () => {
    const clean = lineWithEvents();
    const wowed = { ...clean, data: clean.data.slice() };
    for (let t = 0; t < 4; t++) {
      const tr = trace(wowed, t);
      for (let i = 0; i < tr.length; i++) tr[i] = (tr[i] as number) + 0.8 + 0.5 * Math.sin((2 * Math.PI * i * 0.1) / (20 * T));
    }
    const a = dewow(wowed, { windowNs: T });
    const b = dewow(clean, { windowNs: T });
    const wow = new Float32Array(a.data.length);
    for (let i = 0; i < wow.length; i++) wow[i] = (a.data[i] as number) - (b.data[i] as number);
    // The running mean is linear: what is left of the wow is dewow(wow). A centred mean over T passes a
    // sinusoid of period 20 T with gain sinc(1/20) = 0.996 (analytic), so about 0.4 % of it (+ edges) remains.
    expect(rms(wow)).toBeLessThan(0.02 * Math.hypot(0.8, 0.5 / Math.SQRT2));
    // The mean of a trace after dewow is about zero.
    for (let t = 0; t < 4; t++) expect(Math.abs(trace(a, t).reduce((s, v) => s + v, 0) / 600)).toBeLessThan(0.01);
    // The wavelets survive: correlation with the clean trace above 0.9 (Ricker has zero mean).
    let sxy = 0;
    let sxx = 0;
    let syy = 0;
    for (let i = 0; i < b.data.length; i++) {
      sxy += (b.data[i] as number) * (clean.data[i] as number);
      sxx += (b.data[i] as number) ** 2;
      syy += (clean.data[i] as number) ** 2;
    }
    expect(sxy / Math.sqrt(sxx * syy)).toBeGreaterThan(0.9);
  });

  it('subtracts the centred running mean, its window clamped to the trace at the ends, on traces longer and shorter than the window', () => {
    // Reference: the definition written out (mean of samples i - h .. i + h that exist), summed directly in
    // float64; the kernel's prefix sums agree to rounding.
    for (const nSamples of [5, 20, 37, 600]) {
      const line = makeLine(3, nSamples, 0.1, 0.05);
      for (let i = 0; i < line.data.length; i++) line.data[i] = Math.sin(0.37 * i) + 0.01 * i;
      const windowNs = 2.5; // 25 samples, h = 12
      const h = 12;
      const out = dewow(line, { windowNs });
      for (let t = 0; t < 3; t++) {
        const x = trace(line, t);
        const y = trace(out, t);
        for (let i = 0; i < nSamples; i++) {
          let sum = 0;
          let n = 0;
          for (let k = Math.max(0, i - h); k <= Math.min(nSamples - 1, i + h); k++) {
            sum += x[k] as number;
            n++;
          }
          expect(y[i] as number).toBeCloseTo((x[i] as number) - sum / n, 5);
        }
      }
    }
  });

  it('low-cut variant removes DC exactly at the steady state and accepts out = line.data', () => {
    const line = lineWithEvents();
    for (let i = 0; i < line.data.length; i++) line.data[i] = (line.data[i] as number) + 1;
    const ref = dewow(line, { method: 'lowCut', lowCutMHz: F / 4 });
    expect(Math.abs(trace(ref, 0).reduce((s, v) => s + v, 0) / 600)).toBeLessThan(0.02);
    const inPlace = dewow(line, { method: 'lowCut', lowCutMHz: F / 4 }, line.data);
    expect(Array.from(inPlace.data)).toEqual(Array.from(ref.data));
  });
});
