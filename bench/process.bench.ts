// The whole `lamina process`, started as a user starts it (the built CLI in a child process, default
// threads), side by side with a numpy/scipy script of its slicing part (bench/process_ref.py, Debian's
// /usr/bin/python3: read the SEG-Y, time-zero, dewow, band-pass, gain, background removal, envelope, the
// same depth slices, k-nearest IDW with cKDTree, 2 processes) on the same simulated site
// (bench/process-site.json: 31 lines x 481 traces x 640 samples), alternately, after one warm-up run of
// each. Prints every run, the median ratio and the stage table (`--timings`) of the median lamina run.
// Asserts nothing. Usage: pnpm bench process   (LAMINA_BENCH_RUNS=3)
// LAMINA_BENCH_OTHER_CLI=<another build's lamina.mjs> (e.g. a copy of main's apps/cli/dist) also runs that
// build in each pair, right after this one, and prints the median of the per-pair time ratios: on a machine
// shared with other work, the figure that compares two versions.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { formatTimings, type ProcessTimings } from '../packages/pipeline/src/timings';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..');
const RUNS = Math.max(1, Number(process.env.LAMINA_BENCH_RUNS ?? 3));
const scenario = join(here, 'process-site.json');
const work = join(tmpdir(), 'lamina-bench-process');
const siteDir = join(work, 'site');
const cli = join(root, 'apps/cli/dist/lamina.mjs');

function run(cmd: string, args: string[], what: string): { seconds: number; stdout: string } {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(cmd, args, { cwd: root, encoding: 'utf8', maxBuffer: 1 << 28, env: { ...process.env, LAMINA_PROGRESS: '0' } });
  const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`${what} failed (status ${r.status}): ${r.stderr}`);
  return { seconds, stdout: r.stdout };
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
};

// the build, rebuilt when stale (as `pnpm lamina` does)
run(process.execPath, [join(root, 'apps/cli/build.mjs')], 'building the CLI');
const builtAt = JSON.parse(readFileSync(join(root, 'apps/cli/dist/build.json'), 'utf8')).startedAt as number;

// the site, simulated again when the scenario or any source (the simulator's included) is newer
const truth = join(siteDir, 'truth.json');
if (!existsSync(truth) || statSync(truth).mtimeMs < Math.max(statSync(scenario).mtimeMs, builtAt)) {
  rmSync(siteDir, { recursive: true, force: true });
  mkdirSync(work, { recursive: true });
  run(process.execPath, [cli, 'simulate', scenario, '--out', siteDir], 'simulating the bench site');
}

const other = process.env.LAMINA_BENCH_OTHER_CLI;
const lamina = (out: string, build = cli) => {
  rmSync(out, { recursive: true, force: true });
  const r = run(process.execPath, [build, 'process', siteDir, '--out', out, '--json'], 'lamina process');
  return { seconds: r.seconds, summary: JSON.parse(r.stdout) as { lines: number; traces: number; slices: number; timings: ProcessTimings } };
};

