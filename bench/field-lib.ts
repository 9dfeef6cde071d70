// The field benchmark's machinery (bench/field.bench.ts runs it; test/field-bench.test.ts smoke-tests it):
// simulate a scene, run `lamina process` on it as a user would (the CLI in a child process, so one scene's
// crash or memory does not take the others with it), score the output folder with @lamina/scoring, and
// pool rows by summing counts, areas and lengths (never by averaging percentages).
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { scoreFolder } from '../packages/scoring/src/index';
import { rng, simulateSite, type Scenario } from '../packages/simulate/src/index';
import { simulateCached } from './site-cache';
import { airMeasure, airMeasures, emptyAirMeasure, emptyAirSuppression, excessDb, measureDb, suppressionDb, type AirMeasure, type AirSuppression } from './air-measure';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');

/** One scene's figures: the counts behind every percentage, so that rows pool by summing. */
export interface FieldRow {
  name: string;
  /** `tune` (odd seeds), `held-out` (even seeds) or `sample` (a sample site). */
  half: 'tune' | 'held-out' | 'sample';
  seed: number | null;
  error: string | null;
  kTruth: number;
  kFitted: number | null;
  kRelError: number | null;
  /** Layered truth: |interval K error| at each buried object's depth (scoring's siteK.atObjects), summed, and their number. */
  kObjAbsErrorSum: number;
  kObjects: number;
  /**
   * Buried objects the raw data shows on no trace (truth.json response.traces 0). Since 2026-12-05 the
   * recall figures leave them out (scoring's `recorded`); the `...AllM` / `...All` fields count them.
   */
  invisible: number;
  targets: number;
  buriedTargets: number;
  airTargets: number;
  clutterTargets: number;
  areaM2: number;
  buriedAreaM2: number;
  surveyedAreaM2: number;
  /** Recorded pipes/cables: surveyed length and the part of it covered (recall x surveyed length), m. */
  utilitySurveyedM: number;
  utilityCoveredM: number;
  /** The same over every pipe/cable, recorded or not (the figure before 2026-12-05), m. */
  utilitySurveyedAllM?: number;
  utilityCoveredAllM?: number;
  utilities: number;
  /** Sum of pieces over the utilities covered at all, and their number. */
  piecesSum: number;
  piecesUtilities: number;
  piecesMax: number;
  /** Recorded compact objects found, and their number. */
  compactFound: number;
  compacts: number;
  /** The same over every compact object, recorded or not. */
  compactFoundAll?: number;
  compactsAll?: number;
  onLocus: number;
  onLocusFlagged: number;
  real: number;
  realFlagged: number;
  largestAreaM2: number;
  largestDepthExtentM: number;
  simulateS: number;
  processS: number;
  /** Anomalies by `properties.class` (`none` when absent) against their truth match (scoring's class table). */
  classes: Record<string, { buried: number; air: number; ambiguous: number; unmatched: number }>;
  /** New (issue 18, not a scoring definition): slice strength on the air-wave loci and on buried objects (bench/air-measure.ts). */
  air: AirMeasure;
  /** The same with `--keep-air-events` (the data as it was before the airEvents step), when asked for (`airBefore`). */
  airBefore: AirMeasure | null;
  /** Issue 18's paired measure of the two runs (bench/air-measure.ts `airMeasures`), when asked for (`airBefore`). */
  airSuppression: AirSuppression | null;
  /** The site came from the site cache (`siteCache`): `simulateS` is then the time to link it. */
  siteCached?: boolean;
  /** Plan features left out of the site's plan (`unsurveyedShare`), by id. */
  unsurveyed?: string[];
  /** The scoring's figures of the `--keep-air-events` run, when asked for (`airBefore`). */
  scoredBefore?: Partial<FieldRow>;
  /** A two-direction survey processed one direction at a time (`directions`): the scoring's figures of each. */
  byDirection?: { azimuthDeg: number; lines: number; scored: Partial<FieldRow> }[];
}

