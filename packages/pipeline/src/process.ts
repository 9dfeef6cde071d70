import { readFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { RunJson } from '@lamina/contracts';
import { InputError, isInputError } from '@lamina/errors';
import { lockFolder, stageFolder, type FolderLock } from '@lamina/atomic';
import { checkPlanNearSurvey, loadSite, pointToWgs84, shownPath, type Site } from '@lamina/site';
import { buildVelocityReport, parsePicks, SiteSampler, velocityJsonChunks, type ManualHyperbola, type VelocityReport } from '@lamina/velocity';
import { PointSpill, type SliceWindow } from '@lamina/slices';
import { withAirEvents, withoutAirEvents, type Recipe } from '@lamina/processing';
import { exportTargets, matchDecisions, readReview, writeReview, type Review } from '@lamina/targets';
import { createPool, defaultThreads, type Pool } from '@lamina/runtime-files';
import { removeLineSpills } from './line-spill';
import { keptBuffers, pass1, pass2, pass2Steps, siteRecipe, type Pass1Result, type Pass1Task, type Pass2Result, type Pass2Task } from './line-task';
import { extents, linesGeoJson, planGeoJson, radargramIndex, siteSummary, writeChunks, writeFeatureCollection, type RadargramIndexTask } from './outputs';
import { sliceAndScreen, type Anchored, type Screening } from './slice-and-screen';
import { sideOutputs, type SideOutputsResult, type SideOutputsTask } from './side-outputs';
import { addParts, StageTimer, type ProcessTimings } from './timings';
import { preflight } from './preflight';
import { pass1Sampled } from './sampled-pass';
import { settleAll } from './settle';
import { airObjectsFor, planAirObjects } from './air-objects';
import { adoptSurveyVelocity, readSurveyVelocity, type SurveyVelocity } from './survey-velocity';
import { checkSurveyWindows, recordWindows } from './windows';

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
  /** Memory the run may use (checked before pass 1), bytes. @default the machine's total memory */
  memoryBytes?: number;
  /** Free bytes on the output folder's filesystem (checked before pass 1). @default measured with statfs */
  freeBytes?: number;
  /** Warnings (plan features left out for lying far from the survey). @default one `warning:` line on stderr */
  onWarning?: (message: string) => void;
  /** Stop after this stage (for tests of interruption). */
  failAfter?: string;
  /**
   * Fit hyperbolas only until the site velocity is known well and has settled (`SiteSampler` of
   * @lamina/velocity, lines in `spreadOrder`); later lines carry no automatic fits, so screening's
   * hyperbola evidence covers fewer lines (on the warehouse sample site that lost most of the old sewer's
   * targets: DEVELOPERS.md). @default false
   */
  sampleVelocityLines?: boolean;
  /**
   * Keep pass 1's processed lines in the stage folder so that pass 2 only migrates them (when the recipe
   * allows it, `pass2Steps`, and the disk has room); false processes every line again in pass 2. The
   * outputs are the same either way. @default true
   */
  keepLines?: boolean;
  /**
   * Pass 1's kept lines (`keepLines`) stay in memory, moved between the threads, when together they take
   * at most this many bytes (two Float32 copies of every line and its positions); larger sites keep them
   * in the stage folder, so that memory does not grow with the site. @default 256 MiB
   */
  keepLinesInMemoryBytes?: number;
  /**
   * Also write what `lamina merge` needs to screen the whole survey again (a tile's run; `SCREEN_INPUTS`
   * of slice-and-screen.ts: the stack before background removal and the lines' trace positions). @default false
   */
  keepScreenInputs?: boolean;
  /**
   * velocity.json of the whole survey (`lamina velocity`, or the tiles' shared model): its site velocity
   * and model are used for depth and screening instead of this run's own fit. @default none
   */
  velocityFile?: string;
  /**
   * Leave air-wave events in the data: a recipe's `airEvents` step is dropped (the default recipe has
   * none; where a recipe has it, it runs when the plan has above-ground objects near a line or the
   * velocity fits found air-velocity hyperbolas).
   * @default false
   */
  keepAirEvents?: boolean;
  /**
   * Take air-wave events out of the data before slicing: adds the `airEvents` step (AIR_EVENTS_STEP of
   * @lamina/processing) before migration when the recipe has none. Off by default: see defaultRecipe.
   * @default false
   */
  removeAirEvents?: boolean;
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
  /** Targets accepted in review (the others are candidates). */
  targetsAccepted: number;
  /** Row bands the grid was screened in (1 when it fitted `screenBandBytes`). */
  screeningBands: number;
  files: string[];
  /** The pipeline's stage timers (`lamina process --timings`). */
  timings: ProcessTimings;
}

