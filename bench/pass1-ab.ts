// Pass 1 of `lamina process` (the recipe without migration, then `lineHyperbolas`) on every line of the
// process bench's site (run `pnpm bench process` once to make it), this source against another checkout,
// each version alone in a process of its own, the two alternated round by round: as the pipeline's workers
// run one version, so each pays for collecting its own garbage only (in one process, as bench/line-ab.ts
// runs them, the side that runs second pays for the first side's). CPU time per line after a warm-up over
// six lines; the median of the per-round ratios. Checks that both give the same fits. Asserts nothing.
// Usage: LAMINA_BENCH_OTHER_SRC=<a checkout with the workspace installed> tsx bench/pass1-ab.ts [rounds=6]
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type * as Processing from '../packages/processing/src/index';
import type { RadarLine } from '../packages/radar-data/src/index';
import type * as Velocity from '../packages/velocity/src/index';

const one = process.env.LAMINA_PASS1_ROOT;
if (one) {
  // child: one version's pass 1
  const P = (await import(pathToFileURL(join(one, 'packages/processing/src/index.ts')).href)) as typeof Processing;
  const V = (await import(pathToFileURL(join(one, 'packages/velocity/src/index.ts')).href)) as typeof Velocity;
  const { loadSite, readLine } = await import('../packages/site/src/index');
  const site = await loadSite(join(tmpdir(), 'lamina-bench-process/site'));
  const recipe = V.recipeForVelocity(P.defaultRecipe(site.antenna.frequencyMHz));
  const ctx = { frequencyMHz: site.antenna.frequencyMHz, separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit };
  const raw: RadarLine[] = [];
  for (const l of site.lines) raw.push(await readLine(site, l));
  const run = (line: RadarLine) => JSON.stringify(V.lineHyperbolas(P.runRecipe(line, recipe, ctx).line, ctx));
  for (const line of raw.slice(0, 6)) run(line);
  const digest = createHash('sha1');
  const u0 = process.cpuUsage();
  for (const line of raw) digest.update(run(line));
  const u = process.cpuUsage(u0);
  console.log(JSON.stringify({ msPerLine: (u.user + u.system) / 1000 / raw.length, fits: digest.digest('hex') }));
} else {
  const other = process.env.LAMINA_BENCH_OTHER_SRC;
  if (!other) throw new Error('set LAMINA_BENCH_OTHER_SRC to the folder of the other checkout');
  const rounds = Math.max(1, Number(process.argv[2] ?? 6));
  const here = resolve(fileURLToPath(import.meta.url), '../..');
  const child = (root: string) =>
    JSON.parse(execFileSync(process.execPath, ['--import', 'tsx', fileURLToPath(import.meta.url)], { env: { ...process.env, LAMINA_PASS1_ROOT: root }, cwd: here }).toString()) as { msPerLine: number; fits: string };
  const ratios: number[] = [];
  let same = true;
  for (let r = 0; r < rounds; r++) {
    const b = child(resolve(other));
    const a = child(here);
    same &&= a.fits === b.fits;
    ratios.push(a.msPerLine / b.msPerLine);
    console.log(`round ${r + 1}: this ${a.msPerLine.toFixed(1)} ms/line, other ${b.msPerLine.toFixed(1)} ms/line, ratio ${(a.msPerLine / b.msPerLine).toFixed(3)}`);
  }
  const median = [...ratios].sort((x, y) => x - y)[ratios.length >> 1]!;
  console.log(`pass 1: this / other, median of ${rounds} rounds ${median.toFixed(3)}; ${same ? 'same fits' : 'FITS DIFFER'}`);
}
