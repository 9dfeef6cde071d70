// The two costly parts of a line's work in `lamina process` (Stolt migration of pass 2, hyperbola
// detection of pass 1) on lines of the process bench's site (run `pnpm bench process` once to make it),
// timed one after the other on this thread (CPU time, the least of LAMINA_BENCH_RUNS=3 runs per line), with a checksum of each result so that a change of speed can be
// checked for a change of numbers. Asserts nothing. Usage: tsx bench/line-work.ts [lines=4]
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { loadSite, readLine } from '../packages/site/src/index';
import { defaultRecipe, migrate, runRecipe } from '../packages/processing/src/index';
import { detectHyperbolas, recipeForVelocity } from '../packages/velocity/src/index';

const n = Number(process.argv[2] ?? 4);
const site = await loadSite(join(tmpdir(), 'lamina-bench-process/site'));
const recipe = defaultRecipe(site.antenna.frequencyMHz);
const mig = recipe.steps.find((s) => s.step === 'migration') as { apertureM: number; maxAngleDeg: number; halfDerivative: boolean };
const ctx = { frequencyMHz: site.antenna.frequencyMHz, separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit };
const reps = Number(process.env.LAMINA_BENCH_RUNS ?? 3);
const lines = [];
for (let i = 0; i < n; i++) {
  const raw = await readLine(site, site.lines[(i * 7) % site.lines.length]!);
  lines.push(runRecipe(raw, recipeForVelocity(recipe), ctx).line);
}
// CPU time of this process (less disturbed than the clock by other processes on the shared cores)
const cpuMs = () => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};
// the fastest of `reps` runs of each line (the least disturbed by other processes), summed over lines
let tm = 0;
let th = 0;
let sumM = 0;
let sumH = 0;
let fits = 0;
for (const line of lines) {
  let bm = Infinity;
  let bh = Infinity;
  for (let rep = 0; rep < reps; rep++) {
    const t0 = cpuMs();
    const m = migrate(line, { velocityMPerNs: 0.1064, method: 'auto', separationM: ctx.separationM, metresPerUnit: ctx.metresPerUnit, apertureM: mig.apertureM, maxAngleDeg: mig.maxAngleDeg, halfDerivative: mig.halfDerivative });
    const t1 = cpuMs();
    const h = detectHyperbolas(line, { separationM: ctx.separationM, metresPerUnit: ctx.metresPerUnit, frequencyMHz: ctx.frequencyMHz });
    const t2 = cpuMs();
    bm = Math.min(bm, t1 - t0);
    bh = Math.min(bh, t2 - t1);
    if (rep > 0) continue;
    for (let q = 0; q < m.data.length; q += 97) sumM += Math.abs(m.data[q]!);
    for (const f of h) sumH += f.velocityMPerNs + f.x0M + f.t0Ns;
    fits += h.length;
  }
  tm += bm;
  th += bh;
}
console.log(`migration ${(tm / n).toFixed(1)} ms/line (checksum ${sumM.toPrecision(12)}); hyperbolas ${(th / n).toFixed(1)} ms/line, ${fits} fits (checksum ${sumH.toPrecision(12)})`);
