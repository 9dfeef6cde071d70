import { describe, expect, it } from 'vitest';
import { constantModel, nearSurfaceDepthM } from '@lamina/velocity';

describe('near-surface zone', () => {
  it('ends one period after the ground wave, as a bistatic depth', () => {
    // worked by hand: s = 0.16 m, v = 0.1 m/ns, f = 400 MHz: t = 0.16 / 0.1 + 1000 / 400 = 4.1 ns;
    // z = sqrt((v t / 2)^2 - (s / 2)^2) = sqrt(0.205^2 - 0.08^2) = 0.188746 m
    expect(nearSurfaceDepthM(400, 0.16, constantModel(0.1))).toBeCloseTo(Math.sqrt(0.205 ** 2 - 0.08 ** 2), 9);
    // zero separation: half a wavelength, v / (2 f)
    expect(nearSurfaceDepthM(250, 0, constantModel(0.12))).toBeCloseTo(0.12 * 1000 / 250 / 2, 9);
  });
});