/** The rows of a two-direction scene processed one direction at a time (`directions`), named by azimuth. */
export function directionRows(r: FieldRow): FieldRow[] {
  return (r.byDirection ?? []).map((d) => ({ ...r, ...d.scored, name: `${r.name} (${d.azimuthDeg} deg only)`, air: emptyAirMeasure(), airBefore: null, airSuppression: null, byDirection: undefined }));
}

/** The row of a scene as it was with `--keep-air-events` (null without that run). */
export function beforeRow(r: FieldRow): FieldRow | null {
  if (!r.scoredBefore || !r.airBefore) return r.error ? r : null;
  return { ...r, ...r.scoredBefore, name: `${r.name} (kept)`, air: r.airBefore, airBefore: null, airSuppression: null };
}

export interface SceneRunOptions {
  /** Worker threads of `lamina process`. @default 2 */
  threads?: number;
  /** Keep the site and output folders. @default false */
  keep?: boolean;
  /** Also process with `--keep-air-events` for the air measure before the step (a second run of the scene). @default false */
  airBefore?: boolean;
  /**
   * Share of the plan's features left out of the site's plan.geojson (seeded by the scene's seed): objects
   * that stand on site but that nobody surveyed, as on real sites. They stay in truth.json, so their
   * air-wave loci are still scored. @default 0 (the plan is complete)
   */
  unsurveyedShare?: number;
  /**
   * A survey in two directions is also processed one direction at a time (a site folder per direction
   * holding only its lines), each scored against the same truth: item 3 of issue 12 asks that the two
   * directions together never score worse than either alone. @default false
   */
  directions?: boolean;
  /** Keep simulated sites in this folder and reuse them (bench/site-cache.ts). @default none (simulate every time) */
  siteCache?: string;
}

/**
 * The survey directions of a simulated site (axial azimuths of its truth lines, degrees, rounded, lines
 * within 10 degrees of each other in one), each with the site.json entries of its lines.
 */
function lineDirections(siteDir: string): { azimuthDeg: number; entries: unknown[] }[] {
  const site = JSON.parse(readFileSync(join(siteDir, 'site.json'), 'utf8')) as { lines: { file: string }[] };
  const truth = JSON.parse(readFileSync(join(siteDir, 'truth.json'), 'utf8')) as { lines: { file: string; start: number[]; end: number[] }[] };
  const groups: { azimuthDeg: number; entries: unknown[] }[] = [];
  for (const l of site.lines) {
    const t = truth.lines.find((q) => q.file === l.file);
    if (!t) continue;
    const az = ((((Math.atan2(t.end[0]! - t.start[0]!, t.end[1]! - t.start[1]!) * 180) / Math.PI) % 180) + 180) % 180;
    const g = groups.find((q) => Math.min(Math.abs(q.azimuthDeg - az), 180 - Math.abs(q.azimuthDeg - az)) < 10);
    if (g) g.entries.push(l);
    else groups.push({ azimuthDeg: Math.round(az), entries: [l] });
  }
  return groups;
}

/** A site folder beside `siteDir` with only `entries` as its lines (files and plan read from `siteDir`). */
function oneDirectionSite(siteDir: string, entries: unknown[], dir: string): void {
  mkdirSync(dir, { recursive: true });
  const site = JSON.parse(readFileSync(join(siteDir, 'site.json'), 'utf8')) as Record<string, unknown>;
  const up = (f: unknown) => (typeof f === 'string' ? join('..', basename(siteDir), f) : f);
  const lines = (entries as Record<string, unknown>[]).map((l) => ({ ...l, file: up(l.file), ...(l.positions ? { positions: up(l.positions) } : {}) }));
  writeFileSync(join(dir, 'site.json'), JSON.stringify({ ...site, plan: up(site.plan), lines }) + '\n');
  writeFileSync(join(dir, 'truth.json'), readFileSync(join(siteDir, 'truth.json')));
}

/**
 * Leaves each feature of a site's plan.geojson out with probability `share` (a stream of its own, so
 * the scene is otherwise unchanged). Returns the ids left out.
 */
