// The cross-package bad-input corpus, run through the real entry points: loadSite + readLine (what every
// reader does), runProcess in-process (exact message, nothing written, no staging folder left), and the
// CLI binary for a representative subset (one line on stderr, exit 2, nothing written).
// Corpus: the site package's cases (packages/site/test/bad/cases.json: site.json, plan.geojson, CSV
// positions, trace-header coordinates) and this folder's SEG-Y and review.json cases
// (test/bad-inputs/cases.json, written by test/bad-inputs/generate.ts). Every expected message is
// written in those files from the format rules, not captured from a run.
import { spawn } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runProcess } from '@lamina/pipeline';
import { loadSite, readLine, shownPath, summarizeSite } from '@lamina/site';

const repo = resolve(import.meta.dirname, '..');
const siteBad = join(repo, 'packages/site/test/bad');
const ours = join(import.meta.dirname, 'bad-inputs');

interface SiteCase { name: string; kind: 'site' | 'line' | 'info' | 'plan' | 'csv'; input: string; crs?: string; nTraces?: number; error: string }
interface OurCase { name: string; kind: 'segy' | 'review'; error: string; cli?: 'info' | 'process' }
const siteCases = (JSON.parse(readFileSync(join(siteBad, 'cases.json'), 'utf8')) as { cases: SiteCase[] }).cases;
const ourCases = (JSON.parse(readFileSync(join(ours, 'cases.json'), 'utf8')) as { cases: OurCase[] }).cases;

let tmp: string;

/** A runnable site folder for a case. Plan and CSV cases are wrapped in a site of one good line that names the case's file by absolute path, so the message still names that file. */
function siteFor(c: SiteCase): string {
  const input = join(siteBad, c.input);
  if (c.kind !== 'plan' && c.kind !== 'csv') return input;
  const dir = join(tmp, 'wrapped', c.name);
  mkdirSync(dir, { recursive: true });
  const line: Record<string, unknown> = { file: join(siteBad, '_shared/l01.sgy') }; // 20 traces (segyio tracecount)
  if (c.kind === 'csv') line.positions = input; // the case's positions.csv
  const json: Record<string, unknown> = { name: 'bad-input case', crs: c.crs ?? 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, sampleIntervalNs: 0.1, lines: [line] };
  if (c.kind === 'plan') json.plan = input; // the case's plan.geojson
  writeFileSync(join(dir, 'site.json'), JSON.stringify(json));
  return dir;
}

async function readAll(dir: string): Promise<void> {
  const site = await loadSite(dir);
  for (const l of site.lines) await readLine(site, l);
  await summarizeSite(site);
}

async function message(f: () => Promise<unknown>): Promise<string> {
  try {
    await f();
  } catch (e) {
    expect((e as Error).name, String(e)).toBe('InputError');
    return (e as Error).message;
  }
  throw new Error('expected an InputError, none was thrown');
}

let outN = 0;
/** runProcess into a fresh folder: returns the message; checks that neither the folder nor a stage appeared. */
async function processFails(site: string, threads = 0): Promise<string> {
  const parent = join(tmp, `out-${outN++}`);
  mkdirSync(parent);
  const out = join(parent, 'out');
  const m = await message(() => runProcess(site, out, { threads }));
  expect(readdirSync(parent), 'nothing written beside the output folder').toEqual([]);
  return m;
}

function cli(args: string[]): Promise<{ code: number | null; stderr: string; stdout: string }> {
  return new Promise((res) => {
    const p = spawn(process.execPath, ['--import', 'tsx', 'apps/cli/src/main.ts', ...args], { cwd: repo, env: { ...process.env, LAMINA_PROGRESS: '0' } });
    let stderr = '';
    let stdout = '';
    p.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    p.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
    p.on('close', (code) => res({ code, stderr, stdout }));
  });
}

beforeAll(() => {
  tmp = mkdtempSync(join(tmpdir(), 'lamina-bad-'));
});
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('bad-input corpus', () => {
  it('has at least 40 cases across SEG-Y, CSV positions, site.json, plan.geojson and review.json', () => {
    expect(siteCases.length + ourCases.length).toBeGreaterThanOrEqual(40);
    for (const k of ['site', 'line', 'plan', 'csv']) expect(siteCases.some((c) => c.kind === k), k).toBe(true);
    for (const k of ['segy', 'review']) expect(ourCases.some((c) => c.kind === k), k).toBe(true);
    // the list, by case name
    const names = new Set([...siteCases, ...ourCases].map((c) => c.name));
    for (const n of ['segy-truncated-trace', 'segy-format-code', 'segy-zero-samples', 'segy-huge-samples', 'segy-nan-sample', 'segy-inf-sample', 'segy-mixed-length', 'line-zero-coordinates', 'line-constant-coordinates', 'line-degree-coordinates', 'csv-degrees', 'line-repeated-positions', 'csv-duplicate-trace', 'line-one-trace', 'site-unknown-crs', 'plan-no-kind', 'plan-self-intersecting', 'review-other-site']) {
      expect(names.has(n), n).toBe(true);
    }
  });
});

