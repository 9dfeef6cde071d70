// Field benchmark: random scenes of @lamina/simulate's randomScenario, each simulated, processed by
// `lamina process` and scored by @lamina/scoring (the frozen definitions in packages/scoring/README.md).
// Seeds split in two halves: TUNE (odd seeds) and HELD-OUT (even seeds); the held-out half is for
// reporting only. Pooled rows sum counts, areas and lengths. The sample sites' rows are printed too.
// Usage: pnpm bench field
//   LAMINA_BENCH_FIELD_SEEDS=1-24      seeds (ranges, ranges with a step and comma lists; default 1-24; tune
//                                      on 1-47/2, the odd seeds, DEVELOPERS.md)
//   LAMINA_BENCH_FIELD_SAMPLES=0       leave out the sample sites (default: yard, carpark-ft, warehouse)
//   LAMINA_BENCH_FIELD_KEEP=1          keep the site and output folders (printed at the end)
//   LAMINA_BENCH_FIELD_THREADS=2       worker threads of lamina process
//   LAMINA_BENCH_FIELD_JOBS=2          scenes run side by side (default 2; the figures are the same for any
//                                      number, the per-scene seconds are not comparable across numbers)
//   LAMINA_BENCH_FIELD_AIR_BEFORE=1    also process every scene with --keep-air-events: the air measure
//                                      before the airEvents step and the pooled rows without it (twice the
//                                      time; default: after only)
//   LAMINA_BENCH_FIELD_DIRECTIONS=1    also process each two-direction scene one direction at a time and
//                                      print those rows beside the scene's (issue 12 item 3: together never
//                                      worse than either direction alone; three runs of those scenes)
//   LAMINA_BENCH_FIELD_UNSURVEYED=0.3  leave this share of each random scene's plan features out of its
//                                      plan.geojson (objects nobody surveyed; still scored; default 0)
//   LAMINA_BENCH_FIELD_SITE_CACHE=<dir>  keep the simulated sites in <dir> and reuse them on later runs
//                                      (keyed by scenario and simulator sources, bench/site-cache.ts;
//                                      2-20 MB a scene: clear the folder when done)
//   LAMINA_BENCH_FIELD_NOISE_SEED=1    simulate every scene with this `noiseSeed` (@lamina/simulate: the same
//                                      site surveyed again, only the receiver noise drawn anew). Two runs
//                                      with different noise seeds show how far the pooled figures move on
//                                      noise alone: a change of the code that moves them less is no result
// Writes bench/out/field.json (git-ignored): every row and the pooled rows, with the code's commit.
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseScenario, randomScenario } from '../packages/simulate/src/index';
import { intervalLine, poolIntervals } from './field-intervals';
import { beforeRow, classLines, directionRows, formatTable, parseSeeds, pool, runScene, runScenes, single, tableLine, type FieldRow } from './field-lib';

const here = dirname(fileURLToPath(import.meta.url));
const root = resolve(here, '..');
const seeds = parseSeeds(process.env.LAMINA_BENCH_FIELD_SEEDS ?? '1-24');
const samples = process.env.LAMINA_BENCH_FIELD_SAMPLES === '0' ? [] : ['yard', 'carpark-ft', 'warehouse'];
const keep = process.env.LAMINA_BENCH_FIELD_KEEP === '1';
const threads = Number(process.env.LAMINA_BENCH_FIELD_THREADS ?? 2);
const jobs = Number(process.env.LAMINA_BENCH_FIELD_JOBS ?? 2);
if (!(Number.isInteger(jobs) && jobs >= 1)) throw new Error(`LAMINA_BENCH_FIELD_JOBS: expected an integer >= 1, found "${process.env.LAMINA_BENCH_FIELD_JOBS}"`);
const airBefore = process.env.LAMINA_BENCH_FIELD_AIR_BEFORE === '1';
const unsurveyedShare = Number(process.env.LAMINA_BENCH_FIELD_UNSURVEYED ?? 0);
const directions = process.env.LAMINA_BENCH_FIELD_DIRECTIONS === '1';
const noiseSeed = process.env.LAMINA_BENCH_FIELD_NOISE_SEED === undefined ? undefined : Number(process.env.LAMINA_BENCH_FIELD_NOISE_SEED);
if (noiseSeed !== undefined && !(Number.isInteger(noiseSeed) && noiseSeed >= 0)) throw new Error(`LAMINA_BENCH_FIELD_NOISE_SEED: expected an integer >= 0, found "${process.env.LAMINA_BENCH_FIELD_NOISE_SEED}"`);
const withNoise = <T extends { noiseSeed?: number }>(s: T): T => (noiseSeed === undefined ? s : { ...s, noiseSeed });
const work = mkdtempSync(join(tmpdir(), 'lamina-bench-field-'));
const siteCache = process.env.LAMINA_BENCH_FIELD_SITE_CACHE ? resolve(process.env.LAMINA_BENCH_FIELD_SITE_CACHE) : undefined;

