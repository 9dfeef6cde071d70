import type { RadarLine } from '@lamina/radar-data';
import { InputError } from '@lamina/errors';
import { loadSite, readLine, shownPath, syncOpenSegy, type LineSource, type Site } from '@lamina/site';
import { alongTrackM, defaultRecipe, envelope, parseRecipe, runRecipe, withoutAirEvents, type AirObjects, type Recipe, type RecipeLogEntry, type Step } from '@lamina/processing';
import { EARLY_APEX_FLAG, fitManualPicks, lineDirection, lineHyperbolas, recipeForVelocity, sampleDepths, type HyperbolaFit, type ManualHyperbola, type VelocityModel } from '@lamina/velocity';
import { traceSliceValues, type SliceWindow } from '@lamina/slices';
import { lineSpillPath, readLineSpill, writeLineSpill } from './line-spill';
import { summariseLine, writeRadargram, type LineSummary } from './outputs';
import { timed, type PartTimes } from './timings';

/**
 * The work done on one line, in two passes so that memory holds one line at a time:
 * pass 1 processes without migration, fits hyperbolas and writes the display radargram;
 * pass 2 (after the site velocity is known) adds migration and reduces the line to per-trace slice
 * values, for the final data and for the data before background removal. Pass 2 starts from pass 1's
 * line, kept on disk (`keepLine`, line-spill.ts), when the steps that need the velocity come last
 * (`pass2Steps`); otherwise it processes the line again from the file.
 */
export interface Pass1Task {
  kind: 'pass1';
  siteDir: string;
  line: number;
  recipe: Recipe;
  stageDir: string;
  /** Detect and fit hyperbolas on this line (false once the site velocity is known: `SiteSampler`). @default true */
  detect?: boolean;
  /** Keep the processed line (and the line before background removal) in the stage folder for pass 2. @default false */
  keepLine?: boolean;
  /** With `keepLine`: return the kept line in the result (`Pass1Result.kept`) instead of writing it. @default false */
  keepInMemory?: boolean;
  /** Hand picks of this line from the output folder's picks.json (`index`: place in that file), fitted whatever `detect` says. */
  picks?: { hyperbola: ManualHyperbola; index: number }[];
  /** picks.json as shown in messages. */
  picksFile?: string;
  /**
   * Number each fit by its place in the list of its whole line (the context's, for a piece): velocity.json
   * `lineOrder`, so that a merge of tiles lists the fits of a line in the order a run of the whole line
   * gives them (screening takes the first of equally near fits). @default false
   */
  fitOrder?: boolean;
}
export interface Pass1Result {
  summary: LineSummary;
  fits: HyperbolaFit[];
  log: RecipeLogEntry[];
  /** The line's radargrams/index.json entry, written beside its radargram (see `writeRadargramIndex`). */
  radargramEntry: string;
  direction: [number, number];
  timeZeroNs: number;
  nSamples: number;
  dtNs: number;
  /** Milliseconds of each part of this line's work (`ProcessTimings.lineWork`). */
  times: PartTimes;
  /**
   * A piece processed with its context (a tile's): what the `airEvents` step of pass 2, which runs on the
   * context, needs of it: the above-ground fits' apexes on the context ([trace in the context, t0 ns]
   * pairs; `fits` hold the piece's only, on the piece's traces) and the context's plan box [x0, y0, x1, y1].
   */
  context?: { airApexes: number[]; box: [number, number, number, number] };
  /** The kept line (`keepInMemory`), for `Pass2Task.kept`. */
  kept?: KeptLine;
}

/** Pass 1's processed line and the line before background removal (undefined when the recipe has none). */
export interface KeptLine {
  line: RadarLine;
  before: RadarLine | undefined;
}

/** The buffers of a kept line to move (not copy) between threads: its sample arrays (positions are copies). */
export function keptBuffers(kept: KeptLine | undefined): ArrayBuffer[] {
  if (!kept) return [];
  const all = [kept.line.data.buffer, kept.before?.data.buffer, kept.line.x.buffer, kept.line.y.buffer];
  return all.filter((b, i): b is ArrayBuffer => b instanceof ArrayBuffer && all.indexOf(b) === i);
}