export function leaveOutOfPlan(siteDir: string, seed: number, share: number): string[] {
  const file = join(siteDir, 'plan.geojson');
  const plan = JSON.parse(readFileSync(file, 'utf8')) as { features: { properties?: { id?: string } }[] };
  const r = rng(seed, 'field-bench:unsurveyed');
  const out: string[] = [];
  plan.features = plan.features.filter((f) => {
    const keep = r.next() >= share;
    if (!keep) out.push(String(f.properties?.id ?? '?'));
    return keep;
  });
  writeFileSync(file, JSON.stringify(plan) + '\n');
  return out;
}

export function emptyRow(name: string, half: FieldRow['half'], seed: number | null): FieldRow {
  return {
    name, half, seed, error: null, kTruth: NaN, kFitted: null, kRelError: null, kObjAbsErrorSum: 0, kObjects: 0, invisible: 0,
    targets: 0, buriedTargets: 0, airTargets: 0, clutterTargets: 0, areaM2: 0, buriedAreaM2: 0, surveyedAreaM2: 0,
    utilitySurveyedM: 0, utilityCoveredM: 0, utilities: 0, piecesSum: 0, piecesUtilities: 0, piecesMax: 0,
    compactFound: 0, compacts: 0, onLocus: 0, onLocusFlagged: 0, real: 0, realFlagged: 0,
    largestAreaM2: 0, largestDepthExtentM: 0, simulateS: 0, processS: 0, classes: {}, air: emptyAirMeasure(), airBefore: null, airSuppression: null,
  };
}

let built: string | undefined;
/**
 * The built CLI (apps/cli/dist/lamina.mjs), built on first use and rebuilt when its sources are newer
 * (apps/cli/build.mjs, as `pnpm lamina` does): a scene then runs as a user runs it, without the source
 * being transpiled in the main thread and each worker at every start (about 40 % of a small scene's time).
 */
export function builtCli(): string {
  if (built) return built;
  const r = spawnSync(process.execPath, [join(ROOT, 'apps/cli/build.mjs')], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`building the CLI failed: ${(r.stderr || r.stdout).trim()}`);
  return (built = join(ROOT, 'apps/cli/dist/lamina.mjs'));
}

/**
 * `lamina process <siteDir> --out <outDir> --threads <threads> [...extra]` with the built CLI, in a child
 * process that runs while this one goes on (`runScenes` runs scenes side by side).
 */
function processSite(siteDir: string, outDir: string, threads: number, extra: string[] = []): Promise<{ status: number | null; stdout: string; stderr: string }> {
  return new Promise((done, fail) => {
    const child = spawn(process.execPath, [builtCli(), 'process', siteDir, '--out', outDir, '--threads', String(threads), ...extra], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '', stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout = (stdout + d).slice(-1 << 20)));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr = (stderr + d).slice(-1 << 20)));
    child.on('error', fail);
    child.on('close', (status) => done({ status, stdout, stderr }));
  });
}

/**
 * `run` for each item, at most `jobs` at a time, the results in the items' order; `onDone` as each ends.
 * Scenes side by side fill the cores that one scene leaves idle in its serial stages (simulation,
 * scoring, the CLI's start, screening and export on its main thread); each scene's files and figures are
 * the same however many run at once (a scene's own thread count is not changed).
 */
export async function runScenes<T, R>(items: T[], jobs: number, run: (item: T) => Promise<R>, onDone: (r: R) => void = () => {}): Promise<R[]> {
  const out: R[] = new Array(items.length);
  let next = 0;
  const lane = async () => {
    while (next < items.length) {
      const i = next++;
      out[i] = await run(items[i]!);
      onDone(out[i]!);
    }
  };
  await Promise.all(Array.from({ length: Math.max(1, Math.min(jobs, items.length)) }, lane));
  return out;
}

