// The costly parts of a line's work in `lamina process` (Stolt migration of pass 2, hyperbola detection of
// pass 1, and the whole of pass 1: its processing steps and detection from the line as read) of this source
// and of another checkout, alternated round by round in one process on
// lines of the process bench's site (run `pnpm bench process` once to make it). On a machine shared with
// other work both see the same load, so the median of the per-round ratios compares two versions where the
// times of separate runs do not. CPU time of this process per line; the first round is a warm-up. Checks
// that both give the same bytes (migrated data, detected fits). Asserts nothing. A part that allocates
// much (pass1: a line-sized array per step) is compared unfairly in one process: the side that runs second
// pays for collecting the first side's garbage, so a change that allocates less shows much less than it
// saves; compare such changes in separate processes, alternated, as the pipeline's workers run them.
// Usage: LAMINA_BENCH_OTHER_SRC=<a checkout with the workspace installed, e.g. a git worktree of main
// after pnpm install --offline> tsx bench/line-ab.ts [rounds=12] [parts=migration,hyperbolas,pass1]
import { createHash } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import type { RadarLine } from '../packages/radar-data/src/index';
import { loadSite, readLine } from '../packages/site/src/index';
import * as processing from '../packages/processing/src/index';
import * as velocity from '../packages/velocity/src/index';

const other = process.env.LAMINA_BENCH_OTHER_SRC;
if (!other) throw new Error('set LAMINA_BENCH_OTHER_SRC to the folder of the other checkout');
const rounds = Math.max(2, Number(process.argv[2] ?? 12));
const chosen = (process.argv[3] ?? 'migration,hyperbolas,pass1').split(',');
type Processing = typeof processing;
type Velocity = typeof velocity;
const otherProcessing = (await import(pathToFileURL(join(other, 'packages/processing/src/index.ts')).href)) as Processing;
const otherVelocity = (await import(pathToFileURL(join(other, 'packages/velocity/src/index.ts')).href)) as Velocity;

const site = await loadSite(join(tmpdir(), 'lamina-bench-process/site'));
const recipe = processing.defaultRecipe(site.antenna.frequencyMHz);
const mig = recipe.steps.find((s) => s.step === 'migration') as { apertureM: number; maxAngleDeg: number; halfDerivative: boolean };
const ctx = { frequencyMHz: site.antenna.frequencyMHz, separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit };
const raw: RadarLine[] = [];
for (let i = 0; i < 6; i++) raw.push(await readLine(site, site.lines[(i * 5) % site.lines.length]!));
const lines = raw.map((line) => processing.runRecipe(line, velocity.recipeForVelocity(recipe), ctx).line);

const cpuMs = () => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};
const parts = {
  migration: (p: Processing, line: RadarLine) =>
    p.migrate(line, { velocityMPerNs: 0.1064, method: 'auto', separationM: ctx.separationM, metresPerUnit: ctx.metresPerUnit, apertureM: mig.apertureM, maxAngleDeg: mig.maxAngleDeg, halfDerivative: mig.halfDerivative }).data,
  hyperbolas: (v: Velocity, line: RadarLine) => JSON.stringify(v.detectHyperbolas(line, { separationM: ctx.separationM, metresPerUnit: ctx.metresPerUnit, frequencyMHz: ctx.frequencyMHz })),
  // pass 1 of the pipeline (line-task.ts) without its file I/O: the recipe without migration, then `lineHyperbolas`
  pass1: (p: Processing, v: Velocity, line: RadarLine) => {
    const done = p.runRecipe(line, v.recipeForVelocity(recipe), ctx).line;
    return [new Uint8Array(done.data.buffer, done.data.byteOffset, done.data.byteLength), JSON.stringify(v.lineHyperbolas(done, { separationM: ctx.separationM, metresPerUnit: ctx.metresPerUnit, frequencyMHz: ctx.frequencyMHz }))];
  },
};
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[xs.length >> 1]!;

for (const [name, run, input] of [
  ['migration', (which: 'this' | 'other', line: RadarLine) => [parts.migration(which === 'this' ? processing : otherProcessing, line)], lines],
  ['hyperbolas', (which: 'this' | 'other', line: RadarLine) => [parts.hyperbolas(which === 'this' ? velocity : otherVelocity, line)], lines],
  ['pass1', (which: 'this' | 'other', line: RadarLine) => (which === 'this' ? parts.pass1(processing, velocity, line) : parts.pass1(otherProcessing, otherVelocity, line)), raw],
] as const) {
  if (!chosen.includes(name)) continue;
  const times = { this: [] as number[], other: [] as number[] };
  const digest = { this: createHash('sha1'), other: createHash('sha1') };
  for (let r = 0; r < rounds; r++) {
    for (const which of ['other', 'this'] as const) {
      const t0 = cpuMs();
      for (const line of input) {
        const out = run(which, line);
        if (r === 0) for (const o of out) digest[which].update(o);
      }
      if (r > 0) times[which].push((cpuMs() - t0) / input.length);
    }
  }
  const ratios = times.this.map((t, k) => t / times.other[k]!);
  const same = digest.this.digest('hex') === digest.other.digest('hex');
  console.log(`${name}: this ${median(times.this).toFixed(1)} ms/line, other ${median(times.other).toFixed(1)} ms/line (medians of ${rounds - 1} rounds); this / other, median of the rounds ${median(ratios).toFixed(3)}; ${same ? 'same bytes' : 'OUTPUTS DIFFER'}`);
}
