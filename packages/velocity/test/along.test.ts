import { describe, expect, it } from 'vitest';
import type { RadarLine } from '@lamina/radar-data';
import { alongTrackM } from '@lamina/processing';
import { alongLine, C_M_PER_NS, detectHyperbolas } from '../src';
import { bistatic, gauss, rng, synthLine } from './synth';

/** `line` with its recorded positions moved by Gaussian noise of `sigma` m per coordinate (the traces stay where they were). */
function noisyPositions(line: RadarLine, sigma: number, seed: number): RadarLine {
  const g = gauss(rng(seed));
  return { ...line, x: Float64Array.from(line.x, (v) => v + sigma * g()), y: Float64Array.from(line.y, (v) => v + sigma * g()) };
}

describe('alongLine', () => {
  it('is exact on a straight line at constant spacing, in any direction and unit', () => {
    for (const [hx, hy, mpu] of [[1, 0, 1], [0.6, -0.8, 1], [Math.SQRT1_2, Math.SQRT1_2, 0.3048006096012192]] as const) {
      const line = synthLine('a', [], { nTraces: 200, spacingM: 0.03, nSamples: 16, heading: [hx, hy], origin: [500000, 4000000], metresPerUnit: mpu });
      const d = alongLine(line, mpu);
      for (let i = 0; i < 200; i += 37) expect(d[i]).toBeCloseTo(i * 0.03, 6);
    }
  });

  it('does not stretch a line whose positions are noisy (the sum of noisy steps does)', () => {
    // 1 cm of noise per coordinate at 2.5 cm spacing: each raw step averages about sqrt(d^2 + 4 sigma^2).
    const line = noisyPositions(synthLine('a', [], { nTraces: 400, spacingM: 0.025, nSamples: 16 }), 0.01, 3);
    const trueLength = 399 * 0.025;
    expect(alongTrackM(line)[399]! / trueLength - 1).toBeGreaterThan(0.15);
    expect(Math.abs(alongLine(line)[399]! / trueLength - 1)).toBeLessThan(0.01);
  });

  it('follows a line that bends over metres (a 20 m radius arc)', () => {
    const n = 300;
    const R = 20;
    const ds = 0.05;
    const x = Float64Array.from({ length: n }, (_, i) => R * Math.sin((i * ds) / R));
    const y = Float64Array.from({ length: n }, (_, i) => R * (1 - Math.cos((i * ds) / R)));
    const line = { ...synthLine('a', [], { nTraces: n, nSamples: 16 }), x, y };
    // arc length i ds against the chords of the smoothed positions: within 1 mm over 15 m
    expect(alongLine(line)[n - 1]!).toBeCloseTo((n - 1) * ds, 2);
  });
});

describe('detectHyperbolas with noisy trace positions', () => {
  it('recovers v within 3 % where the sum of noisy steps read it 11 % fast', () => {
    // K 9 soil, 800 MHz, 2.5 cm traces, positions with 1 cm of noise per coordinate (a plausible GPS/wheel jitter).
    const v = C_M_PER_NS / 3;
    const clean = synthLine('n', [{ x0: 4, z: 0.5, v, amp: 1 }], { nTraces: 320, spacingM: 0.025, nSamples: 400, dtNs: 0.05, fMHz: 800, separationM: 0.05 });
    const line = noisyPositions(clean, 0.01, 7);
    const found = detectHyperbolas(line, { separationM: 0.05, frequencyMHz: 800 });
    const h = found.find((f) => Math.abs(f.t0Ns - bistatic(0, 0.5, v, 0.05)) < 0.5);
    expect(h).toBeDefined();
    expect(Math.abs(h!.velocityMPerNs / v - 1)).toBeLessThan(0.03);
  });
});