/** Simulates `scenario` under `workDir`, processes it with the CLI and scores it. */
export async function runScene(scenario: Scenario, workDir: string, half: FieldRow['half'], seed: number | null, options: SceneRunOptions = {}): Promise<FieldRow> {
  const row = emptyRow(scenario.name, half, seed);
  const siteDir = join(workDir, `${scenario.name}-site`), outDir = join(workDir, `${scenario.name}-out`), keptDir = join(workDir, `${scenario.name}-out-keep-air`);
  mkdirSync(workDir, { recursive: true });
  try {
    let t = performance.now();
    if (options.siteCache) row.siteCached = await simulateCached(scenario, siteDir, options.siteCache);
    else await simulateSite(scenario, siteDir);
    if (options.unsurveyedShare && seed !== null) row.unsurveyed = leaveOutOfPlan(siteDir, seed, options.unsurveyedShare);
    row.simulateS = (performance.now() - t) / 1000;
    t = performance.now();
    const p = await processSite(siteDir, outDir, options.threads ?? 2, options.airBefore ? ['--remove-air-events'] : []);
    row.processS = (performance.now() - t) / 1000;
    if (p.status !== 0) throw new Error(`lamina process exited ${p.status}: ${(p.stderr || p.stdout).trim().split('\n').slice(-3).join(' | ')}`);
    Object.assign(row, scored(outDir, join(siteDir, 'truth.json')));
    if (options.airBefore) {
      const q = await processSite(siteDir, keptDir, options.threads ?? 2, ['--keep-air-events']);
      if (q.status !== 0) throw new Error(`lamina process --keep-air-events exited ${q.status}: ${(q.stderr || q.stdout).trim().split('\n').slice(-3).join(' | ')}`);
      const m = await airMeasures(keptDir, outDir, join(siteDir, 'truth.json'));
      row.air = m.after;
      row.airBefore = m.before;
      row.airSuppression = m.suppression;
      row.scoredBefore = scored(keptDir, join(siteDir, 'truth.json'));
    } else row.air = await airMeasure(outDir, join(siteDir, 'truth.json'));
    const dirs = options.directions ? lineDirections(siteDir) : [];
    if (dirs.length === 2) {
      row.byDirection = [];
      for (const d of dirs) {
        const oneSite = join(workDir, `${scenario.name}-site-${d.azimuthDeg}`), oneOut = join(workDir, `${scenario.name}-out-${d.azimuthDeg}`);
        oneDirectionSite(siteDir, d.entries, oneSite);
        const q = await processSite(oneSite, oneOut, options.threads ?? 2);
        if (q.status !== 0) throw new Error(`lamina process (${d.azimuthDeg} deg only) exited ${q.status}: ${(q.stderr || q.stdout).trim().split('\n').slice(-3).join(' | ')}`);
        row.byDirection.push({ azimuthDeg: d.azimuthDeg, lines: d.entries.length, scored: scored(oneOut, join(oneSite, 'truth.json')) });
        if (!options.keep) for (const f of [oneSite, oneOut]) rmSync(f, { recursive: true, force: true });
      }
    }
  } catch (e) {
    row.error = (e as Error).message;
  } finally {
    if (!options.keep) {
      rmSync(siteDir, { recursive: true, force: true });
      rmSync(outDir, { recursive: true, force: true });
      rmSync(keptDir, { recursive: true, force: true });
    }
  }
  return row;
}