const commit = (() => {
  try {
    return execFileSync('git', ['-C', root, 'rev-parse', 'HEAD'], { encoding: 'utf8' }).trim() + (execFileSync('git', ['-C', root, 'status', '--porcelain'], { encoding: 'utf8' }).trim() ? ' (uncommitted changes)' : '');
  } catch {
    return 'unknown';
  }
})();
console.log(`field: ${seeds.length} random scenes (seeds ${process.env.LAMINA_BENCH_FIELD_SEEDS ?? '1-24'}) + ${samples.length} sample sites${noiseSeed === undefined ? '' : `, noise seed ${noiseSeed}`}; ${jobs} at a time, ${availableParallelism()} cores, load ${loadavg()[0]!.toFixed(2)}; code ${commit}`);

const t0 = performance.now();
const rows: FieldRow[] = await runScenes(
  [...seeds.map((seed) => ({ seed, name: null as string | null })), ...samples.map((name) => ({ seed: null as number | null, name }))],
  jobs,
  ({ seed, name }) => {
    if (seed !== null) return runScene(withNoise(randomScenario(seed)), work, seed % 2 === 1 ? 'tune' : 'held-out', seed, { threads, keep, airBefore, unsurveyedShare, directions, ...(siteCache ? { siteCache } : {}) });
    const file = join(root, 'sample-sites', name!, 'scenario.json');
    return runScene(withNoise(parseScenario(JSON.parse(readFileSync(file, 'utf8')), file)), work, 'sample', null, { threads, keep, airBefore, ...(siteCache ? { siteCache } : {}) });
  },
  (row) => {
    const found = row.half === 'sample' ? `${row.targets} targets` : `${row.targets} targets, ${row.buriedTargets} on buried objects`;
    console.log(`  ${row.name}: ${row.error ? `FAILED ${row.error}` : found} (${row.simulateS.toFixed(1)}${row.siteCached ? ' cached' : ''} + ${row.processS.toFixed(1)} s)${row.unsurveyed?.length ? `; left out of the plan: ${row.unsurveyed.join(', ')}` : ''}`);
  },
);

const tune = pool('TUNE (odd seeds)', rows.filter((r) => r.half === 'tune'));
const held = pool('HELD-OUT (even seeds)', rows.filter((r) => r.half === 'held-out'));
// with LAMINA_BENCH_FIELD_AIR_BEFORE=1: the same scenes processed with --keep-air-events, pooled alike
const kept = (half: FieldRow['half']) => rows.filter((r) => r.half === half).map(beforeRow).filter((r): r is FieldRow => r !== null);
const before = airBefore
  ? [tableLine(pool('TUNE --keep-air-events', kept('tune'))), tableLine(pool('HELD-OUT --keep-air-events', kept('held-out')))]
  : [];
