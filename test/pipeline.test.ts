import { beforeAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { cp, mkdtemp, readFile, readdir, stat, truncate, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { simulateScenarioFile } from '@lamina/simulate';
import { runProcess } from '@lamina/pipeline';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const scenario = join(root, 'test/fixtures/tiny-scenario.json');
let work: string;
let siteDir: string;

async function hashTree(dir: string): Promise<Record<string, string>> {
  const out: Record<string, string> = {};
  for (const e of await readdir(dir, { recursive: true, withFileTypes: true })) {
    if (!e.isFile()) continue;
    const p = join(e.parentPath, e.name);
    out[p.slice(dir.length + 1)] = createHash('sha256').update(await readFile(p)).digest('hex');
  }
  return out;
}

beforeAll(async () => {
  work = await mkdtemp(join(tmpdir(), 'lamina-pipeline-'));
  siteDir = join(work, 'site');
  await simulateScenarioFile(scenario, siteDir);
});

describe('process pipeline', () => {
  it('gives the same outputs on worker threads as on the calling thread, and leaves inputs untouched', async () => {
    const before = await hashTree(siteDir);
    const now = new Date('2026-12-01T12:00:00Z');
    await runProcess(siteDir, join(work, 'single'), { threads: 0, now });
    await runProcess(siteDir, join(work, 'multi'), { threads: 2, now });
    // pass 2 from pass 1's kept lines (the default) or processing every line again: the same outputs
    await runProcess(siteDir, join(work, 'again'), { threads: 2, now, keepLines: false });
    // the kept lines in the stage folder (a site too large to keep them in memory) instead of in memory
    await runProcess(siteDir, join(work, 'disk'), { threads: 2, now, keepLinesInMemoryBytes: 0 });
    const a = await hashTree(join(work, 'single'));
    const b = await hashTree(join(work, 'multi'));
    const c = await hashTree(join(work, 'again'));
    // run.json records the thread count; everything else must be byte-identical.
    delete a['run.json'];
    delete b['run.json'];
    expect(Object.keys(a).sort()).toEqual(Object.keys(b).sort());
    expect(b).toEqual(a);
    expect((await readFile(join(work, 'again', 'run.json'), 'utf8')).replace(/"createdAt".*\n/, '')).toEqual((await readFile(join(work, 'multi', 'run.json'), 'utf8')).replace(/"createdAt".*\n/, ''));
    delete c['run.json'];
    expect(c).toEqual(b);
    const d = await hashTree(join(work, 'disk'));
    delete d['run.json'];
    expect(d).toEqual(b);
    expect(await hashTree(siteDir)).toEqual(before);
    // the per-trace point spill and the radargram index parts are gone (lamina's own temporaries)
    expect(Object.keys(a).filter((f) => f.includes('lamina-points-') || f.endsWith('.entry.json') || f.startsWith('pass1-lines'))).toEqual([]);
    expect(Object.keys(a)).toContain('radargrams/index.json');
  });

  it('runs the f-k migration the recipe asks for and records per line which method ran', async () => {
    const { defaultRecipe } = await import('@lamina/processing');
    const site = JSON.parse(await readFile(join(siteDir, 'site.json'), 'utf8')) as { antenna: { frequencyMHz: number } };
    const base = defaultRecipe(site.antenna.frequencyMHz);
    const recipe = { steps: base.steps.map((st) => (st.step === 'migration' ? { ...st, method: 'auto' as const } : st)) };
    await runProcess(siteDir, join(work, 'fk'), { threads: 0, recipe });
    const run = JSON.parse(await readFile(join(work, 'fk', 'run.json'), 'utf8')) as { log: { step: string; result?: Record<string, unknown> }[]; lines: unknown[] };
    const mig = run.log.find((e) => e.step === 'migration');
    expect(['stolt', 'phase-shift', 'kirchhoff']).toContain(mig?.result?.method);
    const byMethod = mig?.result?.linesByMethod as Record<string, number>;
    expect(Object.values(byMethod).reduce((a, b) => a + b, 0)).toBe(run.lines.length);
  });

  it('takes picks.json from the output folder: a line the site lacks stops the run, naming the file, and leaves the folder as it was', async () => {
    const out = join(work, 'picks-out');
    await runProcess(siteDir, out, { threads: 0 });
    const picks = { hyperbolas: [{ line: 'no-such-line', picks: [1, 2, 3, 4, 5].map((t) => ({ trace: t, timeNs: 10 + t })) }] };
    await writeFile(join(out, 'picks.json'), JSON.stringify(picks));
    const before = await hashTree(out);
    await expect(runProcess(siteDir, out, { threads: 0 })).rejects.toThrow(/picks\.json.*no-such-line/s);
    expect(await hashTree(out)).toEqual(before);
  });

  it('writes nothing when an input is bad, and names the file', async () => {
    const bad = join(work, 'bad-site');
    await cp(siteDir, bad, { recursive: true });
    const sgy = join(bad, 'lines', (await readdir(join(bad, 'lines'))).find((f) => f.endsWith('.sgy'))!);
    await truncate(sgy, (await stat(sgy)).size - 100);
    const out = join(work, 'bad-out');
    await expect(runProcess(bad, out, { threads: 2 })).rejects.toThrow(/\.sgy/);
    await expect(stat(out)).rejects.toThrow();
    expect((await readdir(work)).filter((f) => f.includes('lamina-stage'))).toEqual([]);
  });

  it('keeps previous outputs and review.json intact when killed with SIGKILL mid-run', async () => {
    const out = join(work, 'killed');
    await runProcess(siteDir, out, { threads: 0 });
    const review = join(out, 'review.json');
    if (!(await stat(review).catch(() => null))) {
      const run = JSON.parse(await readFile(join(out, 'run.json'), 'utf8'));
      await writeFile(review, JSON.stringify({ version: 1, site: run.identity, decisions: [] }, null, 2));
    }
    const previous = await hashTree(out);
    const child = spawn(process.execPath, ['--import', 'tsx', join(root, 'apps/cli/src/main.ts'), 'process', siteDir, '--out', out, '--threads', '2'], {
      cwd: root,
      stdio: 'ignore',
    });
    // Kill once the run has started writing its stage folder: mid-run by construction.
    const deadline = Date.now() + 60_000;
    for (;;) {
      const staged = (await readdir(work)).some((f) => f.startsWith('.lamina-stage-killed-'));
      if (staged) break;
      if (Date.now() > deadline) throw new Error('the run never started staging');
      await new Promise((r) => setTimeout(r, 20));
    }
    await new Promise((r) => setTimeout(r, 300));
    child.kill('SIGKILL');
    await new Promise((r) => child.on('exit', r));
    expect(await hashTree(out)).toEqual(previous);
    // The next run clears the stale stage and keeps the review.
    await runProcess(siteDir, out, { threads: 0 });
    expect((await readdir(work)).filter((f) => f.startsWith('.lamina-stage-killed-'))).toEqual([]);
    expect(await readFile(review, 'utf8')).toBeTruthy();
  });
});
