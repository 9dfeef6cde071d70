import { z } from 'zod';
import { InputError } from '@lamina/errors';
import type { RadarLine } from '@lamina/radar-data';
import { bandpass } from './bandpass';
import { backgroundRemoval } from './background';
import { dewow } from './dewow';
import { envelope } from './envelope';
import { agc, divergenceGain } from './gain';
import { periodNs } from './line-util';
import type { MigrationLayer } from './fk';
import { MIGRATION_METHODS, chooseMigration, migrate } from './migration';
import { removeAirEvents, type AirObjects } from './air-events';
import { C_M_PER_NS } from '@lamina/constants';
import { timeZero } from './time-zero';

export const STEP_NAMES = ['timeZero', 'dewow', 'backgroundRemoval', 'gain', 'bandpass', 'envelope', 'airEvents', 'migration'] as const;
export type StepName = (typeof STEP_NAMES)[number];

const pos = z.number().positive();
const frac = z.number().gt(0).lt(1);

const timeZeroStep = z.strictObject({
  step: z.literal('timeZero'),
  threshold: frac.optional(),
  pick: z.enum(['peak', 'firstPeak', 'onset']).optional(),
  medianTraces: z.number().int().min(1).optional(),
  maxDeviationNs: pos.optional(),
  shift: z.enum(['fractional', 'integer']).optional(),
  /** Subtract the air travel time between the antennas (separationM / c) from the pick. @default true */
  separationCorrection: z.boolean().optional(),
  searchNs: z.tuple([z.number().min(0), pos]).optional(),
});
const dewowStep = z.strictObject({
  step: z.literal('dewow'),
  method: z.enum(['runningMean', 'lowCut']).optional(),
  windowNs: pos.optional(),
  lowCutMHz: pos.optional(),
  order: z.number().int().min(1).max(8).optional(),
});
const backgroundStep = z.strictObject({
  step: z.literal('backgroundRemoval'),
  method: z.enum(['mean', 'movingMean']).optional(),
  windowM: pos.optional(),
});
const gainStep = z.strictObject({
  step: z.literal('gain'),
  kind: z.enum(['divergence', 'agc']).optional(),
  power: z.number().min(0).max(4).optional(),
  alphaPerNs: z.number().min(0).optional(),
  startNs: pos.optional(),
  maxGainDb: z.number().min(0).max(200).optional(),
  windowNs: pos.optional(),
  floor: z.number().min(0).optional(),
});
const bandpassStep = z.strictObject({
  step: z.literal('bandpass'),
  lowMHz: pos.optional(),
  highMHz: pos.optional(),
  order: z.number().int().min(1).max(8).optional(),
});
const envelopeStep = z.strictObject({ step: z.literal('envelope') });
const migrationStep = z.strictObject({
  step: z.literal('migration'),
  method: z.enum(MIGRATION_METHODS).optional(),
  velocityMPerNs: z.number().positive().max(C_M_PER_NS).optional(),
  apertureM: pos.optional(),
  maxAngleDeg: z.number().gt(0).lt(90).optional(),
  taper: z.number().min(0).max(1).optional(),
  halfDerivative: z.boolean().optional(),
});

// Above-ground (air-wave) events out before slicing (air-events.ts); runs once the plan's objects and
// the velocity fits are known (the pipeline's pass 2), after background removal and before migration.
const airEventsStep = z.strictObject({
  step: z.literal('airEvents'),
  maxAngleDeg: z.number().gt(0).lt(90).optional(),
  taper: z.number().min(0).max(1).optional(),
  timeHalfWidthNs: pos.optional(),
  lateralHalfWidthM: pos.optional(),
  /** Let the mask go where the line focuses better at the soil velocity than at c. @default true */
  keepSoilFoci: z.boolean().optional(),
  /** Take the part steeper than the dip limit out along each object's moveout first (`subtractSteepAirEvents`). @default true */
  steepMoveout: z.boolean().optional(),
});

export const stepSchema = z.discriminatedUnion('step', [
  timeZeroStep,
  dewowStep,
  backgroundStep,
  gainStep,
  bandpassStep,
  envelopeStep,
  airEventsStep,
  migrationStep,
]);
export const recipeSchema = z.strictObject({ steps: z.array(stepSchema) });

