import { describe, expect, it } from 'vitest';
import { enoughFits, permittivityFromVelocity, spreadOrder, type HyperbolaFit } from '../src';
import { gauss, rng } from './synth';

function fit(v: number, x: number, y: number, sigma = 0.002): HyperbolaFit {
  const depthM = 0.5 + (x % 7) * 0.1;
  return { line: `l${y}`, trace: 0, x, y, t0Ns: (2 * depthM) / v, velocityMPerNs: v, permittivity: permittivityFromVelocity(v), depthM, uncertaintyMPerNs: sigma, origin: 'subsurface' };
}

describe('sampling of lines for the site velocity', () => {
  it('spreadOrder visits every line once, and any first few span the site', () => {
    for (const n of [1, 2, 5, 33, 100]) {
      const o = spreadOrder(n);
      expect(o.slice().sort((a, b) => a - b)).toEqual(Array.from({ length: n }, (_, i) => i));
      if (n >= 8) {
        // the first 4 lines cover more than half of the site's extent; the first 8 leave no gap > n/4
        const first = o.slice(0, 4);
        expect(Math.max(...first) - Math.min(...first)).toBeGreaterThan(n / 2);
        const s = o.slice(0, 8).sort((a, b) => a - b);
        for (let i = 1; i < s.length; i++) expect(s[i]! - s[i - 1]!).toBeLessThanOrEqual(Math.ceil(n / 4));
      }
    }
  });

  it('enoughFits: not for small sites or few objects; yes once the standard error is below 2 %', () => {
    const g = gauss(rng(5));
    // 40 separate objects (5 m apart) with a 3 % scatter: SE = 1.2533 x 0.003 / sqrt(40) / 0.1 = 0.6 %.
    const good = Array.from({ length: 40 }, (_, i) => fit(0.1 * (1 + 0.03 * g()), 5 * i, 0));
    expect(enoughFits(good, 10, 33)).toBe(true);
    expect(enoughFits(good, 10, 16)).toBe(false); // a small site is always fitted in full
    expect(enoughFits(good, 5, 33)).toBe(false); // too few lines fitted yet
    // One pipe on 40 lines is one object, however many fits it gives.
    const onePipe = Array.from({ length: 40 }, (_, i) => fit(0.1, 0, 0.5 * i));
    expect(enoughFits(onePipe, 10, 33)).toBe(false);
    // A 30 % scatter over 40 objects: SE 6 %, keep fitting.
    const wide = Array.from({ length: 40 }, (_, i) => fit(0.1 * (1 + 0.3 * g()), 5 * i, 0));
    expect(enoughFits(wide, 10, 33)).toBe(false);
  });
});