describe('site, plan, CSV and trace-header cases: loadSite + readLine, and runProcess', () => {
  for (const c of siteCases) {
    it(c.name, async () => {
      const expected = c.error.replaceAll('<dir>', shownPath(join(siteBad, c.name)));
      const dir = siteFor(c);
      expect(await message(() => readAll(dir))).toBe(expected);
      expect(await processFails(dir)).toBe(expected);
    });
  }
});

describe('SEG-Y cases: loadSite + readLine, and runProcess', () => {
  for (const c of ourCases.filter((x) => x.kind === 'segy')) {
    it(c.name, async () => {
      const dir = join(ours, c.name);
      const expected = c.error.replaceAll('<dir>', shownPath(dir));
      expect(await message(() => readAll(dir))).toBe(expected);
      expect(await processFails(dir)).toBe(expected);
    });
  }
  it('the same message comes back from a worker thread', async () => {
    const c = ourCases.find((x) => x.name === 'segy-nan-sample')!;
    const dir = join(ours, c.name);
    expect(await processFails(dir, 1)).toBe(c.error.replaceAll('<dir>', shownPath(dir)));
  });
});

describe('review.json of another site', () => {
  const c = ourCases.find((x) => x.kind === 'review')!;
  const good = join(ours, 'good-site');
  let out: string;
  let review: string;
  let m: string;
  beforeAll(async () => {
    out = join(tmp, 'review-out', 'out');
    mkdirSync(out, { recursive: true });
    cpSync(join(ours, c.name, 'review.json'), join(out, 'review.json'));
    writeFileSync(join(out, 'previous.txt'), 'an earlier run\n');
    review = readFileSync(join(out, 'review.json'), 'utf8');
    m = await message(() => runProcess(good, out, { threads: 0 }));
  });
  it('refuses it naming the field, keeps the previous outputs and review.json, leaves no stage', () => {
    expect(readdirSync(out).sort()).toEqual(['previous.txt', 'review.json']);
    expect(readFileSync(join(out, 'review.json'), 'utf8')).toBe(review);
    expect(readdirSync(dirname(out))).toEqual(['out']);
  });
  it('names the user\'s review.json, not the staged copy', () => {
    expect(m).toBe(c.error.replaceAll('<out>', shownPath(out)));
  });
});

describe('CLI binary: one line on stderr naming file and field or byte, exit 2, nothing written', () => {
  const pick = (n: string): SiteCase => siteCases.find((c) => c.name === n)!;
  const subset: { name: string; command: 'info' | 'process'; dir: () => string; expected: () => string; prepare?: (out: string) => void }[] = [
    ...ourCases.filter((c) => c.kind === 'segy' && c.cli).map((c) => ({ name: c.name, command: c.cli!, dir: () => join(ours, c.name), expected: () => c.error.replaceAll('<dir>', shownPath(join(ours, c.name))) })),
    ...['site-unknown-crs', 'line-degree-coordinates', 'plan-self-intersecting', 'csv-duplicate-trace'].map((n, i) => ({
      name: n,
      command: (i % 2 === 0 ? 'info' : 'process') as 'info' | 'process',
      dir: () => siteFor(pick(n)),
      expected: () => pick(n).error.replaceAll('<dir>', shownPath(join(siteBad, n))),
    })),
  ];
  const results = new Map<string, { code: number | null; stderr: string; stdout: string; parent: string }>();
  beforeAll(async () => {
    // two at a time: a spawn costs about 1-2 s of start-up on this 2-core machine
    const queue = [...subset];
    await Promise.all(
      [0, 1].map(async () => {
        for (let s = queue.shift(); s; s = queue.shift()) {
          const parent = join(tmp, `cli-${s.name}`);
          mkdirSync(parent);
          const args = s.command === 'info' ? ['info', s.dir()] : ['process', s.dir(), '--out', join(parent, 'out'), '--threads', '0'];
          results.set(s.name, { ...(await cli(args)), parent });
        }
      }),
    );
  });
  for (const s of subset) {
    it(`${s.command} ${s.name}`, () => {
      const r = results.get(s.name)!;
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toBe(`error: ${s.expected()}\n`);
      expect(r.stdout).toBe('');
      expect(readdirSync(r.parent)).toEqual([]);
    });
  }
  it('process with a review.json of another site', async () => {
    const c = ourCases.find((x) => x.kind === 'review')!;
    const out = join(tmp, 'cli-review', 'out');
    mkdirSync(out, { recursive: true });
    cpSync(join(ours, c.name, 'review.json'), join(out, 'review.json'));
    const before = readFileSync(join(out, 'review.json'), 'utf8');
    const r = await cli(['process', join(ours, 'good-site'), '--out', out, '--threads', '0']);
    expect(r.code, r.stderr).toBe(2);
    expect(r.stderr.split('\n')).toHaveLength(2);
    expect(r.stderr).toBe(`error: ${c.error.replaceAll('<out>', shownPath(out))}\n`);
    expect(readdirSync(out)).toEqual(['review.json']);
    expect(readFileSync(join(out, 'review.json'), 'utf8')).toBe(before);
    expect(existsSync(join(dirname(out), 'out.lamina-old'))).toBe(false);
  });
});