export type Step = z.infer<typeof stepSchema>;
export type Recipe = z.infer<typeof recipeSchema>;

function jsonPath(prefix: string, path: readonly PropertyKey[]): string {
  let s = prefix;
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s === '' ? String(p) : `.${String(p)}`;
  return s || '(root)';
}

/**
 * Validates a recipe (parsed JSON). Throws an InputError naming `file` and the JSON path of the first
 * problem (all problems are listed in the message), e.g. `site.json: recipe.steps[2].windowNs: ...`.
 */
export function parseRecipe(json: unknown, file = 'recipe', options: { pathPrefix?: string } = {}): Recipe {
  const prefix = options.pathPrefix ?? '';
  // The step name first, for a clearer message than a failed union.
  if (json && typeof json === 'object' && Array.isArray((json as { steps?: unknown }).steps)) {
    const steps = (json as { steps: unknown[] }).steps;
    steps.forEach((s, i) => {
      const name = s && typeof s === 'object' ? (s as { step?: unknown }).step : undefined;
      if (!STEP_NAMES.includes(name as StepName)) {
        throw new InputError(file, `expected a step name (${STEP_NAMES.join(', ')}), found ${JSON.stringify(name) ?? 'nothing'}`, {
          field: jsonPath(prefix, ['steps', i, 'step']),
        });
      }
    });
  }
  const r = recipeSchema.safeParse(json);
  if (r.success) return r.data;
  const issues = r.error.issues.map((i) => `${jsonPath(prefix, i.path)}: ${i.message}`);
  const first = r.error.issues[0];
  throw new InputError(file, issues.length === 1 ? (first?.message ?? 'invalid recipe') : issues.join('; '), {
    field: jsonPath(prefix, first?.path ?? []),
  });
}

/**
 * The airEvents step as `lamina process --remove-air-events` adds it (before migration): the part steeper
 * than the dip limit along each object's moveout, then f-k at c with the mask from the plan and the
 * air-velocity fits; skipped, and logged as skipped, on a line with no above-ground object near it and no
 * air-velocity fit. After background removal, which already took out the flat events of walls parallel to
 * the line (air-events.ts).
 */
export const AIR_EVENTS_STEP: Step = { step: 'airEvents', maxAngleDeg: 88, keepSoilFoci: true };

/** `recipe` with the airEvents step before its migration (or last), unless it has one. */
export function withAirEvents(recipe: Recipe): Recipe {
  if (recipe.steps.some((s) => s.step === 'airEvents')) return recipe;
  const steps = recipe.steps.slice();
  const m = steps.findIndex((s) => s.step === 'migration');
  steps.splice(m < 0 ? steps.length : m, 0, AIR_EVENTS_STEP);
  return { ...recipe, steps };
}

/** `recipe` without its airEvents step. */
export function withoutAirEvents(recipe: Recipe): Recipe {
  return { ...recipe, steps: recipe.steps.filter((s) => s.step !== 'airEvents') };
}

/**
 * The default chain for an antenna of `frequencyMHz` (T = 1000 / f ns, one period):
 * time-zero (main peak of the direct wave minus s/c), dewow (running mean over T), zero-phase
 * Butterworth band-pass 0.25 f - 2 f (order 4), spherical-divergence gain t / T from T (60 dB ceiling),
 * whole-line background removal, and migration when a velocity is known (skipped otherwise; Kirchhoff for
 * now, see the step's comment; a step without `method` runs `auto`).
 * Gain comes before background removal so that the data `keepBefore: 'backgroundRemoval'` returns
 * (for screening and display) is already gained; a gain curve shared by all traces commutes with the
 * mean-trace removal, so the order does not change the result.
 */
