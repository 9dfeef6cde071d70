// Processing throughput (traces/s) of the default chain, side by side with the same chain written in
// numpy/scipy (bench/processing_ref.py, Debian /usr/bin/python3) on the same seeded synthetic lines.
// Single thread vs one process, and 2 worker threads vs 2 processes. Prints figures; asserts nothing.
// Data: the sample site's lines when sample-sites/yard/site/lines holds SEG-Y files (`pnpm lamina simulate`
// writes them) or LAMINA_BENCH_SITE names a site folder; else seeded synthetic lines
// (LAMINA_BENCH_LINES=40 LAMINA_BENCH_TRACES=400 LAMINA_BENCH_SAMPLES=512).
// Usage: pnpm bench processing
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { RadarLine } from '../packages/radar-data/src/index';
import { createProcessingPool, defaultRecipe, kirchhoffMigrate as migrate, runRecipe, type Recipe } from '../packages/processing/src/index';
import { loadSite, readLine } from '../packages/site/src/index';
import { mulberry32 } from '../packages/random/src/index';
import { C_M_PER_NS } from '../packages/constants/src/index';

const here = dirname(fileURLToPath(import.meta.url));
const N_LINES = Number(process.env.LAMINA_BENCH_LINES ?? 40);
const N_TRACES = Number(process.env.LAMINA_BENCH_TRACES ?? 400);
const N_SAMPLES = Number(process.env.LAMINA_BENCH_SAMPLES ?? 512);
const DT = 0.1;
const SPACING = 0.025;
const RUNS = 3;

function ricker(t: number): number {
  const a = (Math.PI * F * 1e-3 * t) ** 2;
  return (1 - 2 * a) * Math.exp(-a);
}
function addWavelet(d: Float32Array, o: number, tNs: number, amp: number): void {
  const i0 = Math.max(0, Math.floor((tNs - 8) / DT));
  const i1 = Math.min(N_SAMPLES - 1, Math.ceil((tNs + 8) / DT));
  for (let i = i0; i <= i1; i++) d[o + i] = (d[o + i] as number) + amp * ricker(i * DT - tNs);
}

/** Seeded synthetic line: jittered direct wave, two flat layers, four diffractions, wow, noise, a dead trace. */
function makeLine(k: number): RadarLine {
  const rnd = mulberry32(1000 + k);
  const data = new Float32Array(N_TRACES * N_SAMPLES);
  const x = new Float64Array(N_TRACES);
  const y = new Float64Array(N_TRACES);
  const v = 0.1;
  const tz = 4;
  const points = Array.from({ length: 4 }, () => ({ x0: rnd() * N_TRACES * SPACING, z: 0.3 + rnd() * 1.5 }));
  for (let t = 0; t < N_TRACES; t++) {
    x[t] = 500000 + t * SPACING;
    y[t] = 4000000 + k * 0.5;
    const o = t * N_SAMPLES;
    const jit = (rnd() - 0.5) * 0.3;
    addWavelet(data, o, tz + jit + SEP / C_M_PER_NS, 1);
    addWavelet(data, o, tz + jit + 12, 0.15);
    addWavelet(data, o, tz + jit + 30, -0.08);
    for (const p of points) {
      const dx = x[t]! - 500000 - p.x0;
      const tt = (Math.hypot(dx - SEP / 2, p.z) + Math.hypot(dx + SEP / 2, p.z)) / v;
      addWavelet(data, o, tz + jit + tt, (0.3 * p.z) / Math.hypot(dx, p.z) / (1 + tt / 10));
    }
    for (let i = 0; i < N_SAMPLES; i++) {
      const u1 = rnd() + 1e-12;
      const u2 = rnd();
      data[o + i] = (data[o + i] as number) + 0.1 * Math.exp(-i / 150) + 0.01 * Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
    }
  }
  data.fill(0, 37 * N_SAMPLES, 38 * N_SAMPLES);
  return { id: `b${k}`, nSamples: N_SAMPLES, nTraces: N_TRACES, dtNs: DT, data, x, y, timeZeroNs: 0 };
}

function stats(xs: number[]): string {
  const mean = xs.reduce((s, v) => s + v, 0) / xs.length;
  const sd = Math.sqrt(xs.reduce((s, v) => s + (v - mean) ** 2, 0) / Math.max(1, xs.length - 1));
  return `min ${Math.min(...xs).toFixed(3)} s, mean ${mean.toFixed(3)} +- ${sd.toFixed(3)} s`;
}

const siteDir = process.env.LAMINA_BENCH_SITE ?? join(here, '..', 'sample-sites', 'yard', 'site');
const haveSite = existsSync(join(siteDir, 'lines')) && readdirSync(join(siteDir, 'lines')).some((f) => f.endsWith('.sgy'));
let lines: RadarLine[];
let F = 400;
let SEP = 0.16;
let source: string;
if (haveSite) {
  const site = await loadSite(siteDir);
  lines = [];
  for (const src of site.lines) lines.push(await readLine(site, src));
  F = site.antenna.frequencyMHz;
  SEP = site.antenna.separationM;
  source = `site ${site.name} (${siteDir})`;
} else {
  lines = Array.from({ length: N_LINES }, (_, k) => makeLine(k));
  source = 'seeded synthetic';
}
const nSamples = lines[0]!.nSamples;
if (lines.some((l) => l.nSamples !== nSamples)) throw new Error('bench: lines of different sample counts');
const totalTraces = lines.reduce((s, l) => s + l.nTraces, 0);
// the chain without migration (it needs the velocity fit), plus the envelope the slices take
const base = defaultRecipe(F);
const recipe: Recipe = { steps: [...base.steps.filter((s) => s.step !== 'migration'), { step: 'envelope' }] };
const ctx = { frequencyMHz: F, separationM: SEP };
console.log(`${lines.length} lines, ${totalTraces} traces of ${nSamples} samples (${source}), chain: ${recipe.steps.map((s) => s.step).join(' > ')}`);

