import { describe, expect, it } from 'vitest';
import { isInputError } from '@lamina/errors';
import { backgroundRemoval, defaultRecipe, parseRecipe, runRecipe, runStep, withAirEvents, type Recipe } from '../src';
import { addDiffraction, addNoise, addRicker, makeLine } from './synth';
import { C_M_PER_NS } from '@lamina/constants';

const F = 400;
const ctx = { frequencyMHz: F, separationM: 0.16 };

function surveyLine() {
  const line = makeLine(120, 400, 0.1, 0.025, 0);
  for (let t = 0; t < line.nTraces; t++) {
    addRicker(line, t, 4 + 0.16 / C_M_PER_NS, 1, F); // direct air wave
    addRicker(line, t, 15, 0.2, F); // flat reflection from a wall parallel to the line
  }
  line.timeZeroNs = 4;
  addDiffraction(line, 1.5, 0.7, 0.1, 0.16, F, 0.3);
  line.timeZeroNs = 0; // as read from a file: time-zero not yet known
  addNoise(line, 0.01, 1);
  return line;
}

function thrown(f: () => unknown): Error {
  try {
    f();
  } catch (e) {
    return e as Error;
  }
  throw new Error('did not throw');
}

describe('recipe validation', () => {
  it('accepts the default recipe as JSON', () => {
    const r = defaultRecipe(F);
    expect(parseRecipe(JSON.parse(JSON.stringify(r)))).toEqual(r);
  });
  it('names the JSON path of a bad parameter', () => {
    const e = thrown(() => parseRecipe({ steps: [{ step: 'dewow' }, { step: 'bandpass', lowMHz: -5 }] }, 'site.json', { pathPrefix: 'recipe' }));
    expect(isInputError(e)).toBe(true);
    expect(e.message).toMatch(/^site\.json: recipe\.steps\[1\]\.lowMHz: /);
  });
  it('names an unknown step and lists the known ones', () => {
    const e = thrown(() => parseRecipe({ steps: [{ step: 'timeZero' }, { step: 'deconvolve' }] }, 'recipe.json'));
    expect(e.message).toMatch(/^recipe\.json: steps\[1\]\.step: expected a step name \(timeZero, dewow, .*\), found "deconvolve"/);
  });
  it('rejects unknown keys, wrong types and a missing steps array', () => {
    expect(thrown(() => parseRecipe({ steps: [{ step: 'gain', gainDb: 3 }] })).message).toMatch(/steps\[0\]/);
    expect(thrown(() => parseRecipe({ steps: [{ step: 'migration', velocityMPerNs: '0.1' }] })).message).toMatch(/steps\[0\]\.velocityMPerNs/);
    expect(thrown(() => parseRecipe({})).message).toMatch(/^recipe: steps: /);
    // velocity above c is physically impossible
    expect(thrown(() => parseRecipe({ steps: [{ step: 'migration', velocityMPerNs: 0.35 }] })).message).toMatch(/velocityMPerNs/);
  });
});

