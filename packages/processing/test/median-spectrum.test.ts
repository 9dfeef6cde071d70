import { describe, expect, it } from 'vitest';
import { backgroundRemoval, spectralCentroidMHz } from '../src';
import { addDiffraction, addRicker, argmaxAbs, makeLine, trace } from './synth';

const F = 400;

describe('moving-median background removal', () => {
  it('removes a flat event that stops half-way and leaves a hyperbola without a ghost in the other traces', () => {
    const line = makeLine(401, 400, 0.1, 0.05);
    for (let t = 0; t < 200; t++) addRicker(line, t, 8, 1, F);
    addDiffraction(line, 15, 0.8, 0.1, 0.16, F);
    const out = backgroundRemoval(line, { method: 'movingMedian', windowM: 4 });
    // the flat event is gone away from its end (the window straddles its end within 2 m)
    for (const t of [20, 100, 150]) expect(Math.abs(trace(out, t)[80] as number)).toBeLessThan(1e-6);
    // the median of a window is not moved by a hyperbola crossing a few of its traces: no ghost at the
    // apex time in traces 1.5 m beside the apex, where the hyperbola itself is far later
    const apex = argmaxAbs(trace(out, 300));
    expect(apex.value).toBeGreaterThan(0.5 * Math.abs(argmaxAbs(trace(line, 300)).value));
    expect(Math.abs(trace(out, 270)[apex.index] as number)).toBeLessThan(1e-6);
  });

  it('subtracts the exact median of each window (a sort, as the documentation defines it), odd and even windows', () => {
    for (const windowM of [2.5, 2.55]) {
      const nT = 157;
      const nS = 64;
      const line = makeLine(nT, nS, 0.1, 0.05);
      // noise with ties (rounded values), a trend along the line and a flat event
      let seed = 11;
      for (let q = 0; q < line.data.length; q++) {
        seed = (seed * 16807) % 2147483647;
        line.data[q] = Math.round(20 * (seed / 2147483647 - 0.5)) / 10 + 0.01 * Math.floor(q / nS) + (q % nS === 20 ? 3 : 0);
      }
      const out = backgroundRemoval(line, { method: 'movingMedian', windowM });
      // the window of w traces at centres every w/4 traces (and the last), clamped to the line; linear between
      const w = Math.round(windowM / 0.05);
      const step = Math.floor(w / 4);
      const centres: number[] = [];
      for (let c = 0; c < nT; c += step) centres.push(c);
      if (centres[centres.length - 1] !== nT - 1) centres.push(nT - 1);
      const medianAt = (c: number, s: number) => {
        const a = Math.max(0, Math.min(nT - w, c - Math.floor(w / 2)));
        const v = Array.from({ length: w }, (_, i) => line.data[(a + i) * nS + s] as number).sort((x, y) => x - y);
        return w % 2 ? (v[w >> 1] as number) : 0.5 * ((v[(w >> 1) - 1] as number) + (v[w >> 1] as number));
      };
      for (const t of [0, 7, 40, 80, 123, 156]) {
        let k = 0;
        while (k < centres.length - 2 && (centres[k + 1] as number) <= t) k++;
        const c0 = centres[k] as number;
        const c1 = centres[k + 1] as number;
        const f = (t - c0) / (c1 - c0);
        for (const s of [0, 20, 41, 63]) {
          const b0 = Math.fround(medianAt(c0, s));
          const b1 = Math.fround(medianAt(c1, s));
          expect(out.data[t * nS + s]).toBeCloseTo((line.data[t * nS + s] as number) - (b0 + f * (b1 - b0)), 5);
        }
      }
    }
  });
});

describe('spectralCentroidMHz', () => {
  it('gives the frequency of a sine (power at one frequency), within a bin', () => {
    const nT = 8;
    const nS = 512;
    const dt = 0.1;
    const data = new Float32Array(nT * nS);
    // 390.625 MHz = 20 cycles over the 51.2 ns record: exactly on bin 20 of the 512-point FFT.
    const f = 20 / (nS * dt * 1e-3);
    for (let t = 0; t < nT; t++) for (let s = 0; s < nS; s++) data[t * nS + s] = Math.sin(2 * Math.PI * f * 1e-3 * s * dt);
    expect(Math.abs(spectralCentroidMHz(data, nT, nS, dt) - f)).toBeLessThan(1000 / (nS * dt));
    expect(Number.isNaN(spectralCentroidMHz(new Float32Array(nT * nS), nT, nS, dt))).toBe(true);
  });
});
