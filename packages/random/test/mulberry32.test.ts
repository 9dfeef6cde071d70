import { describe, expect, it } from 'vitest';
import { gaussian, mulberry32 } from '../src';

describe('mulberry32', () => {
  it('repeats for a seed and is roughly uniform', () => {
    const a = mulberry32(42), b = mulberry32(42);
    const xs = Array.from({ length: 20000 }, () => a());
    expect(xs.slice(0, 5)).toEqual(Array.from({ length: 5 }, () => b()));
    expect(Math.min(...xs)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...xs)).toBeLessThan(1);
    // Mean of U(0,1) is 1/2 with standard error 1/sqrt(12 n) ~ 0.002 for n = 20000.
    expect(xs.reduce((s, x) => s + x, 0) / xs.length).toBeCloseTo(0.5, 2);
  });
  it('gaussian draws have mean 0 and variance 1', () => {
    const g = gaussian(mulberry32(7));
    const xs = Array.from({ length: 20000 }, () => g());
    const m = xs.reduce((s, x) => s + x, 0) / xs.length;
    const v = xs.reduce((s, x) => s + (x - m) ** 2, 0) / xs.length;
    expect(Math.abs(m)).toBeLessThan(0.03);
    expect(Math.abs(v - 1)).toBeLessThan(0.05);
  });
});