/** A kept line whose arrays own their buffers (whole copies of views), so that moving them takes nothing else along. */
function ownKept(line: RadarLine, before: RadarLine | undefined): KeptLine {
  const own = <A extends Float32Array | Float64Array>(a: A): A => (a.byteOffset === 0 && a.byteLength === a.buffer.byteLength ? a : (a.slice() as A));
  const data = own(line.data);
  const kept: RadarLine = { id: line.id, nSamples: line.nSamples, nTraces: line.nTraces, dtNs: line.dtNs, timeZeroNs: line.timeZeroNs, x: line.x.slice(), y: line.y.slice(), data };
  const b = before && before !== line ? own(before.data) : undefined;
  return { line: kept, before: b ? { ...kept, data: b === data ? b.slice() : b } : undefined };
}

export interface Pass2Task {
  kind: 'pass2';
  siteDir: string;
  line: number;
  recipe: Recipe;
  model: VelocityModel;
  velocityMPerNs: number;
  windows: SliceWindow[];
  /** Start from the line pass 1 kept in this stage folder (pass 1 ran with `keepLine`). @default undefined */
  keptIn?: string;
  /** Start from the line pass 1 kept in memory (pass 1 ran with `keepInMemory`; moved to the worker). @default undefined */
  kept?: KeptLine;
  /** Above-ground objects of the plan and this line's air-velocity apexes, for the `airEvents` step (`airObjectsFor`). @default undefined */
  air?: AirObjects;
}
export interface Pass2Result {
  x: Float64Array;
  y: Float64Array;
  /**
   * Trace-major `nTraces * 2 * windows.length`: for each trace the slice values of the processed
   * (migrated) envelope, then the same before background removal (for air-wave screening).
   */
  values: Float32Array;
  /** The recipe log (with `keptIn`: of the steps pass 2 ran, after pass 1's). */
  log: RecipeLogEntry[];
  /** Milliseconds of each part of this line's work (`ProcessTimings.lineWork`). */
  times: PartTimes;
}

/**
 * The recipe of pass 1: without migration and envelope (`recipeForVelocity`), and without `airEvents`,
 * whose mask needs pass 1's own air-velocity fits (and whose cleaning would hide them from the fit).
 */
export function pass1Recipe(recipe: Recipe): Recipe {
  return recipeForVelocity(withoutAirEvents(recipe));
}

/**
 * The steps pass 2 runs on pass 1's line: pass 1 runs the recipe without air-event removal, migration
 * and envelope (`pass1Recipe`), so when those come after every other step, the whole recipe is pass 1's
 * then these. Undefined when they do not (a step after migration): pass 2 then processes the line again.
 */
export function pass2Steps(recipe: Recipe): Step[] | undefined {
  const late = (s: Step) => s.step === 'airEvents' || s.step === 'migration' || s.step === 'envelope';
  const first = recipe.steps.findIndex(late);
  if (first < 0) return [];
  const tail = recipe.steps.slice(first);
  return tail.every(late) && pass1Recipe(recipe).steps.length === first ? tail : undefined;
}

/** A line task's thread has nothing else to do while it reads its line: synchronous reads. */
const openLine = syncOpenSegy();

const sites = new Map<string, Promise<Site>>();
function site(dir: string): Promise<Site> {
  let s = sites.get(dir);
  if (!s) {
    s = loadSite(dir);
    sites.set(dir, s);
  }
  return s;
}

/** The recipe of a site: `site.json` `recipe` if present, else the defaults for its antenna. */
export function siteRecipe(s: Site, override?: unknown, overrideFile = 'recipe'): Recipe {
  if (override !== undefined) return parseRecipe(override, overrideFile);
  if (s.recipe !== undefined) return parseRecipe(s.recipe, `${s.dir}/site.json`, { pathPrefix: 'recipe' });
  return defaultRecipe(s.antenna.frequencyMHz);
}

function context(s: Site, velocityMPerNs?: number, model?: VelocityModel, air?: AirObjects) {
  return {
    ...(air ? { airObjects: air } : {}),
    frequencyMHz: s.antenna.frequencyMHz,
    separationM: s.antenna.separationM,
    metresPerUnit: s.crs.metresPerUnit,
    ...(velocityMPerNs !== undefined ? { velocityMPerNs } : {}),
    // a layered model makes `auto` migration phase-shift through its interval velocities
    ...(model && model.kind === 'layered' ? { velocityLayers: model.layers } : {}),
  };
}

