/**
 * Whole-folder fuzzer (issue 16): a tiny simulated site (test/fixtures/fuzz-scenario.json) is copied, damaged
 * by one to three seeded mutations (mutate.ts), and run through `lamina process` (in-process, and now and
 * then the CLI binary), `export` and the viewer server's API. Every case must end in success or one
 * InputError line naming a file; a failed run must leave the output folder as it was (absent, or with
 * only the review.json put there); a successful one must hold every file it lists. Anything else is an
 * internal error and is reported with the seed and the case to replay it.
 */
import { spawn } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { isInputError } from '@lamina/errors';
import { runProcess, type ProcessOptions } from '@lamina/pipeline';
import { rng, simulateScenarioFile } from '@lamina/simulate';
import { exportTargets } from '@lamina/targets';
import { startViewerServer } from '../../apps/viewer/src/index';
import { int, mutateJson, OUT_MUTATIONS, pick, SITE_MUTATIONS, type Rand } from './mutate';

const repo = resolve(import.meta.dirname, '../..');

export interface FuzzOptions {
  cases: number;
  /** @default 1 */
  seed?: number;
  /** Run the CLI binary on every n-th case as well (0: never). @default 0 */
  cliEvery?: number;
  /** Only this case (replay). */
  only?: number;
  log?: (line: string) => void;
}

export interface Failure {
  case: number;
  stage: string;
  mutations: string[];
  message: string;
}

export interface FuzzReport {
  cases: number;
  ok: number;
  /** Input errors by kind (the file or check that refused). */
  inputErrors: Record<string, number>;
  /** Outcomes per mutation kind: ok / input error. */
  byMutation: Record<string, { ok: number; input: number }>;
  exportRuns: number;
  viewerRuns: number;
  cliRuns: number;
  internal: Failure[];
}

/** The kind of an input error, from the file it names and what it says. */
export function errorKind(message: string): string {
  const m = message;
  if (/area of use|within .* of the rest of the survey|look(s)? like degrees|trace spacing|consecutive traces|plan features near/.test(m)) return 'positions: what they mean';
  if (/expected (a grid of at most|a run that fits|room for)/.test(m)) return 'size before work';
  if (/review\.json/.test(m.split(': ')[0] ?? '')) return 'review.json';
  if (m.startsWith('command line: ')) return 'command-line options';
  const file = m.split(': ')[0] ?? '';
  if (file.endsWith('site.json')) return 'site.json';
  if (file.endsWith('plan.geojson')) return 'plan.geojson';
  if (file.endsWith('.csv')) return 'CSV positions';
  if (file.endsWith('.sgy')) {
    if (/expected sample values|expected a finite sample value/.test(m)) return 'SEG-Y samples';
    if (/binary header/.test(m)) return 'SEG-Y binary header';
    if (/trace header|coordinates|positions/.test(m)) return 'SEG-Y trace header positions';
    return 'SEG-Y traces and size';
  }
  if (/\.(json|geojson|tif)$/.test(file)) return 'output folder (export/viewer)';
  return `other (${file})`;
}

function listTree(dir: string): string[] {
  if (!existsSync(dir)) return [];
  return readdirSync(dir, { recursive: true }).map(String).sort();
}

function cli(args: string[]): Promise<{ code: number | null; stderr: string }> {
  return new Promise((ok) => {
    const p = spawn(process.execPath, ['--import', 'tsx', 'apps/cli/src/main.ts', ...args], { cwd: repo, env: { ...process.env, LAMINA_PROGRESS: '0' } });
    let stderr = '';
    p.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    p.on('close', (code) => ok({ code, stderr }));
  });
}

/** An InputError that is one line and names a file, or a description of what is wrong with it. */
function badInputError(e: unknown): string | undefined {
  if (!isInputError(e)) return undefined;
  if (e.message.includes('\n')) return 'input error of more than one line';
  if (!e.file) return 'input error naming no file';
  return undefined;
}