export function defaultRecipe(frequencyMHz: number): Recipe {
  if (!(frequencyMHz > 0)) throw new Error(`defaultRecipe: frequency must be > 0 MHz, found ${frequencyMHz}`);
  const T = periodNs(frequencyMHz);
  return {
    steps: [
      { step: 'timeZero', threshold: 0.25, pick: 'firstPeak', medianTraces: 11, separationCorrection: true },
      { step: 'dewow', method: 'runningMean', windowNs: T },
      { step: 'bandpass', lowMHz: 0.25 * frequencyMHz, highMHz: 2 * frequencyMHz, order: 4 },
      { step: 'gain', kind: 'divergence', power: 1, alphaPerNs: 0, startNs: T, maxGainDb: 60 },
      { step: 'backgroundRemoval', method: 'mean' },
      // No airEvents step by default (AIR_EVENTS_STEP, `lamina process --remove-air-events`). On the TUNE
      // half of `pnpm bench field` (odd seeds 1-23, against --keep-air-events) it made nothing worse that
      // decides it (utility recall 83.1 -> 85.8 %, buried objects 17.4 -> 17.4 dB, real anomalies flagged
      // 8.3 -> 5.2 %; air-wave loci 3.7 -> 3.1 dB, air-wave targets 1.1 -> 1.9 %, compact objects found
      // 83.3 -> 81.3 %), but on the warehouse sample site it cuts the old sewer's coverage from 95 to 31 %
      // and the air-wave anomalies flagged from 79 to 74 %, under test/screening-sites.test.ts's guards
      // (docs/air-events.md).
      // Frequency-domain migration (Stolt for a constant model, phase-shift for a layered one, Kirchhoff
      // for irregular spacing) with the half-derivative. Chosen on the TUNE half of `pnpm bench field`
      // (odd seeds 1-23, all else equal) against Kirchhoff: utility recall 85.2 against 74.4 %, compact
      // 79.2 / 77.1 %, air-wave anomalies flagged 90.7 / 88.2 %, air-wave targets 2.6 / 5.5 %; target
      // precision 36.2 / 39.2 % and real anomalies flagged 15.8 / 14.5 % (worse). About 2x faster per line.
      { step: 'migration', method: 'auto', halfDerivative: true, apertureM: 2, maxAngleDeg: 60 },
    ],
  };
}

export interface RecipeContext {
  /** Antenna centre frequency, MHz. */
  frequencyMHz: number;
  /** Antenna separation, m. */
  separationM: number;
  /** Ground velocity from the velocity fit, m/ns; migration is skipped without it. */
  velocityMPerNs?: number;
  /**
   * Interval velocities of the fitted model (velocity.json `model.layers`); more than one layer makes
   * `auto` migration phase-shift. Ignored when the step gives its own `velocityMPerNs`. @default undefined
   */
  velocityLayers?: readonly MigrationLayer[];
  /** Metres per CRS unit of the trace positions (site.crs.metresPerUnit). @default 1 */
  metresPerUnit?: number;
  /**
   * Above-ground objects of the plan and the apexes of this line's air-velocity fits (`AirObjects`, site
   * CRS): the `airEvents` step is skipped without them. @default undefined
   */
  airObjects?: AirObjects;
}

export interface RecipeLogEntry {
  step: StepName;
  /** Parameters as resolved (defaults filled in from the context). */
  params: Record<string, unknown>;
  /** Why the step did not run. */
  skipped?: string;
  notes?: string[];
  /** What the step measured (time-zero picks and shifts). */
  result?: Record<string, unknown>;
}

export interface RecipeResult {
  line: RadarLine;
  log: RecipeLogEntry[];
  /** The line just before the first step named `options.keepBefore` (the output line if no such step ran). */
  before?: RadarLine;
}

export interface RunOptions {
  /** Keep a copy of the line as it was just before the first step of this name. */
  keepBefore?: StepName;
  /** Called after each step with its wall time in ms (the pipeline's stage timers); calling thread only, not through a processing pool (a function cannot cross to a worker). */
  onStep?: (step: StepName, ms: number) => void;
}

const round = (x: number, d = 4): number => Math.round(x * 10 ** d) / 10 ** d || 0; // no -0 in logs

/**
 * Runs one step on `line` (never modifying `line` unless `out` is its data); returns the new line and the
 * log entry. `out`: a buffer of the line's size that dewow, band-pass and gain write their result to (it
 * may be `line.data`); other steps allocate their own. @default undefined
 */
