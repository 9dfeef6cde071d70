// Migration of one line (481 traces x 640 samples, the size of issue #15's site) by Kirchhoff, Stolt and
// phase-shift, side by side, and the numpy reference of the Stolt kernel (packages/processing/test/
// stolt_ref.py, Debian /usr/bin/python3) on the same zero-offset data. Runs alternate so that load from
// other processes falls on all of them alike; prints min and mean +- sd and ratios; asserts nothing.
// Usage: pnpm bench migration (LAMINA_BENCH_RUNS=5 LAMINA_BENCH_TRACES=481 LAMINA_BENCH_SAMPLES=640)
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { RadarLine } from '../packages/radar-data/src/index';
import { defaultRecipe, kirchhoffMigrate, phaseShiftMigrate, runRecipe, stoltKernel, stoltMigrate } from '../packages/processing/src/index';
import { mulberry32 } from '../packages/random/src/index';
import { C_M_PER_NS } from '../packages/constants/src/index';

const here = dirname(fileURLToPath(import.meta.url));
const RUNS = Number(process.env.LAMINA_BENCH_RUNS ?? 5);
const N_TRACES = Number(process.env.LAMINA_BENCH_TRACES ?? 481);
const N_SAMPLES = Number(process.env.LAMINA_BENCH_SAMPLES ?? 640);
const DT = 0.1;
const SPACING = 0.025;
const F = 400;
const SEP = 0.16;
const V = 0.1;
const TZ = 4;

function ricker(t: number): number {
  const a = (Math.PI * F * 1e-3 * t) ** 2;
  return (1 - 2 * a) * Math.exp(-a);
}

/** Seeded line: direct wave, two flat layers, eight diffractions at soil velocity, noise. */
function makeLine(): RadarLine {
  const rnd = mulberry32(15);
  const data = new Float32Array(N_TRACES * N_SAMPLES);
  const x = new Float64Array(N_TRACES);
  const points = Array.from({ length: 8 }, () => ({ x0: rnd() * N_TRACES * SPACING, z: 0.3 + rnd() * 2.2 }));
  const add = (o: number, tNs: number, amp: number) => {
    const i0 = Math.max(0, Math.floor((tNs - 8) / DT));
    const i1 = Math.min(N_SAMPLES - 1, Math.ceil((tNs + 8) / DT));
    for (let i = i0; i <= i1; i++) data[o + i] = (data[o + i] as number) + amp * ricker(i * DT - tNs);
  };
  for (let t = 0; t < N_TRACES; t++) {
    x[t] = t * SPACING;
    const o = t * N_SAMPLES;
    add(o, TZ + SEP / C_M_PER_NS, 1);
    add(o, TZ + 14, 0.15);
    add(o, TZ + 38, -0.08);
    for (const p of points) {
      const dx = (x[t] as number) - p.x0;
      const tt = (Math.hypot(dx - SEP / 2, p.z) + Math.hypot(dx + SEP / 2, p.z)) / V;
      add(o, TZ + tt, (0.3 * p.z) / Math.hypot(dx, p.z));
    }
    for (let i = 0; i < N_SAMPLES; i++) data[o + i] = (data[o + i] as number) + 0.01 * (rnd() + rnd() + rnd() - 1.5);
  }
  return { id: 'bench', nSamples: N_SAMPLES, nTraces: N_TRACES, dtNs: DT, data, x, y: new Float64Array(N_TRACES), timeZeroNs: 0 };
}

function stats(xs: number[]): string {
  const mean = xs.reduce((s, v) => s + v, 0) / xs.length;
  const sd = Math.sqrt(xs.reduce((s, v) => s + (v - mean) ** 2, 0) / Math.max(1, xs.length - 1));
  return `min ${Math.min(...xs).toFixed(3)} s, mean ${mean.toFixed(3)} +- ${sd.toFixed(3)} s`;
}