async function viewerApi(out: string, r: Rand): Promise<string | undefined> {
  const srv = await startViewerServer(out, { port: 0, distDir: join(out, '.no-dist') });
  try {
    const anomalies = (() => {
      try {
        return (JSON.parse(readFileSync(join(out, 'anomalies.geojson'), 'utf8')) as { features?: { id?: unknown; properties?: { id?: unknown } }[] }).features ?? [];
      } catch {
        return [];
      }
    })();
    const id = anomalies.length ? String(anomalies[int(r, anomalies.length)]?.properties?.id ?? anomalies[0]?.id ?? 'a1') : 'a1';
    const good = { anomalyId: id, decision: pick(r, ['accept', 'reject', 'undecided']), utilityType: pick(r, ['water', 'gas', null]) };
    const bodies: unknown[] = [good, mutateJson(good, r).doc, { anomalyId: 'no-such-anomaly', decision: 'accept' }];
    const calls: [string, string, unknown?][] = [
      ['GET', '/api/config'],
      ['GET', '/api/review'],
      ...bodies.map((b) => ['POST', '/api/review', b] as [string, string, unknown]),
      ['POST', '/api/export'],
      ['GET', '/data/run.json'],
      ['GET', '/data/slices.json'],
    ];
    for (const [method, path, body] of calls) {
      const res = await fetch(new URL(path, srv.url), {
        method,
        ...(body !== undefined ? { body: JSON.stringify(body), headers: { 'content-type': 'application/json' } } : {}),
      });
      const text = await res.text();
      if (res.status >= 500) return `${method} ${path}: ${res.status} ${text.slice(0, 300)}`;
    }
    return undefined;
  } finally {
    await srv.close();
  }
}

/** Random process options (what the command line passes), mostly none. */
function processOptions(r: Rand): ProcessOptions {
  if (r() > 0.15) return {};
  return pick(r, [{ cellSizeM: pick(r, [0.05, 0.3, 1e-5, 1000, -1, 0]) }, { maxDepthM: pick(r, [0.2, 0.01, 100, 0, -2]) }, { sliceThicknessM: pick(r, [0.05, 0.5, 1e-4, 0]) }, { sliceOverlap: pick(r, [0.5, 0.9, 1, -0.5]) }, { level: true }] as ProcessOptions[]);
}