describe('runRecipe', () => {
  it('runs the default chain, logs resolved parameters, skips migration without a velocity', () => {
    const line = surveyLine();
    const copy = line.data.slice();
    const r = runRecipe(line, defaultRecipe(F), ctx);
    expect(Array.from(line.data)).toEqual(Array.from(copy)); // input untouched
    expect(r.log.map((e) => e.step)).toEqual(['timeZero', 'dewow', 'bandpass', 'gain', 'backgroundRemoval', 'migration']);
    expect(r.log[5]?.skipped).toMatch(/no velocity/);
    // the airEvents step, when asked for, goes before migration and is skipped without objects
    const air = runRecipe(line, withAirEvents(defaultRecipe(F)), ctx);
    expect(air.log.map((e) => e.step)).toEqual(['timeZero', 'dewow', 'bandpass', 'gain', 'backgroundRemoval', 'airEvents', 'migration']);
    expect(air.log[5]?.skipped).toMatch(/no above-ground object/);
    expect(r.log[1]?.params).toEqual({ method: 'runningMean', windowNs: 2.5 });
    // time-zero: direct wave centre at 4 + s/c ns, so time-zero about 4 ns
    expect(r.line.timeZeroNs).toBeCloseTo(4, 1);
    expect(r.log[0]?.result?.timeZeroNs).toBeCloseTo(4, 1);
    expect(JSON.parse(JSON.stringify(r.log))).toEqual(r.log); // serialisable as is
  });

  it('fills defaults from the antenna frequency for bare steps', () => {
    const line = surveyLine();
    const r = runRecipe(line, { steps: [{ step: 'dewow' }, { step: 'bandpass' }, { step: 'gain', kind: 'agc' }] }, { ...ctx, frequencyMHz: 250 });
    expect(r.log[0]?.params).toEqual({ method: 'runningMean', windowNs: 4 });
    expect(r.log[1]?.params).toEqual({ lowMHz: 62.5, highMHz: 500, order: 4 });
    expect(r.log[2]?.params).toEqual({ kind: 'agc', windowNs: 32, floor: 1e-3 });
  });

  it('clamps a band-pass corner above Nyquist and says so', () => {
    const line = { ...surveyLine(), dtNs: 0.5 }; // Nyquist 1000 MHz
    const r = runRecipe(line, { steps: [{ step: 'bandpass' }] }, { ...ctx, frequencyMHz: 600 });
    expect(r.log[0]?.params.highMHz).toBeCloseTo(900, 6);
    expect(r.log[0]?.notes?.[0]).toMatch(/clamped/);
  });

  it('keepBefore returns the data just before background removal (flat wall event still there)', () => {
    const line = surveyLine();
    const recipe = defaultRecipe(F);
    const r = runRecipe(line, recipe, ctx, { keepBefore: 'backgroundRemoval' });
    expect(r.before).toBeDefined();
    const upTo: Recipe = { steps: recipe.steps.slice(0, 4) };
    const ref = runRecipe(line, upTo, ctx);
    expect(Array.from(r.before!.data)).toEqual(Array.from(ref.line.data));
    expect(Array.from(backgroundRemoval(r.before!).data)).toEqual(Array.from(r.line.data));
    // the flat event at 15 ns is in `before`, not in the output
    const k = Math.round(15 / 0.1);
    const at = (d: Float32Array, t: number) => Math.abs(d[t * 400 + k] as number);
    expect(at(r.before!.data, 10)).toBeGreaterThan(10 * at(r.line.data, 10));
  });

  it('writes steps in place into its own data only: the same bytes as one step at a time, the input and a kept `before` untouched', () => {
    const line = surveyLine();
    const input = line.data.slice();
    const steps = [...defaultRecipe(F).steps.slice(0, 4), { step: 'dewow', method: 'lowCut' } as const, { step: 'gain', kind: 'agc' } as const];
    let ref = line;
    for (const step of steps) ref = runStep(ref, step, ctx).line;
    for (const keepBefore of [undefined, 'bandpass', 'gain'] as const) {
      const r = runRecipe(line, { steps }, ctx, keepBefore ? { keepBefore } : {});
      expect(Buffer.from(r.line.data.buffer).equals(Buffer.from(ref.data.buffer))).toBe(true);
      expect(Array.from(line.data)).toEqual(Array.from(input));
      if (!keepBefore) continue;
      const upTo = runRecipe(line, { steps: steps.slice(0, steps.findIndex((s) => s.step === keepBefore)) }, ctx).line;
      expect(Array.from(r.before!.data)).toEqual(Array.from(upTo.data));
    }
  });

  it('runs migration when a velocity is given, from the context or the step', () => {
    const line = surveyLine();
    const a = runRecipe(line, defaultRecipe(F), { ...ctx, velocityMPerNs: 0.1 });
    expect(a.log[5]?.skipped).toBeUndefined();
    expect(a.log[5]?.params.velocityMPerNs).toBe(0.1);
    const b = runRecipe(line, { steps: [{ step: 'migration', velocityMPerNs: 0.12 }] }, ctx);
    expect(b.log[0]?.params.velocityMPerNs).toBe(0.12);
  });

  it('skips background removal on a one-trace line (it would remove everything)', () => {
    const one = makeLine(1, 200, 0.1, 0.05);
    addRicker(one, 0, 5, 1, F);
    const r = runRecipe(one, { steps: [{ step: 'backgroundRemoval' }] }, ctx);
    expect(r.log[0]?.skipped).toMatch(/1 trace/);
    expect(Array.from(r.line.data)).toEqual(Array.from(one.data));
  });

  it('envelope step gives non-negative data; an empty recipe returns a copy', () => {
    const line = surveyLine();
    const e = runRecipe(line, { steps: [{ step: 'envelope' }] }, ctx);
    expect(Math.min(...e.line.data)).toBeGreaterThanOrEqual(0);
    const c = runRecipe(line, { steps: [] }, ctx, { keepBefore: 'backgroundRemoval' });
    expect(c.line.data).not.toBe(line.data);
    expect(c.before).toBe(c.line);
  });
});
