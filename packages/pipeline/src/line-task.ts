import type { RadarLine } from '@lamina/radar-data';
import { loadSite, readLine, pointToWgs84, type Site } from '@lamina/site';
import { defaultRecipe, envelope, parseRecipe, runRecipe, type Recipe, type RecipeLogEntry } from '@lamina/processing';
import { lineDirection, lineHyperbolas, recipeForVelocity, type HyperbolaFit, type VelocityModel } from '@lamina/velocity';
import { sampleDepths, traceSliceValues, type SliceWindow } from '@lamina/slices';
import { summariseLine, writeRadargram, type LineSummary } from './outputs';

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

function context(s: Site, velocityMPerNs?: number) {
  return {
    frequencyMHz: s.antenna.frequencyMHz,
    separationM: s.antenna.separationM,
    metresPerUnit: s.crs.metresPerUnit,
    ...(velocityMPerNs !== undefined ? { velocityMPerNs } : {}),
  };
}

export async function pass1(task: Pass1Task): Promise<Pass1Result> {
  const s = await site(task.siteDir);
  const src = s.lines[task.line]!;
  const raw = await readLine(s, src);
  const { line, log } = runRecipe(raw, recipeForVelocity(task.recipe), context(s));
  const fits =
    task.detect === false
      ? []
      : lineHyperbolas(line, {
          separationM: s.antenna.separationM,
          metresPerUnit: s.crs.metresPerUnit,
          frequencyMHz: s.antenna.frequencyMHz,
        });
  const radargramEntry = await writeRadargram(task.stageDir, line, (x, y) => pointToWgs84(s.crs, x, y));
  return {
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
  const s = await site(task.siteDir);
  const src = s.lines[task.line]!;
  const raw = await readLine(s, src);
  const { line, before, log } = runRecipe(raw, task.recipe, context(s, task.velocityMPerNs), { keepBefore: 'backgroundRemoval' });
  const sep = s.antenna.separationM;
  const after = sliceValues(line, task, sep);
  const beforeBackground = before && before !== line ? sliceValues(before, task, sep) : after;
  const nw = task.windows.length;
  const values = new Float32Array(2 * after.length);
  for (let t = 0; t < line.nTraces; t++) {
    values.set(after.subarray(t * nw, (t + 1) * nw), 2 * t * nw);
    values.set(beforeBackground.subarray(t * nw, (t + 1) * nw), (2 * t + 1) * nw);
  }
  return { x: line.x, y: line.y, values, log };
}

function sliceValues(line: RadarLine, task: Pass2Task, separationM: number): Float32Array {
  const env = envelope(line);
  const depths = sampleDepths(line.nSamples, line.dtNs, line.timeZeroNs, task.model, separationM);
  return traceSliceValues(env.data, line.nTraces, line.nSamples, depths, task.windows, 'mean-square');
}