export function runStep(line: RadarLine, step: Step, ctx: RecipeContext, out?: Float32Array): { line: RadarLine; entry: RecipeLogEntry } {
  const f = ctx.frequencyMHz;
  const T = periodNs(f);
  const mpu = ctx.metresPerUnit ?? 1;
  const notes: string[] = [];
  switch (step.step) {
    case 'timeZero': {
      const params = {
        threshold: step.threshold ?? 0.25,
        pick: step.pick ?? 'firstPeak',
        medianTraces: step.medianTraces ?? 11,
        maxDeviationNs: step.maxDeviationNs ?? T / 4,
        shift: step.shift ?? 'fractional',
        separationCorrection: step.separationCorrection ?? true,
        separationM: ctx.separationM,
        ...(step.searchNs ? { searchNs: step.searchNs } : {}),
      } as const;
      const r = timeZero(line, {
        ...params,
        searchNs: step.searchNs ? [step.searchNs[0], step.searchNs[1]] : undefined,
        frequencyMHz: f,
        separationM: params.separationCorrection ? ctx.separationM : 0,
      });
      if (r.replaced.length) notes.push(`${r.replaced.length} trace pick(s) replaced by the running median (dead or outlying)`);
      return {
        line: r.line,
        entry: {
          step: 'timeZero',
          params,
          notes,
          result: {
            timeZeroNs: round(r.timeZeroNs),
            pickNs: round(r.pickNs),
            shiftsNs: Array.from(r.shiftsNs, (x) => round(x)),
            replacedTraces: r.replaced,
          },
        },
      };
    }
    case 'dewow': {
      const method = step.method ?? 'runningMean';
      const params =
        method === 'runningMean'
          ? { method, windowNs: step.windowNs ?? T }
          : { method, lowCutMHz: step.lowCutMHz ?? f / 4, order: step.order ?? 2 };
      return { line: dewow(line, params, out), entry: { step: 'dewow', params } };
    }
    case 'backgroundRemoval': {
      const method = step.method ?? 'mean';
      const params = method === 'mean' ? { method } : { method, windowM: step.windowM ?? 10 };
      if (line.nTraces < 2) {
        return { line, entry: { step: 'backgroundRemoval', params, skipped: `line has ${line.nTraces} trace: the mean trace would remove everything` } };
      }
      return { line: backgroundRemoval(line, { ...params, metresPerUnit: mpu }), entry: { step: 'backgroundRemoval', params } };
    }
    case 'gain': {
      const kind = step.kind ?? 'divergence';
      if (kind === 'agc') {
        const params = { kind, windowNs: step.windowNs ?? 8 * T, floor: step.floor ?? 1e-3 };
        return { line: agc(line, params, out), entry: { step: 'gain', params } };
      }
      const params = {
        kind,
        power: step.power ?? 1,
        alphaPerNs: step.alphaPerNs ?? 0,
        startNs: step.startNs ?? T,
        maxGainDb: step.maxGainDb ?? 60,
      };
      return { line: divergenceGain(line, params, out), entry: { step: 'gain', params } };
    }
    case 'bandpass': {
      const nyq = 500 / line.dtNs;
      let lowMHz = step.lowMHz ?? 0.25 * f;
      let highMHz = step.highMHz ?? 2 * f;
      const order = step.order ?? 4;
      if (highMHz >= 0.95 * nyq) {
        notes.push(`high corner ${highMHz} MHz clamped to 0.9 x Nyquist (${round(0.9 * nyq, 2)} MHz)`);
        highMHz = 0.9 * nyq;
      }
      if (!(lowMHz < highMHz)) {
        return {
          line,
          entry: { step: 'bandpass', params: { lowMHz, highMHz, order }, skipped: `low corner ${lowMHz} MHz not below high corner ${highMHz} MHz`, notes },
        };
      }
      lowMHz = Math.max(lowMHz, 1e-6 * nyq);
      const params = { lowMHz, highMHz, order };
      return { line: bandpass(line, params, out), entry: { step: 'bandpass', params, notes } };
    }
    case 'envelope':
      return { line: envelope(line), entry: { step: 'envelope', params: {} } };
    case 'airEvents': {
      const keepSoilFoci = step.keepSoilFoci ?? true;
      const params = {
        maxAngleDeg: step.maxAngleDeg ?? 88,
        taper: step.taper ?? 0.05,
        timeHalfWidthNs: step.timeHalfWidthNs ?? T,
        lateralHalfWidthM: step.lateralHalfWidthM ?? (C_M_PER_NS * T) / 2,
        keepSoilFoci,
        steepMoveout: step.steepMoveout ?? true,
        separationM: ctx.separationM,
      };
      const objects = ctx.airObjects;
      const count = objects ? objects.points.length / 3 + objects.segments.length / 5 + (objects.apexes?.length ?? 0) / 2 : 0;
      if (!objects || count === 0) {
        return { line, entry: { step: 'airEvents', params, skipped: 'no above-ground object in the plan and no air-velocity hyperbola' } };
      }
      const soil = keepSoilFoci && ctx.velocityMPerNs !== undefined ? { soilVelocityMPerNs: ctx.velocityMPerNs } : {};
      const r = removeAirEvents(line, objects, { ...params, ...soil, frequencyMHz: f, metresPerUnit: mpu });
      return {
        line: r.line,
        entry: {
          step: 'airEvents',
          params,
          notes,
          result: { foci: r.foci, maskedShare: round(r.maskedShare, 5), removedShare: round(r.removedShare, 5), apexes: (objects.apexes?.length ?? 0) / 2, steepEvents: r.steepEvents },
        },
      };
    }
    case 'migration': {
      const v = step.velocityMPerNs ?? ctx.velocityMPerNs;
      const layers = step.velocityMPerNs === undefined && ctx.velocityLayers && ctx.velocityLayers.length > 1 ? ctx.velocityLayers : undefined;
      const params = {
        method: step.method ?? 'auto',
        ...(v !== undefined ? { velocityMPerNs: v } : {}),
        ...(layers ? { layers: layers.map((l) => ({ topM: l.topM, velocityMPerNs: l.velocityMPerNs })) } : {}),
        separationM: ctx.separationM,
        apertureM: step.apertureM ?? 2,
        maxAngleDeg: step.maxAngleDeg ?? 60,
        taper: step.taper ?? 0.2,
        halfDerivative: step.halfDerivative ?? false,
      };
      if (v === undefined) return { line, entry: { step: 'migration', params, skipped: 'no velocity given (run after the velocity fit)' } };
      const options = { ...params, velocityMPerNs: v, metresPerUnit: mpu };
      const choice = chooseMigration(line, options);
      return {
        line: migrate(line, { ...options, method: choice.method }),
        entry: { step: 'migration', params, notes, result: { ...choice } },
      };
    }
  }
}

