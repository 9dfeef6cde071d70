import { describe, expect, it } from 'vitest';
import { buildVelocityReport, effectiveObjects, permittivityFromVelocity, SiteSampler, spreadOrder, type HyperbolaFit } from '../src';
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

  it('effectiveObjects: m objects of equal weight count m, one object holding all the weight counts 1', () => {
    // Kish (1965), Survey Sampling: effective sample size (sum w)^2 / sum w^2.
    const equal = Array.from({ length: 12 }, (_, i) => fit(0.1, 5 * i, 0));
    expect(effectiveObjects(equal)).toBeCloseTo(12, 9);
    // one pipe on 30 lines (one object, 30 fits) beside 3 stones: (30 + 3)^2 / (30^2 + 3) = 1.21
    const pipe = [...Array.from({ length: 30 }, (_, i) => fit(0.1, 0, 0.5 * i)), ...Array.from({ length: 3 }, (_, i) => fit(0.1, 50 + 5 * i, 0))];
    expect(effectiveObjects(pipe)).toBeCloseTo(33 ** 2 / (30 ** 2 + 3), 9);
    expect(effectiveObjects([])).toBe(0);
  });

  describe('SiteSampler', () => {
    const estimate = (f: HyperbolaFit[]) => buildVelocityReport(f, { noObliqueCorrection: true });
    // 3 separate objects a line (each line y = its index, objects 5 m apart along it), velocities from `vOf(line)`
    const line = (l: number, vOf: (l: number) => number, g: () => number) =>
      Array.from({ length: 3 }, (_, j) => ({ ...fit(vOf(l) * (1 + 0.03 * g()), 5 * j + 1.7 * l, 10 * l), line: `l${l}` }));
    const stopOf = (s: SiteSampler, lines: HyperbolaFit[][]) => {
      for (let k = 0; k < lines.length; k++) if (s.add(lines[k]!)) return k + 1;
      return undefined;
    };

    it('stops on a large site once the estimate is precise and settled, never on a small one', () => {
      const g = gauss(rng(11));
      const lines = Array.from({ length: 40 }, (_, l) => line(l, () => 0.1, g));
      const k = stopOf(new SiteSampler(40, estimate), lines);
      expect(k).toBeDefined();
      // 30 usable fits need 10 lines of 3
      expect(k!).toBeGreaterThanOrEqual(10);
      expect(k!).toBeLessThan(40);
      // stays stopped
      const s = new SiteSampler(40, estimate);
      stopOf(s, lines);
      expect(s.add([])).toBe(true);
      expect(stopOf(new SiteSampler(16, estimate), lines.slice(0, 16))).toBeUndefined();
    });

    it('waits for an estimate that moves to settle', () => {
      // The first 4 lines cross soil of 0.1 m/ns, the rest 0.085 (15 % slower): the median moves over
      // when the slower fits outnumber the first ones (about line 9), and the rule may only stop once the
      // estimate has stayed put since half the lines fitted (then it is the slower soil's, within 3 %).
      const g = gauss(rng(3));
      const lines = Array.from({ length: 60 }, (_, l) => line(l, (i) => (i < 4 ? 0.1 : 0.085), g));
      const k = stopOf(new SiteSampler(60, estimate), lines);
      expect(k).toBeDefined();
      const at = (n: number) => estimate(lines.slice(0, n).flat()).site.velocityMPerNs;
      expect(Math.abs(at(k!) / 0.085 - 1)).toBeLessThan(0.03);
      for (let j = Math.ceil(k! / 2); j <= k!; j++) expect(Math.abs(at(j) / at(k!) - 1)).toBeLessThan(0.02);
      // the first estimate within 3 % of the slow soil comes after line 8, so the stop after line 16
      const moved = lines.findIndex((_, n) => n >= 1 && Math.abs(at(n) / 0.085 - 1) < 0.03);
      expect(moved).toBeGreaterThan(8);
      expect(k!).toBeGreaterThanOrEqual(2 * moved - 1);
    });

    it('does not stop while one object holds the weighted median', () => {
      // A tight pipe on every line (one object, `objectGroups`) at 0.1 m/ns among stones scattered 20 %:
      // the per-fit weighted median is the pipe's, one sample of the soil, so its standard error uses
      // the effective number of objects (about 1), not the 40 stones.
      const g = gauss(rng(7));
      const lines = Array.from({ length: 40 }, (_, l) => [
        { ...fit(0.1, 0, 0.5 * l, 0.0005), line: `l${l}` },
        ...Array.from({ length: 2 }, (_, j) => ({ ...fit(0.1 * (1 + 0.2 * g()), 20 + 5 * j + 1.7 * l, 10 * l), line: `l${l}` })),
      ]);
      expect(stopOf(new SiteSampler(40, estimate), lines)).toBeUndefined();
    });
  });
});
