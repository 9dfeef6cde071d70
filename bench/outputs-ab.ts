// Do two builds give the same result files? For work that should change speed only: `lamina process` of
// this checkout's build and of another build (LAMINA_BENCH_OTHER_CLI, e.g. a copy of main's
// apps/cli/dist/lamina.mjs made before the change) on the sample sites, a few random scenes of the field
// bench's generator and the process bench's site, then every result file compared byte for byte
// (targets files without their export time stamps; run.json and report.html carry times and are left out).
// Prints each difference and a count; exits 1 when any file differs. Sites are simulated once into
// <tmp>/lamina-bench-outputs-ab (again when the simulator's sources change). Asserts nothing else.
// Usage: LAMINA_BENCH_OTHER_CLI=<lamina.mjs> tsx bench/outputs-ab.ts
//   LAMINA_BENCH_AB_SEEDS=1,3,5,7,9,11   random scenes (field bench seeds; default these six)
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { randomScenario } from '../packages/simulate/src/index';
import { parseSeeds } from './field-lib';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..');
const other = process.env.LAMINA_BENCH_OTHER_CLI;
if (!other || !existsSync(other)) throw new Error('set LAMINA_BENCH_OTHER_CLI to the other build\'s lamina.mjs');
const seeds = parseSeeds(process.env.LAMINA_BENCH_AB_SEEDS ?? '1,3,5,7,9,11');
const work = join(tmpdir(), 'lamina-bench-outputs-ab');
const cli = join(root, 'apps/cli/dist/lamina.mjs');

/** The files of an output folder that hold results (everything but run.json's times and the report). */
const RESULT_FILES = [
  'velocity.json', 'anomalies.geojson', 'interfaces.geojson', 'forecast.geojson', 'targets.geojson', 'targets.csv', 'targets.dxf',
  'review.json', 'slices.json', 'slices.tif', 'lines.geojson', 'plan.geojson', 'radargrams/index.json',
];

function run(args: string[], what: string): void {
  const r = spawnSync(process.execPath, args, { cwd: root, encoding: 'utf8', maxBuffer: 1 << 28, env: { ...process.env, LAMINA_PROGRESS: '0' } });
  if (r.status !== 0) throw new Error(`${what} failed (status ${r.status}): ${r.stderr}`);
}

run([join(root, 'apps/cli/build.mjs')], 'building the CLI');
const builtAt = JSON.parse(readFileSync(join(root, 'apps/cli/dist/build.json'), 'utf8')).startedAt as number;

// the sites: sample sites and random scenes (simulated when missing or older than the build), the process bench's site
mkdirSync(work, { recursive: true });
const sites: { name: string; dir: string }[] = [];
const simulated = (name: string, scenarioFile: string) => {
  const dir = join(work, name);
  if (!existsSync(join(dir, 'truth.json')) || statSync(join(dir, 'truth.json')).mtimeMs < builtAt) {
    rmSync(dir, { recursive: true, force: true });
    run([cli, 'simulate', scenarioFile, '--out', dir], `simulating ${name}`);
  }
  sites.push({ name, dir });
};
for (const s of readdirSync(join(root, 'sample-sites'))) {
  const f = join(root, 'sample-sites', s, 'scenario.json');
  if (existsSync(f)) simulated(s, f);
}
for (const seed of seeds) {
  const f = join(work, `random-${seed}.scenario.json`);
  writeFileSync(f, JSON.stringify(randomScenario(seed), null, 1) + '\n');
  simulated(`random-${seed}`, f);
}
simulated('process-bench', join(here, 'process-site.json'));

// the export's time stamp: `exportDate` of the GeoJSON / CSV, "exported <ISO time>" in the DXF's header comment
const withoutDates = (b: Buffer, file: string) =>
  file.startsWith('targets.') ? Buffer.from(b.toString('utf8').replace(/"exportDate": *"[^"]*"/g, '').replace(/exported \d{4}-\d\d-\d\dT[\d:.]+Z/g, '')) : b;
let differ = 0;
for (const { name, dir } of sites) {
  const outs = [cli, other].map((build, k) => {
    const out = join(work, `${name}-out-${k ? 'other' : 'this'}`);
    rmSync(out, { recursive: true, force: true });
    run([build, 'process', dir, '--out', out], `${k ? 'the other' : 'this'} build on ${name}`);
    return out;
  });
  const diffs = RESULT_FILES.filter((f) => {
    const [a, b] = outs.map((o) => join(o, f));
    if (!existsSync(a!) || !existsSync(b!)) return existsSync(a!) !== existsSync(b!);
    return !withoutDates(readFileSync(a!), f).equals(withoutDates(readFileSync(b!), f));
  });
  differ += diffs.length;
  console.log(`${name}: ${diffs.length ? `DIFFERENT ${diffs.join(', ')}` : 'same result files'}`);
}
console.log(differ ? `${differ} result file(s) differ` : `same result files on all ${sites.length} sites`);
process.exitCode = differ ? 1 : 0;
