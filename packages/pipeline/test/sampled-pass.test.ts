import { describe, expect, it } from 'vitest';
import { spreadOrder, type HyperbolaFit } from '@lamina/velocity';
import { pass1Sampled, type SampledLine } from '../src/sampled-pass';

// A line's result: one automatic fit, and a hand pick's fit on every third line.
function lineResult(i: number): SampledLine & { line: number } {
  const f = (source: 'auto' | 'manual') => ({ line: `l${i}`, trace: 0, x: i, y: 0, t0Ns: 10, velocityMPerNs: 0.1, permittivity: 9, depthM: 0.5, uncertaintyMPerNs: 0.002, origin: 'subsurface', source }) as HyperbolaFit;
  return { line: i, fits: i % 3 === 0 ? [f('auto'), f('manual')] : [f('auto')], context: { airApexes: [1, 2] } };
}

/** A stand-in for `SiteSampler`: holds once it has been given `after` lines (whatever their fits). */
const countingSampler = (after: number) => {
  let n = 0;
  return { add: () => ++n >= after };
};

describe('pass 1 with the stopping rule', () => {
  it('gives the same lines their fits whatever the thread count and the order the lines finish in', async () => {
    const n = 23;
    const order = spreadOrder(n);
    const runs: string[] = [];
    for (const inFlight of [1, 2, 3, 5]) {
      for (const seed of [1, 2, 3]) {
        let s = seed;
        const delay = () => ((s = (s * 16807) % 2147483647) % 7) + 1;
        const detected: boolean[] = [];
        const out = await pass1Sampled(
          n,
          inFlight,
          (i, detect) => {
            detected[i] = detect;
            return new Promise<ReturnType<typeof lineResult>>((res) => setTimeout(() => res(lineResult(i)), delay()));
          },
          countingSampler(6),
          () => {},
        );
        expect(out.map((r) => r.line)).toEqual(Array.from({ length: n }, (_, i) => i));
        // one at a time, no line past the rule's position in spread order is detected
        if (inFlight === 1) expect(order.slice(6).filter((i) => detected[i])).toEqual([]);
        runs.push(JSON.stringify(out));
      }
    }
    expect(new Set(runs).size).toBe(1);
    const out = JSON.parse(runs[0]!) as (SampledLine & { line: number })[];
    for (const [k, i] of order.entries()) {
      const r = out[i]!;
      if (k < 6) expect(r).toEqual(lineResult(i));
      else {
        // the hand picks' fits stay; automatic fits and air apexes go
        expect(r.fits.map((f) => f.source)).toEqual(i % 3 === 0 ? ['manual'] : []);
        expect(r.context?.airApexes).toEqual([]);
      }
    }
  });

  it('fits every line when the rule never holds, and passes a failure on after every task settled', async () => {
    const out = await pass1Sampled(9, 2, async (i) => lineResult(i), { add: () => false }, () => {});
    expect(out).toEqual(Array.from({ length: 9 }, (_, i) => lineResult(i)));
    let running = 0;
    await expect(
      pass1Sampled(
        9,
        3,
        async (i) => {
          running++;
          await new Promise((res) => setTimeout(res, i === 2 ? 1 : 5));
          running--;
          if (i === 2) throw new Error('line 2 failed');
          return lineResult(i);
        },
        { add: () => false },
        () => {},
      ),
    ).rejects.toThrow('line 2 failed');
    expect(running).toBe(0);
  });
});