/**
 * Runs the steps of `recipe` in order on a copy of `line`. The log records every step with its
 * resolved parameters (and why a step was skipped); store it with every output.
 */
export function runRecipe(line: RadarLine, recipe: Recipe, ctx: RecipeContext, options: RunOptions = {}): RecipeResult {
  if (!(ctx.frequencyMHz > 0)) throw new Error(`runRecipe: frequencyMHz must be > 0, found ${ctx.frequencyMHz}`);
  let cur = line;
  const log: RecipeLogEntry[] = [];
  let before: RadarLine | undefined;
  for (const step of recipe.steps) {
    if (options.keepBefore === step.step && before === undefined) before = cur === line ? { ...line, data: line.data.slice() } : cur;
    const t0 = options.onStep ? performance.now() : 0;
    // after the first step the data are our own: a step that can write in place does (never into
    // `line`'s data or the kept `before`)
    const own = cur !== line && cur.data.buffer !== line.data.buffer && cur.data !== before?.data ? cur.data : undefined;
    const r = runStep(cur, step, ctx, own);
    options.onStep?.(step.step, performance.now() - t0);
    cur = r.line;
    log.push(r.entry);
  }
  if (cur === line) cur = { ...line, data: line.data.slice() };
  if (options.keepBefore !== undefined && before === undefined) before = cur;
  return before ? { line: cur, log, before } : { line: cur, log };
}
