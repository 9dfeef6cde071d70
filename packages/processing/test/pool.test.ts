import { describe, expect, it } from 'vitest';
import { isInputError } from '@lamina/errors';
import { createProcessingPool, defaultRecipe, processLines, runRecipe } from '../src';
import { addDiffraction, addNoise, addRicker, makeLine } from './synth';

const F = 400;
const ctx = { frequencyMHz: F, separationM: 0.16, velocityMPerNs: 0.1 };

function lines(n: number) {
  return Array.from({ length: n }, (_, k) => {
    const l = makeLine(60, 256, 0.1, 0.03, 3);
    for (let t = 0; t < 60; t++) addRicker(l, t, 3.5 + 0.02 * k, 1, F);
    addDiffraction(l, 0.9, 0.5, 0.1, 0.16, F, 0.2);
    addNoise(l, 0.01, 100 + k);
    return { ...l, id: `l${k}`, timeZeroNs: 0 };
  });
}

describe('worker threads', () => {
  it('give results identical to the single-thread run, in input order', async () => {
    const ls = lines(4);
    const recipe = defaultRecipe(F);
    const single = ls.map((l) => runRecipe(l, recipe, ctx, { keepBefore: 'backgroundRemoval' }));
    const multi = await processLines(ls, recipe, ctx, { threads: 2, keepBefore: 'backgroundRemoval' });
    expect(multi.map((r) => r.line.id)).toEqual(['l0', 'l1', 'l2', 'l3']);
    multi.forEach((r, i) => {
      const s = single[i]!;
      expect(Buffer.from(r.line.data.buffer).equals(Buffer.from(s.line.data.buffer))).toBe(true);
      expect(Buffer.from(r.before!.data.buffer).equals(Buffer.from(s.before!.data.buffer))).toBe(true);
      expect(r.log).toEqual(s.log);
      expect(r.line.timeZeroNs).toBe(s.line.timeZeroNs);
    });
  });

  it('passes input errors back as InputError', async () => {
    const pool = createProcessingPool({ threads: 1 });
    try {
      const dead = makeLine(5, 64, 0.1, 0.05);
      const err = await pool.run(dead, defaultRecipe(F), ctx).then(
        () => null,
        (e: unknown) => e,
      );
      expect(isInputError(err)).toBe(true);
      expect((err as Error).message).toMatch(/^synthetic: time-zero/);
    } finally {
      await pool.close();
    }
  });
});
