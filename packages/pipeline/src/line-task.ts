import type { RadarLine } from '@lamina/radar-data';
import { InputError } from '@lamina/errors';
import { loadSite, readLine, pointToWgs84, shownPath, type Site } from '@lamina/site';
import { defaultRecipe, envelope, parseRecipe, runRecipe, type Recipe, type RecipeLogEntry } from '@lamina/processing';
import { lineDirection, lineHyperbolas, recipeForVelocity, sampleDepths, type HyperbolaFit, type VelocityModel } from '@lamina/velocity';
import { traceSliceValues, type SliceWindow } from '@lamina/slices';
import { summariseLine, writeRadargram, type LineSummary } from './outputs';
import { timed, type PartTimes } from './timings';

/**
 * The work done on one line, in two passes so that memory holds one line at a time:
 * pass 1 processes without migration, fits hyperbolas and writes the display radargram;
 * pass 2 (after the site velocity is known) processes again with migration and reduces the line to
 * per-trace slice values, for the final data and for the data before background removal.
 */
export interface Pass1Task {
  kind: 'pass1';
  siteDir: string;
  line: number;
  recipe: Recipe;
  stageDir: string;
  /** Detect and fit hyperbolas on this line (false once the site has enough fits: `enoughFits`). @default true */
  detect?: boolean;
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
}

export interface Pass2Task {
  kind: 'pass2';
  siteDir: string;
  line: number;
  recipe: Recipe;
  model: VelocityModel;
  velocityMPerNs: number;
  windows: SliceWindow[];
}
export interface Pass2Result {
  x: Float64Array;
  y: Float64Array;
  /**
   * Trace-major `nTraces * 2 * windows.length`: for each trace the slice values of the processed
   * (migrated) envelope, then the same before background removal (for air-wave screening).
   */
  values: Float32Array;
  log: RecipeLogEntry[];
  /** Milliseconds of each part of this line's work (`ProcessTimings.lineWork`). */
  times: PartTimes;
}

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

function context(s: Site, velocityMPerNs?: number, model?: VelocityModel) {
  return {
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

export async function pass1(task: Pass1Task): Promise<Pass1Result> {
  const times: PartTimes = {};
  const s = await site(task.siteDir);
  const src = s.lines[task.line]!;
  const raw = await timed(times, 'pass 1 read line', () => readLine(s, src));
  const { line, log } = runRecipe(raw, recipeForVelocity(task.recipe), context(s), { onStep: stepTimes(times, 'pass 1') });
  const t0 = performance.now();
  const fits =
    task.detect === false
      ? []
      : lineHyperbolas(line, {
          separationM: s.antenna.separationM,
          metresPerUnit: s.crs.metresPerUnit,
          frequencyMHz: s.antenna.frequencyMHz,
        });
  times['pass 1 hyperbolas'] = performance.now() - t0;
  const radargramEntry = await timed(times, 'pass 1 radargram', () => writeRadargram(task.stageDir, line, (x, y) => pointToWgs84(s.crs, x, y)));
  return {
    times,
    summary: summariseLine(line, src.relFile, s.crs.metresPerUnit),
    fits,
    log,
    radargramEntry,
    direction: lineDirection(line),
    timeZeroNs: line.timeZeroNs,
    nSamples: line.nSamples,
    dtNs: line.dtNs,
  };
}

export async function pass2(task: Pass2Task): Promise<Pass2Result> {
  const times: PartTimes = {};
  const s = await site(task.siteDir);
  const src = s.lines[task.line]!;
  const raw = await timed(times, 'pass 2 read line', () => readLine(s, src));
  const { line, before, log } = runRecipe(raw, task.recipe, context(s, task.velocityMPerNs, task.model), { keepBefore: 'backgroundRemoval', onStep: stepTimes(times, 'pass 2') });
  const sep = s.antenna.separationM;
  const after = timed(times, 'pass 2 envelope + slice values', () => sliceValues(line, task, sep));
  const beforeBackground = before && before !== line ? timed(times, 'pass 2 envelope + slice values', () => sliceValues(before, task, sep)) : after;
  const nw = task.windows.length;
  // Finite samples so large that their energy overflows Float32 (damaged bytes, a wrong format) would
  // reach the grid as infinities; name the trace instead.
  const inf = after.findIndex((v) => v === Infinity || v === -Infinity);
  if (inf >= 0) {
    const t = Math.floor(inf / nw);
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

function sliceValues(line: RadarLine, task: Pass2Task, separationM: number): Float32Array {
  const env = envelope(line);
  const depths = sampleDepths(line.nSamples, line.dtNs, line.timeZeroNs, task.model, separationM);
  return traceSliceValues(env.data, line.nTraces, line.nSamples, depths, task.windows, 'mean-square');
}