const VERSION = '0.1.0';

type Task = Pass1Task | Pass2Task | SideOutputsTask | RadargramIndexTask;
type Result = Pass1Result | Pass2Result | SideOutputsResult | undefined;

/**
 * Runs tasks on worker threads or, with 0 threads, in this thread one after the other (as a worker
 * would: started together, their line reads would all be in memory at once, and each read's timer would
 * count the lines worked on while it waited); results in task order.
 */
function runner(threads: number): { run: (t: Task, transfer?: ArrayBuffer[]) => Promise<Result>; close: () => Promise<void> } {
  if (threads <= 0) {
    let last: Promise<unknown> = Promise.resolve();
    const run = (t: Task): Promise<Result> => {
      const r = last.then((): Promise<Result> => (t.kind === 'pass1' ? pass1(t) : t.kind === 'pass2' ? pass2(t) : t.kind === 'sideOutputs' ? sideOutputs(t) : radargramIndex(t).then(() => undefined)));
      last = r.catch(() => undefined);
      return r;
    };
    return { run, close: async () => {} };
  }
  const pool: Pool<Task, Result> = createPool(new URL('./line-worker.ts', import.meta.url), threads);
  return { run: (t, transfer) => pool.run(t, transfer), close: () => pool.close() };
}

async function inOrder<T>(n: number, start: (i: number) => Promise<T>, onDone: (done: number) => void): Promise<T[]> {
  let done = 0;
  return settleAll(
    Array.from({ length: n }, (_, i) =>
      start(i).then((r) => {
        onDone(++done);
        return r;
      }),
    ),
  );
}

/**
 * What the positions mean and whether the run fits, from headers only, before any trace is read; the
 * site with its checked plan, the survey velocity file and the hand matches saved by the viewer
 * (picks.json in the output folder), which join the automatic fits; the recipe as the site or options give it.
 */
async function checkInputs(loaded: Site, outDir: string, picksFile: string, options: ProcessOptions) {
  const { survey, size, freeBytes } = await preflight(loaded, outDir, options);
  for (const w of survey.warnings) (options.onWarning ?? ((m) => process.stderr.write(`warning: ${m}\n`)))(w);
  const site: Site = { ...loaded, plan: survey.plan };
  const surveyVelocity = options.velocityFile !== undefined ? await readSurveyVelocity(options.velocityFile) : undefined;
  const picksText = await readText(picksFile);
  const picks = picksText !== undefined ? picksByLine(picksText, shownPath(picksFile), site) : undefined;
  const asGiven: Recipe = siteRecipe(site, options.recipe, options.recipeFile);
  return { survey, size, freeBytes, site, surveyVelocity, picks, asGiven };
}

/**
 * `lamina process`: lines -> processed -> velocity -> slices -> anomalies -> targets, written into a
 * staging folder beside `outDir` and renamed into place only when everything succeeded. Input files are
 * only read. An existing review.json in `outDir` is carried over and its decisions re-matched.
 */