const table = [
  ...rows.filter((r) => r.half !== 'sample').map((r) => tableLine(single(r), r)),
  [],
  tableLine(tune),
  tableLine(held),
  ...before,
  [],
  ...rows.filter((r) => r.half === 'sample').map((r) => tableLine(single(r), r)),
];
console.log('\n' + formatTable(table));
// how far the pooled figures move with the choice of scenes alone (bench/field-intervals.ts)
const tuneIntervals = poolIntervals(rows.filter((r) => r.half === 'tune'));
const heldIntervals = poolIntervals(rows.filter((r) => r.half === 'held-out'));
console.log(`\n90 % intervals over scenes (bootstrap: 2000 populations of as many scenes drawn with replacement; a gap
narrower than these is not yet a result; compare two runs on the same scenes with bench/field-compare.ts):
${intervalLine('TUNE', tuneIntervals)}
${intervalLine('HELD-OUT', heldIntervals)}`);
// two-direction scenes, both directions together and each alone (LAMINA_BENCH_FIELD_DIRECTIONS=1)
const crossed = rows.filter((r) => r.byDirection?.length);
if (crossed.length > 0) {
  const byHalf = (half: FieldRow['half'], name: string) => {
    const both = crossed.filter((r) => r.half === half);
    if (both.length === 0) return [];
    const alone = (k: number) => both.map((r) => directionRows(r)[k]!).filter(Boolean);
    return [tableLine(pool(`${name}: both directions`, both)), tableLine(pool(`${name}: first direction only`, alone(0))), tableLine(pool(`${name}: second direction only`, alone(1)))];
  };
  console.log('\ntwo-direction surveys, together and one direction at a time:\n' + formatTable([
    ...crossed.flatMap((r) => [tableLine(single(r), r), ...directionRows(r).map((d) => tableLine(single(d), d))]),
    [],
    ...byHalf('tune', 'TUNE'),
    ...byHalf('held-out', 'HELD-OUT'),
    ...byHalf('sample', 'samples'),
  ]));
}
console.log(`
Columns (packages/scoring/README.md, "Frozen definitions"): K err% = fitted site K / truth top-layer K - 1
(pooled: mean |error|); Kobj|err|% = mean |interval K error| at the buried objects' depths (layered truths
only); invis = buried objects the raw data shows on no trace (left out of util% and cmp%); prec#% /
precA% = targets covering a buried object by count / by plan area; clut/100m2 = targets matching neither
a buried object nor an air-wave locus per 100 m2 surveyed; air% = air-wave targets; util% = utility
recall over the surveyed length of the recorded utilities (pooled by length; utilAll% over all of them,
the figure before 2026-12-05); pcs = pieces per utility found (mean; pcsMax the most); cmp% = recorded
compact objects found (cmpAll% all of them); airflag% = anomalies on an air-wave
locus that are flagged; realflag% = real anomalies (on a buried object, on no locus) wrongly flagged;
largest = the largest target's plan area and depth extent. Pooled rows sum counts, areas and lengths.
New (issue 18, bench/air-measure.ts, not a scoring definition): locus dB / buried dB = mean slice value on
the air-wave loci (away from buried objects) / on buried objects, over the slice's median, in dB; locus+ dB =
the locus figure's excess over the mean of the other cells (what air waves add), in dB;
"before>after" with LAMINA_BENCH_FIELD_AIR_BEFORE=1 (before = lamina process --keep-air-events).
Issue 18's acceptance measure (with LAMINA_BENCH_FIELD_AIR_BEFORE=1, bench/air-measure.ts airMeasures):
locus cut dB / buried cut dB = the energy above the slice's background mean on the locus / buried-object
cells that stood out before the step (brighter than 99 % of the slice's background cells), summed before
over after, in dB ("all" when nothing is left; 0 dB for a step that changes nothing).
Wall time ${((performance.now() - t0) / 1000).toFixed(0)} s.`);
for (const p of [tune, held]) console.log(`\nanomaly class (properties.class; none = absent) vs truth match, ${p.name}:\n${classLines(p).join('\n')}`);

const outDir = join(here, 'out');
mkdirSync(outDir, { recursive: true });
writeFileSync(join(outDir, 'field.json'), JSON.stringify({ createdAt: new Date().toISOString(), commit, seeds, rows, pooled: { tune, heldOut: held, tuneIntervals, heldOutIntervals: heldIntervals, ...(airBefore ? { tuneKept: pool('TUNE --keep-air-events', kept('tune')), heldOutKept: pool('HELD-OUT --keep-air-events', kept('held-out')) } : {}) } }, null, 1) + '\n');
console.log(`wrote ${join(outDir, 'field.json')}`);
if (keep) console.log(`kept the site and output folders in ${work}`);
else rmSync(work, { recursive: true, force: true });