export async function runFuzz(options: FuzzOptions): Promise<FuzzReport> {
  const seed = options.seed ?? 1;
  const log = options.log ?? (() => {});
  const work = mkdtempSync(join(tmpdir(), 'lamina-fuzz-'));
  const base = join(work, 'base');
  const report: FuzzReport = { cases: 0, ok: 0, inputErrors: {}, byMutation: {}, exportRuns: 0, viewerRuns: 0, cliRuns: 0, internal: [] };
  try {
    await simulateScenarioFile(join(repo, 'test/fixtures/fuzz-scenario.json'), base);
    rmSync(join(base, 'truth.json'), { force: true });
    for (let c = 0; c < options.cases; c++) {
      if (options.only !== undefined && c !== options.only) continue;
      const g = rng(seed, `case-${c}`);
      const r: Rand = () => g.next();
      const dir = join(work, `case-${c}`);
      cpSync(base, dir, { recursive: true });
      const mutations: string[] = [];
      const kinds: string[] = [];
      // about one case in eight is left whole, so success paths (export, viewer) are exercised too
      const n = r() < 0.125 ? 0 : 1 + int(r, 3) === 3 && r() < 0.5 ? 3 : 1 + int(r, 2);
      for (let k = 0; k < n; k++) {
        const m = pick(r, SITE_MUTATIONS);
        kinds.push(m.name);
        try {
          mutations.push(`${m.name}: ${m.apply(dir, r)}`);
        } catch (e) {
          mutations.push(`${m.name}: not applied (${(e as Error).message})`);
        }
      }
      const parent = join(work, `out-${c}`);
      mkdirSync(parent);
      const out = join(parent, 'out');
      if (r() < 0.1) {
        // an output folder that holds only a review.json (kept across runs), maybe damaged
        mkdirSync(out);
        const review = { version: 1, site: { name: 'fuzz', crs: 'EPSG:32617', extent: [-81.81, 40.01, -81.80, 40.02] }, decisions: [] };
        const doc = r() < 0.5 ? mutateJson(review, r).doc : review;
        writeFileSync(join(out, 'review.json'), JSON.stringify(doc) ?? '');
        mutations.push('review.json in the output folder');
        kinds.push('review.json');
      }
      const before = listTree(parent);
      const opts = processOptions(r);
      if (Object.keys(opts).length) mutations.push(`options ${JSON.stringify(opts)}`);
      const fail = (stage: string, message: string): void => {
        report.internal.push({ case: c, stage, mutations, message });
        log(`INTERNAL case ${c} (${stage}): ${message}\n    ${mutations.join('\n    ')}`);
      };
      report.cases++;
      let processed = false;
      const t0 = performance.now();
      try {
        const summary = await runProcess(dir, out, { threads: 0, now: new Date('2026-12-01T12:00:00Z'), onWarning: () => {}, ...opts });
        processed = true;
        const missing = summary.files.filter((f) => !existsSync(join(out, f)));
        if (missing.length) fail('process', `succeeded without ${missing.join(', ')}`);
      } catch (e) {
        const bad = badInputError(e);
        if (!isInputError(e)) fail('process', `${(e as Error)?.name}: ${(e as Error)?.message ?? String(e)} ${(e as Error)?.stack?.split('\n').slice(1, process.env.FUZZ_STACK ? 12 : 2).map((l) => l.trim()).join(' <- ') ?? ''}`);
        else if (bad) fail('process', `${bad}: ${e.message}`);
        else {
          const kind = errorKind(e.message);
          report.inputErrors[kind] = (report.inputErrors[kind] ?? 0) + 1;
        }
        const after = listTree(parent);
        if (after.join('\n') !== before.join('\n')) fail('process', `a failed run changed the output folder: before [${before.join(', ')}], after [${after.join(', ')}]`);
      }
      for (const k of new Set(kinds.length ? kinds : ['(none)'])) {
        const b = (report.byMutation[k] ??= { ok: 0, input: 0 });
        if (processed) b.ok++;
        else b.input++;
      }
      if (processed) {
        report.ok++;
        if (r() < 0.3) {
          const m = pick(r, OUT_MUTATIONS);
          try {
            mutations.push(`${m.name}: ${m.apply(out, r)}`);
          } catch (e) {
            mutations.push(`${m.name}: not applied (${(e as Error).message})`);
          }
        }
        report.exportRuns++;
        try {
          await exportTargets(out, { now: new Date('2026-12-01T12:00:00Z') });
        } catch (e) {
          const bad = badInputError(e);
          if (!isInputError(e)) fail('export', `${(e as Error)?.name}: ${(e as Error)?.message ?? String(e)} ${(e as Error)?.stack?.split('\n')[1]?.trim() ?? ''}`);
          else if (bad) fail('export', `${bad}: ${e.message}`);
          else {
            const kind = errorKind(e.message);
            report.inputErrors[`export: ${kind}`] = (report.inputErrors[`export: ${kind}`] ?? 0) + 1;
          }
        }
        report.viewerRuns++;
        try {
          const v = await viewerApi(out, r);
          if (v) fail('viewer', v);
        } catch (e) {
          fail('viewer', `${(e as Error)?.name}: ${(e as Error)?.message}`);
        }
      }
      if (process.env.FUZZ_TIMING) log(`case ${c}: ${processed ? 'ok' : 'refused'} in ${(performance.now() - t0).toFixed(0)} ms`);
      if (options.cliEvery && c % options.cliEvery === 0) {
        report.cliRuns++;
        const cliOut = join(work, `cli-${c}`);
        const res = await cli(['process', dir, '--out', cliOut, ...Object.entries(opts).flatMap(([k, v]) => (k === 'level' ? ['--level'] : [`--${{ cellSizeM: 'cell-size', maxDepthM: 'max-depth', sliceThicknessM: 'slice-thickness', sliceOverlap: 'slice-overlap' }[k]}`, String(v)]))]);
        const lines = res.stderr.split('\n').filter((l) => l.trim() && !l.startsWith('warning: '));
        if (res.code === 0 && processed) {
          // same outcome as in-process
        } else if (res.code === 2 && !processed && lines.length === 1 && lines[0]!.startsWith('error: ')) {
          if (existsSync(cliOut)) fail('cli', 'a failed run left an output folder');
        } else fail('cli', `exit ${res.code} (in-process ${processed ? 'succeeded' : 'refused'}): ${res.stderr.trim().slice(0, 400)}`);
        rmSync(cliOut, { recursive: true, force: true });
      }
      if (process.env.FUZZ_KEEP) {
        cpSync(dir, process.env.FUZZ_KEEP, { recursive: true });
        log(`case ${c}: site kept in ${process.env.FUZZ_KEEP}`);
      }
      rmSync(dir, { recursive: true, force: true });
      rmSync(parent, { recursive: true, force: true });
      if ((c + 1) % 50 === 0) log(`${c + 1} cases: ${report.ok} ok, ${report.internal.length} internal errors`);
    }
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
  return report;
}