export async function runProcess(siteDir: string, outDir: string, options: ProcessOptions = {}): Promise<ProcessSummary> {
  const timer = new StageTimer();
  const siteLoaded = timer.start('load site');
  const loaded = await loadSite(siteDir);
  const threads = Math.min(options.threads ?? defaultThreads(), loaded.lines.length);
  // the workers start (each loads its code) while the inputs are checked; stopped when they fail
  const exec = runner(threads);
  const stopWorkers = async (e: unknown): Promise<never> => {
    await exec.close().catch(() => {});
    throw e;
  };
  const picksFile = join(outDir, 'picks.json');
  const { survey, size, freeBytes, site, surveyVelocity, picks, asGiven } = await checkInputs(loaded, outDir, picksFile, options).catch(stopWorkers);
  siteLoaded();
  const recipe: Recipe = options.keepAirEvents
    ? withoutAirEvents(asGiven)
    : options.removeAirEvents
      ? withAirEvents(asGiven)
      : asGiven;
  const progress = options.onProgress ?? (() => {});
  const now = options.now ?? new Date();
  // Pass 2 starts from pass 1's lines, kept in the stage folder, when the recipe allows it and the disk
  // has room for them (two Float32 copies of every line, positions, a header) beside the run's own files.
  // (a tile's piece keeps its whole processed context: site.json `context`)
  const keptBytes = survey.lines.reduce((a, l, i) => {
    const c = site.lines[i]?.context;
    return a + (c ? c[1] - c[0] + 1 : l.nTraces) * (8 * l.nSamples + 16) + 256;
  }, 0);
  const keepInMemory = keptBytes <= (options.keepLinesInMemoryBytes ?? 256 * 2 ** 20);
  const keepLines = (options.keepLines ?? true) && pass2Steps(recipe) !== undefined && (keepInMemory || freeBytes - size.diskBytes >= keptBytes);
  // One process per output folder: a second one would remove this one's stage (stageFolder clears stale ones).
  const runLock = await lockFolder(outDir, { kind: 'run', what: 'lamina process', shown: shownPath(outDir) }).catch(stopWorkers);
  let writeLock: FolderLock | undefined;
  const stage = await stageFolder(outDir).catch(async (e: unknown) => {
    await runLock.release();
    return stopWorkers(e);
  });
  let radargrams: Promise<unknown> | undefined;
  try {
    const n = site.lines.length;
    progress('processing lines', 0, n);
    const pass1Done = timer.start('pass 1: process lines, hyperbolas');
    const run1 = (i: number, detect: boolean) =>
      exec.run({ kind: 'pass1', siteDir: site.dir, line: i, recipe, stageDir: stage.path, detect, keepLine: keepLines, keepInMemory, ...(options.keepScreenInputs ? { fitOrder: true } : {}), ...(picks?.has(i) ? { picks: picks.get(i), picksFile: shownPath(picksFile) } : {}) }) as Promise<Pass1Result>;
    const reportOptions = { separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit };
    const p1 = options.sampleVelocityLines
      ? await pass1Sampled(n, Math.max(1, threads), run1, new SiteSampler(n, (f) => buildVelocityReport(f, reportOptions), { metresPerUnit: site.crs.metresPerUnit }), (d) => progress('processing lines', d, n))
      : ((await inOrder(n, (i) => run1(i, true), (d) => progress('processing lines', d, n))) as Pass1Result[]);
    pass1Done();
    for (const r of p1) addParts(timer.lineMs, r.times);

    const toWgs84 = (x: number, y: number) => pointToWgs84(site.crs, x, y);
    const summaries = p1.map((r) => r.summary);
    const ext = extents(summaries, toWgs84);
    checkPlanNearSurvey(site.plan, ext.site, site.crs.metresPerUnit, shownPath(site.planFile ?? join(site.dir, 'plan.geojson')));

    const velocityDone = timer.start('velocity model');
    const fits = p1.flatMap((r) => r.fits);
    const own = buildVelocityReport(fits, {
      separationM: site.antenna.separationM,
      metresPerUnit: site.crs.metresPerUnit,
      lineDirections: Object.fromEntries(p1.map((r) => [r.summary.id, r.direction])),
    });
    const velocity = surveyVelocity ? adoptSurveyVelocity(own, surveyVelocity) : own;
    await writeChunks(join(stage.path, 'velocity.json'), velocityJsonChunks(velocity));
    velocityDone();
    // The picks are for the viewer (in velocity.json now); screening needs only the fits. They grow
    // with the number of lines, so they are let go here.
    for (const h of velocity.hyperbolas ?? []) delete h.picks;
    for (const r of p1) r.fits = [];
    if (options.failAfter === 'velocity') throw new Error('stopped after velocity (failAfter)');

    const windows = sliceWindowsFor(site, p1, velocity, options, surveyVelocity);
    // the airEvents step's mask: the plan's above-ground objects and the air-velocity fits of each line
    const cleanAir = recipe.steps.some((st) => st.step === 'airEvents');
    const planAir = cleanAir ? planAirObjects(site.plan, site.crs.metresPerUnit) : undefined;
    const airFits = cleanAir ? (velocity.hyperbolas ?? []).filter((h) => h.origin === 'above-ground') : [];
    const airRuns = { lines: 0, cleaned: 0, foci: 0, apexes: 0, steep: 0, removed: 0, skipped: '' };
    progress('depth slices', 0, n);
    // Each line's per-trace slice values (after and before background removal, side by side) go to a
    // point spill on disk in line order (so the result does not depend on which worker finished first),
    // and the line is dropped: memory does not grow with the number of lines.
    const spill = new PointSpill(2 * windows.length, stage.path);
    const waiting = new Map<number, Pass2Result>();
    let next = 0;
    let log: Pass2Result['log'] = [];
    // the migration method is chosen per line (irregular spacing takes Kirchhoff): count them for the log
    const methods = new Map<string, number>();
    let screening: Screening;
    const pass2Done = timer.start('pass 2: process lines, slice values');
    try {
      await inOrder(
        n,
        (i) => {
          // a line kept in memory moves to the worker (and is let go here)
          const kept = p1[i]!.kept;
          p1[i]!.kept = undefined;
          return exec.run({
            kind: 'pass2',
            siteDir: site.dir,
            line: i,
            recipe,
            model: velocity.model,
            velocityMPerNs: velocity.site.velocityMPerNs,
            windows,
            ...(keepLines ? (kept ? { kept } : { keptIn: stage.path }) : {}),
            ...(planAir ? { air: airObjectsFor(planAir, summaries[i]!, p1[i]!.timeZeroNs, airFits, site.crs.metresPerUnit, p1[i]!.context) } : {}),
          }, keptBuffers(kept)).then((res) => {
            waiting.set(i, res as Pass2Result);
            addParts(timer.lineMs, (res as Pass2Result).times);
            for (let r = waiting.get(next); r; r = waiting.get(next)) {
              spill.addLine(r.x, r.y, r.values);
              // the log of the steps pass 2 ran from pass 1's line follows pass 1's
              if (next === 0) log = keepLines ? [...(p1[0] as Pass1Result).log, ...r.log] : r.log;
              const ran = r.log.find((e) => e.step === 'migration')?.result?.method;
              if (typeof ran === 'string') methods.set(ran, (methods.get(ran) ?? 0) + 1);
              const air = r.log.find((e) => e.step === 'airEvents');
              if (air) {
                airRuns.lines++;
                if (air.skipped) airRuns.skipped ||= air.skipped;
                else {
                  airRuns.cleaned++;
                  airRuns.foci += Number(air.result?.foci ?? 0);
                  airRuns.apexes += Number(air.result?.apexes ?? 0);
                  airRuns.steep += Number(air.result?.steepEvents ?? 0);
                  airRuns.removed += Number(air.result?.removedShare ?? 0);
                }
              }
              waiting.delete(next++);
            }
          });
        },
        (d) => progress('depth slices', d, n),
      );
      pass2Done();
      const mig = log.find((e) => e.step === 'migration');
      if (mig && methods.size > 0) mig.result = { ...mig.result, linesByMethod: Object.fromEntries([...methods].sort()) };
      // run.json records the step for the whole site (the log is the first line's): on how many lines it ran
      const airEntry = log.find((e) => e.step === 'airEvents');
      if (airEntry && airRuns.lines > 0) {
        const { skipped: _, ...rest } = airEntry;
        const result = { linesCleaned: airRuns.cleaned, lines: airRuns.lines, foci: airRuns.foci, airFitApexes: airRuns.apexes, steepEvents: airRuns.steep, meanRemovedShare: airRuns.cleaned ? Math.round((airRuns.removed / airRuns.cleaned) * 1e5) / 1e5 : 0 };
        log = log.map((e) => (e === airEntry ? (airRuns.cleaned > 0 ? { ...rest, result } : { ...rest, skipped: airRuns.skipped, result }) : e));
      }
      // a worker, idle now, makes slices.tif, the thumbnails and the forecast while this thread screens
      const side = (t: SideOutputsTask) => exec.run(t) as Promise<SideOutputsResult>;
      screening = await sliceAndScreen(site, stage.path, spill, summaries.map((l) => l.id), windows, velocity, recipe, { ...options, onProgress: progress, timer, side }, Math.max(1, threads));
      // and one writes the radargrams' index (their traces' WGS84 positions) while this thread writes the
      // other outputs and exports (during gridding and screening it would take a core from them)
      radargrams = exec.run({ kind: 'radargramIndex', stageDir: stage.path, entryFiles: p1.map((r) => r.radargramEntry), crs: site.crs });
      radargrams.catch(() => {});
    } finally {
      spill.remove();
      if (keepLines) await removeLineSpills(stage.path);
    }

    const outputsDone = timer.start('outputs: run.json, lines, radargrams, review');
    await writeFeatureCollection(join(stage.path, 'lines.geojson'), linesGeoJson(summaries, toWgs84));
    await writeJson(stage.path, 'plan.geojson', planGeoJson(site.plan));
    const identity = { name: site.name, crs: site.crs.input, extent: ext.wgs84 };
    const run: RunJson = {
      tool: { name: 'lamina', version: VERSION },
      createdAt: now.toISOString(),
      site: { ...siteSummary(site), extentWgs84: ext.wgs84, extentSite: ext.site },
      identity,
      nearSurfaceM: Math.round(screening.nearSurfaceM * 1e4) / 1e4,
      recipe,
      log,
      threads,
      lines: summaries.map((l) => ({ id: l.id, file: l.file, traces: l.traces, samples: l.samples, dtNs: l.dtNs, lengthM: l.lengthM })),
    };
    await writeJson(stage.path, 'run.json', run);

    // From the last read of review.json to the commit, no review save may land in the old folder (it
    // would be lost): the viewer and export wait for this lock.
    writeLock = await lockFolder(outDir, { what: 'lamina process', waitMs: 120_000, shown: shownPath(outDir) });
    const reviewFile = join(outDir, 'review.json');
    const reviewRead = await readText(reviewFile);
    await carryReview(reviewFile, join(stage.path, 'review.json'), identity, screening.anchored);
    // picks.json stays with the folder (the newest text: a save while this run worked lands in the next run)
    const picksNow = await readText(picksFile);
    if (picksNow !== undefined) await writeFile(join(stage.path, 'picks.json'), picksNow);
    outputsDone();

    progress('targets', 0, 1);
    const exportDone = timer.start('targets export');
    const thumbnails = screening.thumbnails ? { thumbnails: screening.thumbnails } : {};
    let exported = await exportTargets(stage.path, { now, lock: false, ownFiles: true, ...thumbnails });
    // The viewer may have saved decisions into the old folder while this run worked: take them along.
    if ((await readText(reviewFile)) !== reviewRead) {
      await carryReview(reviewFile, join(stage.path, 'review.json'), identity, screening.anchored);
      exported = await exportTargets(stage.path, { now, lock: false, ownFiles: true, ...thumbnails });
    }
    exportDone();
    progress('targets', 1, 1);
    await radargrams;
    await exec.close();

    if (options.failAfter === 'outputs') throw new Error('stopped before commit (failAfter)');
    const commitDone = timer.start('commit');
    await stage.commit();
    commitDone();
    await writeLock.release();
    await runLock.release();
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
      targetsAccepted: exported.accepted,
      screeningBands: screening.bands,
      timings: timer.result(threads),
      files: ['run.json', 'lines.geojson', 'plan.geojson', 'velocity.json', 'slices.tif', 'slices.json', 'radargrams/index.json', 'anomalies.geojson', 'interfaces.geojson', 'forecast.geojson', 'review.json', ...exported.files.filter((f) => !f.includes('review'))],
    };
  } catch (e) {
    await exec.close().catch(() => {});
    // (a task still writing into the stage would leave a partial one behind)
    await radargrams?.catch(() => {});
    await stage.abort().catch(() => {});
    await writeLock?.release();
    await runLock.release();
    if (isInputError(e)) throw e;
    // A filesystem that fills during the run (the estimate before pass 1 is checked against free space
    // then): the stage is gone, the previous outputs stay; say so on one line naming the folder.
    const err = e as NodeJS.ErrnoException | undefined;
    if (err?.code === 'ENOSPC' || err?.code === 'EDQUOT' || /^(ENOSPC|EDQUOT)\b/.test(err?.message ?? '')) {
      throw new InputError(shownPath(outDir), `expected room for the run's files, found its filesystem full while writing them (${err?.message}); the previous outputs are kept: free space or write elsewhere`);
    }
    throw e;
  }
}