/** `runRecipe`'s per-step times added to `times` as `<pass> processing: <step>`. */
const stepTimes = (times: PartTimes, pass: string) => (step: string, ms: number) => {
  const k = `${pass} processing: ${step}`;
  times[k] = (times[k] ?? 0) + ms;
};

/**
 * A line with `context` (a tile's piece of a longer line) is read and processed over its context range,
 * so that steps over the whole line (time-zero's common pick, the mean trace of background removal,
 * migration) see the traces a run of the whole line sees; `keep` then cuts the result to the piece.
 */
function contextSource(src: LineSource): LineSource {
  return src.context ? { ...src, traces: src.context } : src;
}

/** The traces of `line` (read over `contextSource(src)`) that belong to `src` itself. */
function keep(line: RadarLine, src: LineSource): RadarLine {
  if (!src.context || !src.traces) return line;
  const from = src.traces[0] - src.context[0];
  const to = src.traces[1] - src.context[0] + 1;
  const ns = line.nSamples;
  return { ...line, nTraces: to - from, data: line.data.subarray(from * ns, to * ns), x: line.x.subarray(from, to), y: line.y.subarray(from, to) };
}

export async function pass1(task: Pass1Task): Promise<Pass1Result> {
  const times: PartTimes = {};
  const s = await site(task.siteDir);
  const src = s.lines[task.line]!;
  const raw = await timed(times, 'pass 1 read line', () => readLine(s, contextSource(src), { open: openLine }));
  const keepBefore = task.keepLine && task.recipe.steps.some((st) => st.step === 'backgroundRemoval');
  const { line: whole, log, before } = runRecipe(raw, pass1Recipe(task.recipe), context(s), { onStep: stepTimes(times, 'pass 1'), ...(keepBefore ? { keepBefore: 'backgroundRemoval' as const } : {}) });
  // pass 2 migrates the whole context, so that is what is kept for it
  const keptBefore = keepBefore ? before : undefined;
  if (task.keepLine && !task.keepInMemory) await timed(times, 'pass 1 keep line', () => writeLineSpill(lineSpillPath(task.stageDir, task.line), whole, keptBefore));
  const r = await pass1Rest(task, s, src, whole, log, times);
  return task.keepLine && task.keepInMemory ? { ...r, kept: ownKept(whole, keptBefore) } : r;
}

async function pass1Rest(task: Pass1Task, s: Site, src: LineSource, whole: RadarLine, log: RecipeLogEntry[], times: PartTimes): Promise<Pass1Result> {
  const line = keep(whole, src);
  const t0 = performance.now();
  const fits =
    task.detect === false
      ? []
      : // on the whole context, as a run of the whole line fits them (screening's hyperbola evidence)
        lineHyperbolas(whole, {
          separationM: s.antenna.separationM,
          metresPerUnit: s.crs.metresPerUnit,
          frequencyMHz: s.antenna.frequencyMHz,
        });
  if (task.fitOrder) fits.forEach((f, k) => ((f as HyperbolaFit & { lineOrder?: number }).lineOrder = k));
  let onContext: Pass1Result['context'];
  if (line !== whole) {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let t = 0; t < whole.nTraces; t++) {
      x0 = Math.min(x0, whole.x[t]!);
      x1 = Math.max(x1, whole.x[t]!);
      y0 = Math.min(y0, whole.y[t]!);
      y1 = Math.max(y1, whole.y[t]!);
    }
    onContext = { airApexes: fits.filter((f) => f.origin === 'above-ground' && !f.flags?.includes(EARLY_APEX_FLAG)).flatMap((f) => [f.trace, f.t0Ns]), box: [x0, y0, x1, y1] };
    // fits of the piece, with the trace and along-line offsets of the piece (its radargram)
    const from = src.traces![0] - src.context![0];
    const startM = alongTrackM(whole, s.crs.metresPerUnit)[from] as number;
    const kept = fits.filter((f) => f.trace >= from && f.trace < from + line.nTraces);
    fits.length = 0;
    for (const f of kept) {
      f.trace -= from;
      if (f.x0M !== undefined) f.x0M -= startM;
      if (f.picks) f.picks.offsetM = f.picks.offsetM.map((o) => o - startM);
      fits.push(f);
    }
  }
  for (const p of task.picks ?? []) fits.push(fitManualPicks(line, p.hyperbola, task.picksFile ?? 'picks.json', p.index, { separationM: s.antenna.separationM, metresPerUnit: s.crs.metresPerUnit }));
  times['pass 1 hyperbolas'] = performance.now() - t0;
  const radargramEntry = await timed(times, 'pass 1 radargram', () => writeRadargram(task.stageDir, line));
  return {
    times,
    summary: summariseLine(line, src.relFile, s.crs.metresPerUnit),
    fits,
    log,
    radargramEntry,
    direction: lineDirection(line),
    ...(onContext ? { context: onContext } : {}),
    timeZeroNs: line.timeZeroNs,
    nSamples: line.nSamples,
    dtNs: line.dtNs,
  };
}

