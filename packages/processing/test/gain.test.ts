import { describe, expect, it } from 'vitest';
import { agc, divergenceGain, divergenceGainCurve } from '../src';
import { addRicker, argmaxAbs, makeLine, trace } from './synth';

const F = 400;
const T = 2.5;

describe('gain', () => {
  it('divergence curve is (t / t1)^p exp(alpha (t - t1)) after t1, 1 before, capped', () => {
    const dt = 0.1;
    const tz = 3;
    const g = divergenceGainCurve(1000, dt, tz, { startNs: T, power: 1, alphaPerNs: 0.05, maxGainDb: 40 });
    const at = (tNs: number) => g[Math.round((tNs + tz) / dt)] as number;
    expect(at(0)).toBe(1);
    expect(at(T)).toBe(1);
    expect(at(10)).toBeCloseTo((10 / T) * Math.exp(0.05 * (10 - T)), 10);
    expect(at(60)).toBeCloseTo(100, 10); // 40 dB ceiling = 100x
    const p2 = divergenceGainCurve(200, dt, 0, { startNs: 2, power: 2 });
    expect(p2[100]).toBeCloseTo(25, 10);
  });

  it('spherical-divergence gain (p = 1) equalises reflections whose amplitude falls as 1/t', () => {
    // geometric spreading of a spherical wave: amplitude proportional to 1/r, i.e. 1/t at constant velocity (physics)
    const line = makeLine(1, 1000, 0.1, 0.05, 2);
    const times = [10, 30, 60, 90];
    for (const t of times) addRicker(line, 0, 2 + t, 5 / t, F);
    const out = divergenceGain(line, { startNs: T, power: 1 });
    const tr = trace(out, 0);
    const peaks = times.map((t) => argmaxAbs(tr.subarray(Math.round((t - 2) / 0.1), Math.round((t + 6) / 0.1))).value);
    for (const p of peaks) expect(p / (peaks[0] as number)).toBeCloseTo(1, 1);
    expect(peaks[0]).toBeCloseTo(5 / T, 1);
  });

  it('AGC brings a weak and a strong event to about unit RMS', () => {
    const line = makeLine(1, 1000, 0.1, 0.05);
    addRicker(line, 0, 20, 1, F);
    addRicker(line, 0, 70, 0.01, F);
    const out = agc(line, { windowNs: 8 * T });
    const tr = trace(out, 0);
    const a = argmaxAbs(tr.subarray(150, 250)).value;
    const b = argmaxAbs(tr.subarray(650, 750)).value;
    expect(Math.abs(a / b)).toBeGreaterThan(0.5);
    expect(Math.abs(a / b)).toBeLessThan(2);
    // in place gives the same
    const inPlace = agc(line, { windowNs: 8 * T }, line.data);
    expect(Array.from(inPlace.data)).toEqual(Array.from(out.data));
  });
});