/** picks.json's hyperbolas by the index of their line in the site; an unknown line id is an input error. */
function picksByLine(text: string, file: string, site: Site): Map<number, { hyperbola: ManualHyperbola; index: number }[]> {
  const parsed = parsePicks(text, file);
  const byId = new Map(site.lines.map((l, i) => [l.id, i]));
  const out = new Map<number, { hyperbola: ManualHyperbola; index: number }[]>();
  parsed.hyperbolas.forEach((h, index) => {
    const i = byId.get(h.line);
    if (i === undefined) throw new InputError(file, `expected a line id of the site, found ${JSON.stringify(h.line)}`, { field: `hyperbolas[${index}].line` });
    out.set(i, [...(out.get(i) ?? []), { hyperbola: h, index }]);
  });
  return out;
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

function sliceWindowsFor(site: Site, p1: Pass1Result[], velocity: VelocityReport, options: ProcessOptions, survey: SurveyVelocity | undefined): SliceWindow[] {
  const own = recordWindows(site, p1, velocity, options);
  // the survey's windows, unless this run asks for other slices
  const asks = options.maxDepthM !== undefined || options.sliceThicknessM !== undefined || options.sliceOverlap !== undefined;
  return survey?.windows && !asks ? checkSurveyWindows(survey.windows, own) : own;
}

async function writeJson(dir: string, name: string, obj: unknown): Promise<void> {
  const { mkdir } = await import('node:fs/promises');
  const { dirname } = await import('node:path');
  await mkdir(dirname(join(dir, name)), { recursive: true });
  await writeFile(join(dir, name), JSON.stringify(obj, null, 1) + '\n');
}
