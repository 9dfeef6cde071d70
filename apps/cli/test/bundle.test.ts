// The built CLI (apps/cli/build.mjs): built into a temporary folder, run from another folder, with its
// worker threads, its wasm and its viewer assets; its outputs must equal those of the sources.
import { beforeAll, describe, expect, it } from 'vitest';
import { execFile, spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { cp, mkdir, mkdtemp, readdir, readFile, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { Worker } from 'node:worker_threads';
import { runProcess } from '@lamina/pipeline';
import { defaultRecipe, runRecipe, type RecipeResult } from '@lamina/processing';
import { loadSite, readLine } from '@lamina/site';
import { isStale, workerEntries } from '../build.mjs';

const run = promisify(execFile);
const cliRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const root = resolve(cliRoot, '..', '..');
let work: string;
let dist: string;
let site: string;

/** Runs the bundle from `work` (not the repository): nothing may be found through the workspace. */
const lamina = (...args: string[]) => run(process.execPath, [join(dist, 'lamina.mjs'), ...args], { cwd: work, maxBuffer: 1 << 26, env: { ...process.env, LAMINA_PROGRESS: '0' } });

async function hashTree(dir: string): Promise<Record<string, string>> {
  const out: Record<string, string> = {};
  for (const e of await readdir(dir, { recursive: true, withFileTypes: true })) {
    if (e.isFile()) out[join(e.parentPath, e.name).slice(dir.length + 1)] = createHash('sha256').update(await readFile(join(e.parentPath, e.name))).digest('hex');
  }
  return out;
}

beforeAll(async () => {
  work = await mkdtemp(join(tmpdir(), 'lamina-bundle-'));
  dist = join(work, 'dist');
  await run(process.execPath, [join(cliRoot, 'build.mjs'), '--force', '--out', dist], { cwd: root, maxBuffer: 1 << 24 });
  site = join(work, 'site');
  await lamina('simulate', join(root, 'test/fixtures/tiny-scenario.json'), '--out', site);
});

describe('the built CLI', () => {
  it('starts from another folder and prints its help', async () => {
    const { stdout } = await lamina('--help');
    for (const c of ['info', 'simulate', 'velocity', 'process', 'score', 'export', 'view', 'tiles']) expect(stdout).toMatch(new RegExp(`^  ${c} `, 'm'));
    // the scenario's 4 m at 0.5 m spacing: 9 lines, edges included
    expect((await lamina('info', site)).stdout).toMatch(/^lines\s+9, /m);
  });

  it('processes a site on worker threads (pipeline and gridding workers, sql.js wasm) exactly as the sources do', async () => {
    // a 1 cm grid makes the gridding large enough for its worker threads (2e6 cell-values, idw-parallel.ts)
    const args = ['--cell-size', '0.01'];
    const built = join(work, 'out-built');
    const { stdout, stderr } = await lamina('process', site, '--out', built, '--threads', '2', '--json', '--timings', ...args);
    const summary = JSON.parse(stdout);
    expect(summary.timings.threads).toBe(2);
    expect(summary.timings.stages.map((s: { stage: string }) => s.stage)).toEqual(expect.arrayContaining(['pass 1: process lines, hyperbolas', 'gridding', 'air-wave screening', 'targets export']));
    expect(stderr).toMatch(/^pass 2: process lines, slice values\s+\d+\.\d\d\s+\d+\.\d%$/m);
    const source = join(work, 'out-source');
    await runProcess(site, source, { threads: 0, cellSizeM: 0.01 });
    const a = await hashTree(built);
    const b = await hashTree(source);
    // run.json records the time and the thread count, the report and the export files the date
    const dated = (f: string) => f === 'run.json' || f === 'report.html' || f.startsWith('targets.');
    expect(Object.keys(a).sort()).toEqual(Object.keys(b).sort());
    expect(Object.fromEntries(Object.entries(a).filter(([f]) => !dated(f)))).toEqual(Object.fromEntries(Object.entries(b).filter(([f]) => !dated(f))));
    // the GeoPackage came through the bundled sql.js and its wasm
    expect((await readFile(join(built, 'targets.gpkg'))).subarray(0, 16).toString('latin1')).toBe('SQLite format 3\0');
  });

  it('is stale only when a source is newer than the start of the build', async () => {
    expect(isStale(dist)).toBe(false);
    const stamp = join(dist, 'build.json');
    const text = await readFile(stamp, 'utf8');
    try {
      await writeFile(stamp, JSON.stringify({ ...JSON.parse(text), startedAt: 0 }));
      expect(isStale(dist)).toBe(true);
      await writeFile(stamp, '');
      expect(isStale(dist)).toBe(true);
    } finally {
      await writeFile(stamp, text);
    }
    expect(isStale(dist)).toBe(false);
    expect(isStale(join(work, 'no-build'))).toBe(true);
  });

  it('carries a working bundle of every worker entry the sources name (the processing pool too)', async () => {
    const stamp = JSON.parse(await readFile(join(dist, 'build.json'), 'utf8')) as { workers: string[] };
    expect(stamp.workers.sort()).toEqual([...workerEntries().keys()].map((w) => `${w}.mjs`).sort());
    expect(stamp.workers.sort()).toEqual(['idw-worker.mjs', 'line-worker.mjs', 'recipe-worker.mjs']);
    for (const w of stamp.workers) expect((await stat(join(dist, w))).isFile()).toBe(true);
    // the processing pool's worker is not used by any command: run one recipe through it by hand
    const s = await loadSite(site);
    const line = await readLine(s, s.lines[0]!);
    const recipe = defaultRecipe(s.antenna.frequencyMHz);
    const ctx = { frequencyMHz: s.antenna.frequencyMHz, separationM: s.antenna.separationM };
    const w = new Worker(join(dist, 'recipe-worker.mjs'));
    try {
      // the protocol of @lamina/runtime-files' pool: { id, task } in, { id, result } or { id, error } out
      const reply = await new Promise<{ id: number; result?: RecipeResult; error?: unknown }>((ok, fail) => {
        w.once('message', ok);
        w.once('error', fail);
        w.postMessage({ id: 1, task: { line, recipe, ctx, options: {} } });
      });
      expect(reply.error).toBeUndefined();
      expect(reply.result!.line.data).toEqual(runRecipe(line, recipe, ctx).line.data);
    } finally {
      await w.terminate();
    }
  });

  it('serves the viewer it carries', async () => {
    const out = join(work, 'out-built');
    const p = spawn(process.execPath, [join(dist, 'lamina.mjs'), 'view', out, '--port', '0'], { cwd: work });
    try {
      const url = await new Promise<string>((ok, fail) => {
        let text = '';
        p.stdout.on('data', (d: Buffer) => {
          text += d.toString();
          const m = /Lamina viewer: (\S+)/.exec(text);
          if (m) ok(m[1]!);
        });
        p.once('exit', (code) => fail(new Error(`lamina view exited with ${code}`)));
      });
      const html = await (await fetch(url)).text();
      expect(html).toMatch(/<script[^>]+src="\.\/assets\/[^"]+\.js"/);
      const asset = /src="\.\/(assets\/[^"]+\.js)"/.exec(html)![1]!;
      expect((await fetch(new URL(asset, url))).status).toBe(200);
    } finally {
      p.kill('SIGTERM');
    }
  });

  it('packs into a package that npm installs and runs with no dependencies', async () => {
    const pkg = join(work, 'pkg');
    await mkdir(pkg);
    await cp(dist, join(pkg, 'dist'), { recursive: true });
    await writeFile(join(pkg, 'package.json'), await readFile(join(cliRoot, 'package.json')));
    const { stdout } = await run('npm', ['pack', '--ignore-scripts', '--silent', '--pack-destination', work], { cwd: pkg });
    const tarball = join(work, stdout.trim().split('\n').pop()!);
    const prefix = join(work, 'global');
    await run('npm', ['install', '--global', '--prefix', prefix, '--offline', '--no-audit', '--no-fund', tarball], { cwd: work });
    const help = await run(join(prefix, 'bin', 'lamina'), ['--help'], { cwd: work });
    expect(help.stdout).toMatch(/^Usage: lamina /);
  });
});
