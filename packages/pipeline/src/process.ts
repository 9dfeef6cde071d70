import { readFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { InputError, isInputError } from '@lamina/errors';
import { stageFolder } from '@lamina/atomic';
import { checkPlanNearSurvey, loadSite, pointToWgs84, shownPath, type Site } from '@lamina/site';
import { buildVelocityReport, velocityJsonChunks, type VelocityReport } from '@lamina/velocity';
import { defaultWindows, PointSpill, type SliceWindow } from '@lamina/slices';
import type { Recipe } from '@lamina/processing';
import { exportTargets, matchDecisions, readReview, writeReview, type Review } from '@lamina/targets';
import { createPool, defaultThreads, type Pool, type SerialisedError } from './pool';
import { pass1, pass2, siteRecipe, type Pass1Result, type Pass1Task, type Pass2Result, type Pass2Task } from './line-task';
import { extents, linesGeoJson, planGeoJson, siteSummary, writeChunks, writeRadargramIndex } from './outputs';
import { sliceAndScreen, type Anchored, type Screening } from './slice-and-screen';

export interface ProcessOptions {
  /** Worker threads; 0 runs every line on the calling thread. @default LAMINA_THREADS or the core count */
  threads?: number;
  /** A recipe object (parsed JSON) overriding site.json's. */
  recipe?: unknown;
  recipeFile?: string;
  /** Slice thickness, m. @default half a wavelength in the soil */
  sliceThicknessM?: number;
  sliceOverlap?: number;
  maxDepthM?: number;
  /** Grid cell size, m. @default a quarter of the line spacing */
  cellSizeM?: number;
  /** Line-level levelling of slice values. @default false */
  level?: boolean;
  /** Memory for one band of the grid while it is screened; a larger grid is done in overlapping row bands. @default 384 MiB */
  screenBandBytes?: number;
  /** How far a screening band reaches past its core, m. @default max(20 m, 2.5 x the deepest air-wave radius) */
  bandOverlapM?: number;
  onProgress?: (stage: string, done: number, total: number) => void;
  /** The run's time stamp (run.json, export date); fixed in tests for reproducible outputs. @default now */
  now?: Date;
  /** Stop after this stage (for tests of interruption). */
  failAfter?: string;
}

export interface ProcessSummary {
  site: string;
  outDir: string;
  lines: number;
  traces: number;
  velocity: VelocityReport['site'];
  slices: number;
  anomalies: number;
  aboveGround: number;
  targets: number;
  /** Row bands the grid was screened in (1 when it fitted `screenBandBytes`). */
  screeningBands: number;
  files: string[];
}

const VERSION = '0.1.0';

type Task = Pass1Task | Pass2Task;
type Result = Pass1Result | Pass2Result;

function revive(e: SerialisedError): Error {
  if (e.name === 'InputError' && e.file !== undefined && e.detail !== undefined) {
    const where: { field?: string; offset?: number; line?: number } = {};
    if (e.field !== undefined) where.field = e.field;
    if (e.offset !== undefined) where.offset = e.offset;
    if (e.line !== undefined) where.line = e.line;
    return new InputError(e.file, e.detail, where);
  }
  const err = new Error(e.message);
  err.name = e.name;
  if (e.stack) err.stack = e.stack;
  return err;
}

/** Runs tasks on worker threads or, with 0 threads, in this thread; results in task order. */
function runner(threads: number): { run: (t: Task) => Promise<Result>; close: () => Promise<void> } {
  if (threads <= 0) return { run: (t) => (t.kind === 'pass1' ? pass1(t) : pass2(t)), close: async () => {} };
  const pool: Pool<Task, Result> = createPool(new URL('./line-worker.ts', import.meta.url), threads, revive);
  return { run: (t) => pool.run(t), close: () => pool.close() };
}

async function inOrder<T>(n: number, start: (i: number) => Promise<T>, onDone: (done: number) => void): Promise<T[]> {
  let done = 0;
  return Promise.all(
    Array.from({ length: n }, (_, i) =>
      start(i).then((r) => {
        onDone(++done);
        return r;
      }),
    ),
  );
}

/**
 * `lamina process`: lines -> processed -> velocity -> slices -> anomalies -> targets, written into a
 * staging folder beside `outDir` and renamed into place only when everything succeeded. Input files are
 * only read. An existing review.json in `outDir` is carried over and its decisions re-matched.
 */
export async function runProcess(siteDir: string, outDir: string, options: ProcessOptions = {}): Promise<ProcessSummary> {
  const site = await loadSite(siteDir);
  const recipe: Recipe = siteRecipe(site, options.recipe, options.recipeFile);
  const progress = options.onProgress ?? (() => {});
  const now = options.now ?? new Date();
  const threads = Math.min(options.threads ?? defaultThreads(), site.lines.length);
  const stage = await stageFolder(outDir);
  const exec = runner(threads);
  try {
    const n = site.lines.length;
    progress('processing lines', 0, n);
    const p1 = (await inOrder(n, (i) => exec.run({ kind: 'pass1', siteDir: site.dir, line: i, recipe, stageDir: stage.path }), (d) => progress('processing lines', d, n))) as Pass1Result[];

    const toWgs84 = (x: number, y: number) => pointToWgs84(site.crs, x, y);
    const summaries = p1.map((r) => r.summary);
    const ext = extents(summaries, toWgs84);
    checkPlanNearSurvey(site.plan, ext.site, site.crs.metresPerUnit, shownPath(site.planFile ?? join(site.dir, 'plan.geojson')));

    const fits = p1.flatMap((r) => r.fits);
    const velocity = buildVelocityReport(fits, {
      separationM: site.antenna.separationM,
      metresPerUnit: site.crs.metresPerUnit,
      lineDirections: Object.fromEntries(p1.map((r) => [r.summary.id, r.direction])),
    });
    await writeChunks(join(stage.path, 'velocity.json'), velocityJsonChunks(velocity));
    // The picks are for the viewer (in velocity.json now); screening needs only the fits. They grow
    // with the number of lines, so they are let go here.
    for (const h of velocity.hyperbolas ?? []) delete h.picks;
    for (const r of p1) r.fits = [];
    if (options.failAfter === 'velocity') throw new Error('stopped after velocity (failAfter)');

    const windows = sliceWindowsFor(site, p1, velocity, options);
    progress('depth slices', 0, n);
    // Each line's per-trace slice values (after and before background removal, side by side) go to a
    // point spill on disk in line order (so the result does not depend on which worker finished first),
    // and the line is dropped: memory does not grow with the number of lines.
    const spill = new PointSpill(2 * windows.length, stage.path);
    const waiting = new Map<number, Pass2Result>();
    let next = 0;
    let log: Pass2Result['log'] = [];
    let screening: Screening;
    try {
      await inOrder(
        n,
        (i) =>
          exec.run({ kind: 'pass2', siteDir: site.dir, line: i, recipe, model: velocity.model, velocityMPerNs: velocity.site.velocityMPerNs, windows }).then((res) => {
            waiting.set(i, res as Pass2Result);
            for (let r = waiting.get(next); r; r = waiting.get(next)) {
              spill.addLine(r.x, r.y, r.values);
              if (next === 0) log = r.log;
              waiting.delete(next++);
            }
          }),
        (d) => progress('depth slices', d, n),
      );
      await exec.close();
      screening = await sliceAndScreen(site, stage.path, spill, summaries.map((l) => l.id), windows, velocity, recipe, { ...options, onProgress: progress }, Math.max(1, threads));
    } finally {
      spill.remove();
    }

    await writeJson(stage.path, 'lines.geojson', linesGeoJson(summaries, toWgs84));
    await writeJson(stage.path, 'plan.geojson', planGeoJson(site.plan));
    await writeRadargramIndex(stage.path, p1.map((r) => r.radargramEntry));
    const identity = { name: site.name, crs: site.crs.input, extent: ext.wgs84 };
    await writeJson(stage.path, 'run.json', {
      tool: { name: 'lamina', version: VERSION },
      createdAt: now.toISOString(),
      site: { ...siteSummary(site), extentWgs84: ext.wgs84, extentSite: ext.site },
      identity,
      nearSurfaceM: Math.round(screening.nearSurfaceM * 1e4) / 1e4,
      recipe,
      log,
      threads,
      lines: summaries.map((l) => ({ id: l.id, file: l.file, traces: l.traces, samples: l.samples, dtNs: l.dtNs, lengthM: l.lengthM })),
    });

    const reviewFile = join(outDir, 'review.json');
    const reviewRead = await readText(reviewFile);
    await carryReview(reviewFile, join(stage.path, 'review.json'), identity, screening.anchored);

    progress('targets', 0, 1);
    let exported = await exportTargets(stage.path, { now });
    // The viewer may have saved decisions into the old folder while this run worked: take them along.
    if ((await readText(reviewFile)) !== reviewRead) {
      await carryReview(reviewFile, join(stage.path, 'review.json'), identity, screening.anchored);
      exported = await exportTargets(stage.path, { now });
    }
    progress('targets', 1, 1);

    if (options.failAfter === 'outputs') throw new Error('stopped before commit (failAfter)');
    await stage.commit();
    return {
      site: site.name,
      outDir,
      lines: n,
      traces: summaries.reduce((a, l) => a + l.traces, 0),
      velocity: velocity.site,
      slices: windows.length,
      anomalies: screening.anomalies,
      aboveGround: screening.aboveGround,
      targets: exported.targets,
      screeningBands: screening.bands,
      files: ['run.json', 'lines.geojson', 'plan.geojson', 'velocity.json', 'slices.tif', 'slices.json', 'radargrams/index.json', 'anomalies.geojson', 'interfaces.geojson', 'forecast.geojson', 'review.json', ...exported.files.filter((f) => !f.includes('review'))],
    };
  } catch (e) {
    await exec.close().catch(() => {});
    await stage.abort().catch(() => {});
    if (isInputError(e)) throw e;
    throw e;
  }
}

/** A file's text, or undefined when it cannot be read (no review.json yet). */
async function readText(path: string): Promise<string | undefined> {
  return readFile(path, 'utf8').catch(() => undefined);
}

/** Re-match the decisions of an earlier review.json to this run's anomalies (kept when unmatched). */
async function carryReview(
  from: string,
  to: string,
  identity: Review['site'],
  anchored: Anchored[],
): Promise<void> {
  const review = await readReview(shownPath(from), identity);
  const { matched, unmatched } = matchDecisions(review.decisions, anchored);
  await writeReview(to, { ...review, site: identity, decisions: [...matched, ...unmatched] });
}

function sliceWindowsFor(site: Site, p1: Pass1Result[], velocity: VelocityReport, options: ProcessOptions): SliceWindow[] {
  // The shallowest record bounds the depth range (every trace must reach every slice).
  let nSamples = Infinity, dtNs = 0, timeZeroNs = 0, reach = Infinity;
  for (const r of p1) {
    const t = (r.nSamples - 1) * r.dtNs - r.timeZeroNs;
    if (t < reach) {
      reach = t;
      nSamples = r.nSamples;
      dtNs = r.dtNs;
      timeZeroNs = r.timeZeroNs;
    }
  }
  return defaultWindows({
    model: velocity.model,
    separationM: site.antenna.separationM,
    frequencyMHz: site.antenna.frequencyMHz,
    nSamples,
    dtNs,
    timeZeroNs,
    ...(options.maxDepthM !== undefined ? { bottomM: options.maxDepthM } : {}),
    ...(options.sliceThicknessM !== undefined ? { thicknessM: options.sliceThicknessM } : {}),
    ...(options.sliceOverlap !== undefined ? { overlap: options.sliceOverlap } : {}),
  });
}

async function writeJson(dir: string, name: string, obj: unknown): Promise<void> {
  const { mkdir } = await import('node:fs/promises');
  const { dirname } = await import('node:path');
  await mkdir(dirname(join(dir, name)), { recursive: true });
  await writeFile(join(dir, name), JSON.stringify(obj, null, 1) + '\n');
}