/** The scoring's figures of one output folder (the counts behind the table's columns). */
export function scored(outDir: string, truthFile: string): Partial<FieldRow> {
  const { report, truth } = scoreFolder(outDir, truthFile);
  const pr = report.precision;
  const linAll = report.buried.filter((b) => b.lengthM > 0);
  const cmpAll = report.buried.filter((b) => b.lengthM === 0);
  const lin = linAll.filter((b) => b.recorded);
  const cmp = cmpAll.filter((b) => b.recorded);
  return {
    kTruth: pr.siteK.truth,
    kFitted: pr.siteK.fitted,
    kRelError: pr.siteK.relError,
    kObjAbsErrorSum: pr.siteK.atObjects.reduce((s, o) => s + Math.abs(o.relError), 0),
    kObjects: pr.siteK.atObjects.length,
    invisible: (truth.buried as { response?: { traces?: number } }[]).filter((b) => b.response?.traces === 0).length,
    targets: pr.targets,
    buriedTargets: pr.buriedTargets,
    airTargets: pr.airTargets,
    clutterTargets: pr.clutterTargets,
    areaM2: pr.areaM2,
    buriedAreaM2: pr.buriedAreaM2,
    surveyedAreaM2: pr.surveyedAreaM2 ?? 0,
    utilitySurveyedM: lin.reduce((s, b) => s + b.surveyedLengthM, 0),
    utilityCoveredM: lin.reduce((s, b) => s + b.recall * b.surveyedLengthM, 0),
    utilitySurveyedAllM: linAll.reduce((s, b) => s + b.surveyedLengthM, 0),
    utilityCoveredAllM: linAll.reduce((s, b) => s + b.recall * b.surveyedLengthM, 0),
    utilities: lin.length,
    piecesSum: pr.pieces.reduce((s, q) => s + q.pieces, 0),
    piecesUtilities: pr.pieces.filter((q) => q.pieces > 0).length,
    piecesMax: pr.piecesMax,
    compactFound: cmp.filter((b) => b.recall > 0).length,
    compacts: cmp.length,
    compactFoundAll: cmpAll.filter((b) => b.recall > 0).length,
    compactsAll: cmpAll.length,
    onLocus: pr.airFlags.onLocus,
    onLocusFlagged: pr.airFlags.onLocusFlagged,
    real: pr.airFlags.real,
    realFlagged: pr.airFlags.realFlagged,
    largestAreaM2: pr.largest?.areaM2 ?? 0,
    largestDepthExtentM: pr.largest?.depthExtentM ?? 0,
    classes: pr.classes,
  };
}

/** Pooled figures of a set of rows: sums of counts, areas and lengths; K error as mean and max of |error|. */
export interface Pooled {
  name: string;
  scenes: number;
  failed: number;
  kAbsErrorMean: number | null;
  kAbsErrorMax: number | null;
  /** Mean |interval K error| over the buried objects of layered truths. */
  kObjAbsErrorMean: number | null;
  invisible: number;
  targets: number;
  precisionByCount: number | null;
  precisionByArea: number | null;
  clutterPer100M2: number | null;
  airTargetShare: number | null;
  /** Over the recorded pipes/cables; `utilityRecallAll` over all (rows from before 2026-12-05: all). */
  utilityRecall: number | null;
  utilityRecallAll: number | null;
  piecesMean: number | null;
  piecesMax: number;
  compactRecall: number | null;
  compactRecallAll: number | null;
  airFlagRecall: number | null;
  realFlaggedShare: number | null;
  largestAreaM2: number;
  largestDepthExtentM: number;
  classes: FieldRow['classes'];
  /** New (issue 18): the air measure pooled (sums over the scenes' cells); `airBefore` over the scenes that have it. */
  air: AirMeasure;
  airBefore: AirMeasure | null;
  /** Issue 18's paired measure summed over the scenes that have it. */
  airSuppression: AirSuppression | null;
}

const ratio = (a: number, b: number): number | null => (b > 0 ? a / b : null);