export async function pass2(task: Pass2Task): Promise<Pass2Result> {
  const times: PartTimes = {};
  const s = await site(task.siteDir);
  const src = s.lines[task.line]!;
  let raw: RadarLine | undefined;
  let line: RadarLine;
  let before: RadarLine | undefined;
  let log: RecipeLogEntry[];
  const ctx = context(s, task.velocityMPerNs, task.model, task.air);
  const steps = task.keptIn !== undefined || task.kept ? pass2Steps(task.recipe) : undefined;
  if ((task.keptIn !== undefined || task.kept) && steps) {
    const kept = task.kept ?? (await timed(times, 'pass 2 read kept line', () => readLineSpill(lineSpillPath(task.keptIn as string, task.line))));
    ({ line, log } = runRecipe(kept.line, { steps }, ctx, { onStep: stepTimes(times, 'pass 2') }));
    // without background removal the data "before" it is the final line, as runRecipe's keepBefore gives
    before = kept.before ?? line;
  } else {
    raw = await timed(times, 'pass 2 read line', () => readLine(s, contextSource(src), { open: openLine }));
    ({ line, before, log } = runRecipe(raw, task.recipe, ctx, { keepBefore: 'backgroundRemoval', onStep: stepTimes(times, 'pass 2') }));
  }
  const same = before === line;
  line = keep(line, src);
  if (before) before = same ? line : keep(before, src);
  const sep = s.antenna.separationM;
  const after = timed(times, 'pass 2 envelope + slice values', () => sliceValues(line, task, sep));
  const beforeBackground = before && before !== line ? timed(times, 'pass 2 envelope + slice values', () => sliceValues(before, task, sep)) : after;
  const nw = task.windows.length;
  // Finite samples so large that their energy overflows Float32 (damaged bytes, a wrong format) would
  // reach the grid as infinities; name the trace instead.
  const inf = after.findIndex((v) => v === Infinity || v === -Infinity);
  if (inf >= 0) {
    const t = Math.floor(inf / nw);
    raw = await readLine(s, src, { open: openLine });
    const peak = raw.data.subarray(t * raw.nSamples, (t + 1) * raw.nSamples).reduce((m, v) => Math.max(m, Math.abs(v)), 0);
    throw new InputError(shownPath(src.file), `trace ${(src.traces?.[0] ?? 0) + t + 1}: expected sample values a receiver records, found values up to ${peak.toExponential(2)} whose energy overflows 32-bit floats; the samples are damaged or not in the format the binary header names`);
  }
  const values = new Float32Array(2 * after.length);
  for (let t = 0; t < line.nTraces; t++) {
    values.set(after.subarray(t * nw, (t + 1) * nw), 2 * t * nw);
    values.set(beforeBackground.subarray(t * nw, (t + 1) * nw), (2 * t + 1) * nw);
  }
  return { x: line.x, y: line.y, values, log, times };
}

/**
 * The envelope of a line, kept between the lines of a worker (the slice values are taken from it before
 * the next line needs it): a fresh one each line costs page faults and garbage collection.
 */
const envScratch = { env: new Float32Array(0) };

function sliceValues(line: RadarLine, task: Pass2Task, separationM: number): Float32Array {
  const { nSamples: ns, data } = line;
  // `envelope` of @lamina/processing (two traces per transform pair, in the line kernels where they run)
  if (envScratch.env.length < data.length) envScratch.env = new Float32Array(data.length);
  const env = envelope(line, {}, envScratch.env.subarray(0, data.length)).data;
  const depths = sampleDepths(ns, line.dtNs, line.timeZeroNs, task.model, separationM);
  return traceSliceValues(env, line.nTraces, ns, depths, task.windows, 'mean-square');
}