// warm-up (page cache), and the parameters the reference needs: the same recipe without migration,
// the fitted velocity model, the slice windows, the grid and the gridding options of this run
const warm = lamina(join(work, 'out-warm'));
const outWarm = join(work, 'out-warm');
const readJson = (f: string) => JSON.parse(readFileSync(f, 'utf8'));
const runJson = readJson(join(outWarm, 'run.json'));
const slicesJson = readJson(join(outWarm, 'slices.json'));
const velocityJson = readJson(join(outWarm, 'velocity.json'));
const siteJson = readJson(join(siteDir, 'site.json'));
type Step = { step: string };
const meta = {
  siteDir,
  lines: (siteJson.lines as object[]).map((l, i) => ({ ...l, dtNs: runJson.lines[i].dtNs })),
  frequencyMHz: siteJson.antenna.frequencyMHz,
  separationM: siteJson.antenna.separationM,
  recipe: { steps: [...(runJson.recipe.steps as Step[]).filter((s) => s.step !== 'migration'), { step: 'envelope' }] },
  model: velocityJson.model,
  windows: (slicesJson.slices as { topM: number; bottomM: number }[]).map((s) => [s.topM, s.bottomM]),
  grid: { originX: slicesJson.originX, originY: slicesJson.originY, cellSize: slicesJson.cellSize, width: slicesJson.width, height: slicesJson.height },
  idw: slicesJson.gridding,
  out: join(work, 'ref-slices.f32'),
};
const metaFile = join(work, 'meta.json');
writeFileSync(metaFile, JSON.stringify(meta));
const reference = () => {
  const r = run('/usr/bin/python3', [join(here, 'process_ref.py'), metaFile], 'process_ref.py');
  return { seconds: r.seconds, parts: JSON.parse(r.stdout.trim().split('\n').pop()!) as { lines: number; gridding: number; write: number; slices: number; cells: number } };
};
const refWarm = reference();
if (refWarm.parts.slices !== meta.windows.length || refWarm.parts.cells !== meta.grid.width * meta.grid.height) {
  throw new Error(`the reference made ${refWarm.parts.slices} slices of ${refWarm.parts.cells} cells, expected ${meta.windows.length} of ${meta.grid.width * meta.grid.height}`);
}

console.log(`site: ${warm.summary.lines} lines, ${warm.summary.traces} traces x ${runJson.lines[0].samples} samples, ${warm.summary.slices} slices on ${meta.grid.width} x ${meta.grid.height} cells`);
const ours: { seconds: number; timings: ProcessTimings }[] = [];
const refs: number[] = [];
const others: { seconds: number; timings: ProcessTimings }[] = [];
if (other) lamina(join(work, 'out-other'), other);
for (let k = 0; k < RUNS; k++) {
  const a = lamina(join(work, 'out'));
  ours.push({ seconds: a.seconds, timings: a.summary.timings });
  const b = reference();
  refs.push(b.seconds);
  const c = other ? lamina(join(work, 'out-other'), other) : undefined;
  if (c) others.push({ seconds: c.seconds, timings: c.summary.timings });
  const vs = c ? `; other build ${c.seconds.toFixed(2)} s, this / other ${(a.seconds / c.seconds).toFixed(2)}` : '';
  console.log(`run ${k + 1}: lamina process ${a.seconds.toFixed(2)} s, reference ${b.seconds.toFixed(2)} s (lines ${b.parts.lines.toFixed(2)}, gridding ${b.parts.gridding.toFixed(2)}), ratio ${(a.seconds / b.seconds).toFixed(2)}${vs}`);
}
const mOurs = median(ours.map((o) => o.seconds));
const mRef = median(refs);
// each pair ran back to back, so its ratio sees one load of the (shared) machine: their median is the figure
const paired = median(ours.map((o, k) => o.seconds / refs[k]!));
console.log(`median: lamina process ${mOurs.toFixed(2)} s, reference ${mRef.toFixed(2)} s (ratio of medians ${(mOurs / mRef).toFixed(2)}); median ratio of the pairs ${paired.toFixed(2)}; ${(warm.summary.traces / mOurs).toFixed(0)} traces/s whole process`);
const mid = [...ours].sort((a, b) => a.seconds - b.seconds)[ours.length >> 1]!;
console.log(`\nstages of the median lamina run (${mid.seconds.toFixed(2)} s from the shell; the process's own timers):`);
console.log(formatTimings(mid.timings));
if (others.length > 0) {
  const pairedOther = median(ours.map((o, k) => o.seconds / others[k]!.seconds));
  const midOther = [...others].sort((a, b) => a.seconds - b.seconds)[others.length >> 1]!;
  console.log(`\nother build (${other}): median ${median(others.map((o) => o.seconds)).toFixed(2)} s, ratio to the reference ${median(others.map((o, k) => o.seconds / refs[k]!)).toFixed(2)}; this / other, median of the pairs ${pairedOther.toFixed(2)}`);
  console.log(`stages of the other build's median run (${midOther.seconds.toFixed(2)} s):`);
  console.log(formatTimings(midOther.timings));
}