export function pool(name: string, rows: FieldRow[]): Pooled {
  const ok = rows.filter((r) => !r.error);
  const sum = (k: keyof FieldRow) => ok.reduce((s, r) => s + (r[k] as number), 0);
  // a field that rows written before it existed lack: their `fallback` held the same figure then
  const sumOr = (k: keyof FieldRow, fallback: keyof FieldRow) => ok.reduce((s, r) => s + ((r[k] ?? r[fallback]) as number), 0);
  const kErr = ok.filter((r) => r.kRelError !== null).map((r) => Math.abs(r.kRelError!));
  return {
    name,
    scenes: rows.length,
    failed: rows.length - ok.length,
    kAbsErrorMean: kErr.length ? kErr.reduce((a, b) => a + b, 0) / kErr.length : null,
    kAbsErrorMax: kErr.length ? Math.max(...kErr) : null,
    kObjAbsErrorMean: ratio(sum('kObjAbsErrorSum'), sum('kObjects')),
    invisible: sum('invisible'),
    targets: sum('targets'),
    precisionByCount: ratio(sum('buriedTargets'), sum('targets')),
    precisionByArea: ratio(sum('buriedAreaM2'), sum('areaM2')),
    clutterPer100M2: ratio(100 * sum('clutterTargets'), sum('surveyedAreaM2')),
    airTargetShare: ratio(sum('airTargets'), sum('targets')),
    utilityRecall: ratio(sum('utilityCoveredM'), sum('utilitySurveyedM')),
    utilityRecallAll: ratio(sumOr('utilityCoveredAllM', 'utilityCoveredM'), sumOr('utilitySurveyedAllM', 'utilitySurveyedM')),
    piecesMean: ratio(sum('piecesSum'), sum('piecesUtilities')),
    piecesMax: Math.max(0, ...ok.map((r) => r.piecesMax)),
    compactRecall: ratio(sum('compactFound'), sum('compacts')),
    compactRecallAll: ratio(sumOr('compactFoundAll', 'compactFound'), sumOr('compactsAll', 'compacts')),
    airFlagRecall: ratio(sum('onLocusFlagged'), sum('onLocus')),
    realFlaggedShare: ratio(sum('realFlagged'), sum('real')),
    largestAreaM2: Math.max(0, ...ok.map((r) => r.largestAreaM2)),
    largestDepthExtentM: Math.max(0, ...ok.map((r) => r.largestDepthExtentM)),
    classes: sumClasses(ok),
    air: sumAir(ok.map((r) => r.air)),
    airBefore: ok.some((r) => r.airBefore) ? sumAir(ok.map((r) => r.airBefore).filter((a): a is AirMeasure => a !== null)) : null,
    airSuppression: ok.some((r) => r.airSuppression) ? sumSuppression(ok.map((r) => r.airSuppression).filter((a): a is AirSuppression => a !== null)) : null,
  };
}

function sumAir(ms: AirMeasure[]): AirMeasure {
  const o = emptyAirMeasure();
  for (const m of ms) {
    o.locusSum += m.locusSum;
    o.locusCells += m.locusCells;
    o.buriedSum += m.buriedSum;
    o.buriedCells += m.buriedCells;
    o.restSum += m.restSum;
    o.restCells += m.restCells;
  }
  return o;
}

function sumSuppression(ms: AirSuppression[]): AirSuppression {
  const o = emptyAirSuppression();
  for (const m of ms) for (const k of Object.keys(o) as (keyof AirSuppression)[]) o[k] += m[k];
  return o;
}

/** Issue 18's paired columns: energy above the background taken out on the counted locus and buried cells, dB (`-` without the before run). */
function suppressionCells(p: Pooled): [string, string] {
  const s = p.airSuppression;
  if (!s) return ['-', '-'];
  const db = (v: number | null) => (v === Infinity ? 'all' : fx(v));
  return [db(suppressionDb(s.locusBefore, s.locusAfter, s.locusCells)), db(suppressionDb(s.buriedBefore, s.buriedAfter, s.buriedCells))];
}

/** The air measure's columns: dB over the background on the loci and on buried objects, `before>after` when the before run exists. */
function airCells(p: Pooled): [string, string, string] {
  const db = (m: AirMeasure | null, k: 'locus' | 'buried' | 'excess') =>
    m ? fx(k === 'excess' ? excessDb(m) : measureDb(k === 'locus' ? m.locusSum : m.buriedSum, k === 'locus' ? m.locusCells : m.buriedCells)) : null;
  const cell = (k: 'locus' | 'buried' | 'excess') => (p.airBefore ? `${db(p.airBefore, k)}>${db(p.air, k)}` : (db(p.air, k) ?? '-'));
  return [cell('locus'), cell('excess'), cell('buried')];
}

function sumClasses(rows: FieldRow[]): FieldRow['classes'] {
  const out: FieldRow['classes'] = {};
  for (const r of rows)
    for (const [c, v] of Object.entries(r.classes)) {
      const o = (out[c] ??= { buried: 0, air: 0, ambiguous: 0, unmatched: 0 });
      o.buried += v.buried;
      o.air += v.air;
      o.ambiguous += v.ambiguous;
      o.unmatched += v.unmatched;
    }
  return out;
}