// the line as the pipeline migrates it: the default chain up to migration
const base = defaultRecipe(F);
const line = runRecipe(makeLine(), { steps: base.steps.filter((s) => s.step !== 'migration') }, { frequencyMHz: F, separationM: SEP }).line;
const layers = [
  { topM: 0, velocityMPerNs: V },
  { topM: 1.2, velocityMPerNs: 0.085 },
];
const runs: Record<string, () => void> = {
  'kirchhoff (2 m, 60 deg)': () => kirchhoffMigrate(line, { velocityMPerNs: V, separationM: SEP, apertureM: 2, maxAngleDeg: 60 }),
  // as the recipe runs them: the aperture (2 m) as a depth-dependent dip limit
  'stolt (2 m, 60 deg)': () => stoltMigrate(line, { velocityMPerNs: V, separationM: SEP, apertureM: 2 }),
  'stolt (60 deg only)': () => stoltMigrate(line, { velocityMPerNs: V, separationM: SEP }),
  'phase-shift 1 layer (2 m)': () => phaseShiftMigrate(line, { layers: [layers[0]!], separationM: SEP, apertureM: 2 }),
  'phase-shift 2 layers (2 m)': () => phaseShiftMigrate(line, { layers, separationM: SEP, apertureM: 2 }),
  'stolt kernel (as numpy)': () => stoltKernel(line.data, N_TRACES, N_SAMPLES, DT, SPACING, line.timeZeroNs, V, { halfIntegral: true }),
};
const times: Record<string, number[]> = Object.fromEntries(Object.keys(runs).map((k) => [k, []]));
for (const f of Object.values(runs)) f(); // warm-up
for (let r = 0; r < RUNS; r++) {
  for (const [k, f] of Object.entries(runs)) {
    const t0 = performance.now();
    f();
    times[k]!.push((performance.now() - t0) / 1000);
  }
}

// numpy: the same kernel on the same data (no bistatic resampling), timed inside python, between our runs
const dir = mkdtempSync(join(tmpdir(), 'lamina-bench-migration-'));
let numpy: number[] | null = null;
try {
  writeFileSync(join(dir, 'in.f32'), Buffer.from(line.data.buffer, line.data.byteOffset, line.data.byteLength));
  const params = { method: 'stolt', nTraces: N_TRACES, nSamples: N_SAMPLES, dtNs: DT, dxM: SPACING, timeZeroNs: line.timeZeroNs, velocityMPerNs: V, halfIntegral: true, repeat: RUNS };
  writeFileSync(join(dir, 'p.json'), JSON.stringify(params));
  const py = spawnSync('/usr/bin/python3', [join(here, '..', 'packages', 'processing', 'test', 'stolt_ref.py'), join(dir, 'p.json'), join(dir, 'in.f32'), join(dir, 'out.f32')], { encoding: 'utf8' });
  if (py.status === 0) numpy = (JSON.parse(py.stdout.trim().split('\n').pop() as string) as { seconds: number[] }).seconds;
  else console.log(`numpy reference failed: ${py.stderr.trim().split('\n').pop()}`);
} finally {
  rmSync(dir, { recursive: true, force: true });
}

console.log(`one line, ${N_TRACES} traces x ${N_SAMPLES} samples at ${DT} ns, ${SPACING} m spacing, ${RUNS} runs each, 1 thread`);
const kMin = Math.min(...times['kirchhoff (2 m, 60 deg)']!);
for (const [k, xs] of Object.entries(times)) {
  const m = Math.min(...xs);
  console.log(`  ${k.padEnd(28)} ${stats(xs)}  ${(N_TRACES / m).toFixed(0).padStart(6)} traces/s  kirchhoff / this ${(kMin / m).toFixed(1)}x`);
}
if (numpy) {
  const m = Math.min(...numpy);
  const mine = Math.min(...times['stolt kernel (as numpy)']!);
  console.log(`  ${'numpy stolt kernel'.padEnd(28)} ${stats(numpy)}  ${(N_TRACES / m).toFixed(0).padStart(6)} traces/s  kirchhoff / this ${(kMin / m).toFixed(1)}x`);
  console.log(`ratio stolt kernel: lamina / numpy time ${(mine / m).toFixed(2)}`);
}