// Data for the python reference: one raw little-endian float32 file, trace-major, plus the parameters.
const dir = join(tmpdir(), 'lamina-bench-processing');
mkdirSync(dir, { recursive: true });
const all = new Float32Array(totalTraces * nSamples);
const index: { nTraces: number; offset: number }[] = [];
let off = 0;
for (const l of lines) {
  all.set(l.data, off);
  index.push({ nTraces: l.nTraces, offset: off });
  off += l.data.length;
}
writeFileSync(join(dir, 'lines.f32'), Buffer.from(all.buffer));
writeFileSync(
  join(dir, 'meta.json'),
  JSON.stringify({ lines: index, nSamples, dtNs: lines[0]!.dtNs, frequencyMHz: F, separationM: SEP, recipe, runs: RUNS }),
);

// single thread
runRecipe(lines[0]!, recipe, ctx); // warm-up
const single: number[] = [];
for (let r = 0; r < RUNS; r++) {
  const t0 = performance.now();
  for (const l of lines) runRecipe(l, recipe, ctx);
  single.push((performance.now() - t0) / 1000);
}

// worker threads on all cores (pool started and warmed outside the timing)
const threads = Math.max(2, availableParallelism());
const t0s = performance.now();
const pool = createProcessingPool({ threads });
await Promise.all(Array.from({ length: threads }, (_, i) => pool.run(lines[i % lines.length]!, recipe, ctx)));
const startup = (performance.now() - t0s) / 1000;
const multi: number[] = [];
for (let r = 0; r < RUNS; r++) {
  const t0 = performance.now();
  await Promise.all(lines.map((l) => pool.run(l, recipe, ctx)));
  multi.push((performance.now() - t0) / 1000);
}
await pool.close();

// migration alone (after the velocity fit), one thread
const pre = runRecipe(lines[0]!, { steps: base.steps.filter((s) => s.step !== 'migration') }, ctx).line;
migrate(pre, { velocityMPerNs: 0.1, separationM: SEP });
const migT: number[] = [];
for (let r = 0; r < RUNS; r++) {
  const t0 = performance.now();
  migrate(pre, { velocityMPerNs: 0.1, separationM: SEP, apertureM: 2, maxAngleDeg: 60 });
  migT.push((performance.now() - t0) / 1000);
}

const py = spawnSync('/usr/bin/python3', [join(here, 'processing_ref.py'), dir], { encoding: 'utf8', maxBuffer: 1 << 24 });
let ref: { single: number[]; multi: number[]; processes: number; numpy: string; scipy: string } | null = null;
if (py.status === 0) ref = JSON.parse(py.stdout.trim().split('\n').pop() as string);
else console.log(`python reference failed: ${py.stderr.trim().split('\n').pop()}`);

const tps = (xs: number[]) => totalTraces / Math.min(...xs);
console.log(`lamina  1 thread : ${stats(single)}  -> ${tps(single).toFixed(0)} traces/s`);
console.log(`lamina  ${threads} workers: ${stats(multi)}  -> ${tps(multi).toFixed(0)} traces/s (speed-up ${(tps(multi) / tps(single)).toFixed(2)}x; pool start + warm-up ${startup.toFixed(2)} s, not timed)`);
if (ref) {
  console.log(`numpy ${ref.numpy} / scipy ${ref.scipy}:`);
  console.log(`numpy   1 process: ${stats(ref.single)}  -> ${tps(ref.single).toFixed(0)} traces/s`);
  console.log(`numpy   ${ref.processes} processes: ${stats(ref.multi)}  -> ${tps(ref.multi).toFixed(0)} traces/s`);
  console.log(`ratio lamina / numpy (traces/s): 1 thread ${(tps(single) / tps(ref.single)).toFixed(2)}, ${threads} cores ${(tps(multi) / tps(ref.multi)).toFixed(2)}`);
}
if (ref) {
  // same chain, same answer? line 0 from both, relative to its peak (the pick refinements differ slightly)
  const mine = runRecipe(lines[0]!, recipe, ctx).line.data;
  writeFileSync(join(dir, 'out0-lamina.f32'), Buffer.from(mine.buffer, mine.byteOffset, mine.byteLength));
  const buf = readFileSync(join(dir, 'out0.f32'));
  const theirs = new Float32Array(buf.buffer, buf.byteOffset, buf.byteLength / 4);
  let d = 0;
  let p = 0;
  for (let i = 0; i < mine.length; i++) {
    d = Math.max(d, Math.abs((mine[i] as number) - (theirs[i] as number)));
    p = Math.max(p, Math.abs(theirs[i] as number));
  }
  console.log(`line 0, lamina vs numpy chain: max difference ${(d / p).toExponential(2)} of the peak`);
}
console.log(`migration (Kirchhoff, 2 m aperture, 60 deg), 1 thread, one ${pre.nTraces}-trace line: ${stats(migT)} -> ${(pre.nTraces / Math.min(...migT)).toFixed(0)} traces/s`);
