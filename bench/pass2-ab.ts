// Pass 2 of `lamina process` (migration, envelope and slice values of a kept line) of this source and of
// another checkout, alternated round by round in one process on lines of a site (default: the process
// bench's, `pnpm bench process` makes it). Pass 1 runs once (this source) and keeps its lines in memory;
// each round hands both versions copies of them. CPU time of this process per line, split into the
// migration and the envelope + slice values as pass 2 times them; the first round is a warm-up. Checks
// that both give the same bytes (the slice values). Asserts nothing.
// Usage: LAMINA_BENCH_OTHER_SRC=<a checkout with the workspace installed> tsx bench/pass2-ab.ts [rounds=10] [site dir]
import { createHash } from 'node:crypto';
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { loadSite } from '../packages/site/src/index';
import { siteRecipe, recordWindows } from '../packages/pipeline/src/index';
import * as task from '../packages/pipeline/src/line-task';
import type { KeptLine, Pass2Task } from '../packages/pipeline/src/line-task';
import { buildVelocityReport } from '../packages/velocity/src/index';

const other = process.env.LAMINA_BENCH_OTHER_SRC;
if (!other) throw new Error('set LAMINA_BENCH_OTHER_SRC to the folder of the other checkout');
const rounds = Math.max(2, Number(process.argv[2] ?? 10));
const siteDir = process.argv[3] ?? join(tmpdir(), 'lamina-bench-process/site');
const otherTask = (await import(pathToFileURL(join(other, 'packages/pipeline/src/line-task.ts')).href)) as typeof task;

const site = await loadSite(siteDir);
const recipe = siteRecipe(site);
const stageDir = await mkdtemp(join(tmpdir(), 'lamina-pass2-ab-'));
const picked = Array.from({ length: Math.min(6, site.lines.length) }, (_, i) => Math.floor((i * site.lines.length) / Math.min(6, site.lines.length)));
const p1 = [];
for (const i of picked) p1.push(await task.pass1({ kind: 'pass1', siteDir: site.dir, line: i, recipe, stageDir, keepLine: true, keepInMemory: true }));
const velocity = buildVelocityReport(p1.flatMap((r) => r.fits), { separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit });
const windows = recordWindows(site, p1, velocity);

const copy = (k: KeptLine): KeptLine => {
  const line = { ...k.line, data: k.line.data.slice(), x: k.line.x.slice(), y: k.line.y.slice() };
  return { line, before: k.before ? { ...line, data: k.before.data.slice() } : undefined };
};
const cpuMs = () => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[xs.length >> 1]!;
const parts = ['all', 'pass 2 processing: migration', 'pass 2 envelope + slice values'] as const;
const times = { this: new Map<string, number[]>(), other: new Map<string, number[]>() };
const digest = { this: createHash('sha1'), other: createHash('sha1') };
for (let r = 0; r < rounds; r++) {
  for (const which of ['other', 'this'] as const) {
    const run = which === 'this' ? task.pass2 : otherTask.pass2;
    const sums = new Map<string, number>();
    let cpu = 0;
    for (let q = 0; q < picked.length; q++) {
      const kept = copy(p1[q]!.kept!);
      const t: Pass2Task = { kind: 'pass2', siteDir: site.dir, line: picked[q]!, recipe, model: velocity.model, velocityMPerNs: velocity.site.velocityMPerNs, windows, kept };
      const t0 = cpuMs();
      const res = await run(t);
      cpu += cpuMs() - t0;
      for (const [k, ms] of Object.entries(res.times)) sums.set(k, (sums.get(k) ?? 0) + ms);
      if (r === 0) digest[which].update(res.values);
    }
    if (r === 0) continue;
    sums.set('all', cpu);
    for (const p of parts) {
      const list = times[which].get(p) ?? [];
      list.push((sums.get(p) ?? 0) / picked.length);
      times[which].set(p, list);
    }
  }
}
const same = digest.this.digest('hex') === digest.other.digest('hex');
console.log(`pass 2 on ${picked.length} lines of ${siteDir}, ${rounds - 1} rounds; ${same ? 'same bytes' : 'OUTPUTS DIFFER'}`);
for (const p of parts) {
  const a = times.this.get(p)!;
  const b = times.other.get(p)!;
  const ratios = a.map((t, k) => t / b[k]!);
  console.log(`  ${p === 'all' ? 'pass 2 (CPU)' : p}: this ${median(a).toFixed(1)} ms/line, other ${median(b).toFixed(1)} ms/line; this / other, median of the rounds ${median(ratios).toFixed(3)}`);
}