/** The class table of a pooled row: one line per class that has anomalies. */
export function classLines(p: Pooled): string[] {
  return Object.entries(p.classes)
    .filter(([, v]) => v.buried + v.air + v.ambiguous + v.unmatched > 0)
    .map(([c, v]) => `  ${c.padEnd(13)} buried ${String(v.buried).padStart(5)}  air ${String(v.air).padStart(5)}  ambiguous ${String(v.ambiguous).padStart(4)}  unmatched ${String(v.unmatched).padStart(5)}`);
}

/** A row as a pooled row of one scene (same columns in the table). */
export function single(r: FieldRow): Pooled & { kTruth: number; kFitted: number | null; kRelError: number | null } {
  return { ...pool(r.name, [r]), kTruth: r.kTruth, kFitted: r.kFitted, kRelError: r.kRelError };
}

const pct = (v: number | null) => (v === null ? '-' : `${(100 * v).toFixed(1)}`);
const fx = (v: number | null, d = 1) => (v === null || !Number.isFinite(v) ? '-' : v.toFixed(d));

export const TABLE_HEADER = [
  'scene', 'K true', 'K fit', 'K err%', 'Kobj|err|%', 'invis', 'tgts', 'prec#%', 'precA%', 'clut/100m2', 'air%', 'util%', 'utilAll%', 'pcs', 'pcsMax', 'cmp%', 'cmpAll%', 'airflag%', 'realflag%', 'largest m2', 'largest dz', 'locus dB', 'locus+ dB', 'buried dB', 'locus cut dB', 'buried cut dB', 'sim s', 'proc s',
];

/** One table line: a scene (with its K and times) or a pooled row (K as mean |error|). */
export function tableLine(p: Pooled, scene?: FieldRow): string[] {
  if (scene?.error) return [scene.name, fx(scene.kTruth), '-', '-', `FAILED: ${scene.error.slice(0, 120)}`];
  return [
    p.name,
    scene ? fx(scene.kTruth, 2) : '',
    scene ? fx(scene.kFitted, 2) : '',
    scene ? (scene.kRelError === null ? '-' : (100 * scene.kRelError).toFixed(1)) : `|${pct(p.kAbsErrorMean)}|`,
    pct(p.kObjAbsErrorMean),
    String(p.invisible),
    String(p.targets),
    pct(p.precisionByCount),
    pct(p.precisionByArea),
    fx(p.clutterPer100M2, 2),
    pct(p.airTargetShare),
    pct(p.utilityRecall),
    pct(p.utilityRecallAll),
    fx(p.piecesMean),
    String(p.piecesMax),
    pct(p.compactRecall),
    pct(p.compactRecallAll),
    pct(p.airFlagRecall),
    pct(p.realFlaggedShare),
    fx(p.largestAreaM2),
    fx(p.largestDepthExtentM, 2),
    ...airCells(p),
    ...suppressionCells(p),
    scene ? fx(scene.simulateS) : '',
    scene ? fx(scene.processS) : '',
  ];
}

export function formatTable(lines: string[][]): string {
  const w = TABLE_HEADER.map((_, i) => Math.max(...[TABLE_HEADER, ...lines].map((l) => (l[i] ?? '').length)));
  return [TABLE_HEADER, ...lines].map((l) => (l.length < TABLE_HEADER.length ? l.join('  ') : l.map((c, i) => (i === 0 ? c.padEnd(w[i]!) : c.padStart(w[i]!))).join('  '))).join('\n');
}

/** Parses `1-24`, `2,4,6` or `1-5,9`. */
export function parseSeeds(spec: string): number[] {
  const out: number[] = [];
  for (const part of spec.split(',').map((s) => s.trim()).filter(Boolean)) {
    const m = /^(\d+)(?:-(\d+)(?:\/(\d+))?)?$/.exec(part);
    if (!m) throw new Error(`LAMINA_BENCH_FIELD_SEEDS: expected seeds like 1-24, 1-47/2 (every second) or 2,4,6, found "${part}"`);
    const a = Number(m[1]), b = m[2] === undefined ? a : Number(m[2]), step = Math.max(1, Number(m[3] ?? 1));
    for (let s = a; s <= b; s += step) out.push(s);
  }
  return out;
}


