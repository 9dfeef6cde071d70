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
