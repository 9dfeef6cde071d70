// Scale of `lamina process`: peak RSS against input size, and the speed-up of 2 worker threads over 1.
// A seeded synthetic site (parallel lines, 512 samples at 0.1 ns, a direct wave, pipe-like hyperbolas
// crossing the lines, noise) is written under the temp folder with @lamina/radar-data's writer, processed
// by the CLI binary under `/usr/bin/time -v` (peak RSS of the whole process, worker threads included),
// and deleted afterwards. Figures: traces/s, MB/s of SEG-Y, peak RSS in MB and per GB of input.
// Usage: pnpm bench scale
//   LAMINA_BENCH_SCALE_GB=0.05,0.1   input sizes in GiB (comma list; default 0.01,0.03)
//   LAMINA_BENCH_SCALE_SPEEDUP=0.01  size for the threads 1 vs 2 comparison (0 skips it)
//   LAMINA_BENCH_SCALE_KEEP=1        keep the generated sites
//   LAMINA_BENCH_SCALE_BAND_MB=384   --band-memory of the runs (MiB; default: the CLI's)
//   LAMINA_BENCH_SCALE_CLUTTER=1     lines walked back keep the template's trace order, so their pipes sit
//                                    mirrored: every crossing is an anomaly of its own (a cluttered site,
//                                    about 1.4 anomalies per m2); by default the pipes run continuous
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeSegy } from '../packages/radar-data/src/index';
import { mulberry32 } from '../packages/random/src/index';

const GIB = 2 ** 30;
const NS = 512;
const DT = 0.1;
const SPACING_M = 0.05;
const LINE_M = 50;
const LINE_GAP_M = 0.5;
const TRACES = Math.round(LINE_M / SPACING_M) + 1;
const TRACE_BYTES = 240 + NS * 4;
const E0 = 500000;
const N0 = 3900000;
const sizes = (process.env.LAMINA_BENCH_SCALE_GB ?? '0.01,0.03').split(',').map(Number).filter((v) => v > 0);
const speedupGb = Number(process.env.LAMINA_BENCH_SCALE_SPEEDUP ?? 0.01);
const keep = process.env.LAMINA_BENCH_SCALE_KEEP === '1';
const clutter = process.env.LAMINA_BENCH_SCALE_CLUTTER === '1';
const bandMb = process.env.LAMINA_BENCH_SCALE_BAND_MB;

/** A radargram with its traces in reverse order (a line walked the other way). */
function reversed(data: Float32Array): Float32Array {
  const out = new Float32Array(data.length);
  for (let t = 0; t < TRACES; t++) out.set(data.subarray((TRACES - 1 - t) * NS, (TRACES - t) * NS), t * NS);
  return out;
}


// Ricker wavelet, the usual formula (1 - 2 pi^2 f^2 t^2) exp(-pi^2 f^2 t^2), f in GHz, t in ns.
const ricker = (t: number, fGHz: number): number => {
  const a = Math.PI * Math.PI * fGHz * fGHz * t * t;
  return (1 - 2 * a) * Math.exp(-a);
};

/** Template radargrams: a direct wave and point reflectors along the line (pipes crossing every line). */
function templates(count: number, seed: number): Float32Array[] {
  const rnd = mulberry32(seed);
  const v = 0.1;
  const f = 0.4;
  const pipes = Array.from({ length: Math.round(LINE_M / 6) }, (_, k) => ({ x: 3 + k * 6 + rnd() * 2, d: 0.4 + rnd() * 1.2, a: 0.3 + rnd() * 0.7 }));
  return Array.from({ length: count }, () => {
    const data = new Float32Array(TRACES * NS);
    for (let t = 0; t < TRACES; t++) {
      const x = t * SPACING_M;
      const o = t * NS;
      for (let s = 0; s < NS; s++) data[o + s] = 8000 * ricker(s * DT - 4, f) + (rnd() - 0.5) * 60;
      for (const p of pipes) {
        const dx = x - p.x;
        if (Math.abs(dx) > 3) continue;
        const tt = 4 + (2 * Math.sqrt(p.d * p.d + dx * dx)) / v;
        const s0 = Math.max(0, Math.floor((tt - 3) / DT));
        const s1 = Math.min(NS, Math.ceil((tt + 3) / DT));
        const amp = (p.a * 3000) / (1 + 2 * Math.sqrt(p.d * p.d + dx * dx));
        for (let s = s0; s < s1; s++) data[o + s] = data[o + s]! + amp * ricker(s * DT - tt, f);
      }
    }
    return data;
  });
}

/** Writes a site of about `gib` GiB of SEG-Y; returns its folder, lines, traces and bytes. */
async function makeSite(dir: string, gib: number): Promise<{ lines: number; traces: number; bytes: number }> {
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(join(dir, 'lines'), { recursive: true });
  const nLines = Math.max(2, Math.round((gib * GIB) / (3600 + TRACES * TRACE_BYTES)));
  const tpl = templates(4, 20261201);
  // Templates are along-line; a line walked back (west) has its first trace at the east end.
  const back = clutter ? tpl : tpl.map(reversed);
  const lines: { file: string }[] = [];
  let bytes = 0;
  for (let i = 0; i < nLines; i++) {
    const forward = i % 2 === 0;
    const y = N0 + i * LINE_GAP_M;
    const x = Float64Array.from({ length: TRACES }, (_, t) => E0 + (forward ? t : TRACES - 1 - t) * SPACING_M);
    const file = `lines/l${String(i + 1).padStart(5, '0')}.sgy`;
    const r = await writeSegy(join(dir, file), { nSamples: NS, dtNs: DT, traces: { data: (forward ? tpl : back)[i % tpl.length]!, x, y: new Float64Array(TRACES).fill(y) } });
    bytes += r.bytes;
    lines.push({ file });
  }
  writeFileSync(join(dir, 'site.json'), JSON.stringify({ name: `scale-${gib}`, crs: 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, lines }, null, 1));
  return { lines: nLines, traces: nLines * TRACES, bytes };
}

interface Run { wallS: number; rssMb: number; ok: boolean; stderr: string; stages: string; bands: number }

function processSite(site: string, out: string, threads: number): Run {
  rmSync(out, { recursive: true, force: true });
  const t0 = performance.now();
  const r = spawnSync('/usr/bin/time', ['-v', process.execPath, '--import', 'tsx', 'apps/cli/src/main.ts', 'process', site, '--out', out, '--threads', String(threads), '--json', ...(bandMb ? ['--band-memory', bandMb] : [])], {
    cwd: join(import.meta.dirname, '..'),
    encoding: 'utf8',
    maxBuffer: 64 * 2 ** 20,
    env: { ...process.env, LAMINA_STAGE_RSS: '1' },
  });
  const wallS = (performance.now() - t0) / 1000;
  const m = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr);
  const stages = /stage peak RSS MB: (.*)/.exec(r.stderr)?.[1] ?? '';
  let bands = NaN;
  try {
    bands = (JSON.parse(r.stdout) as { screeningBands?: number }).screeningBands ?? NaN;
  } catch {
    // not JSON: the run failed
  }
  return { wallS, rssMb: m ? Number(m[1]) / 1024 : NaN, ok: r.status === 0, stderr: r.stderr.split('\n').slice(0, 3).join(' | '), stages, bands };
}

if (!existsSync('/usr/bin/time')) {
  console.log('scale: /usr/bin/time not found (Debian package "time"); skipped');
} else {
  const root = join(tmpdir(), `lamina-scale-${process.pid}`);
  console.log(`cores ${availableParallelism()}, load ${loadavg().map((l) => l.toFixed(2)).join(' ')}; lines ${LINE_M} m of ${TRACES} traces x ${NS} samples (${TRACE_BYTES} B/trace), ${LINE_GAP_M} m apart; ${clutter ? 'cluttered (pipes mirrored on lines walked back)' : 'pipes continuous across the lines'}`);
  try {
    console.log('\npeak RSS against input (2 threads)');
    console.log('  input GiB   lines    traces   wall s  traces/s   MB/s   peak RSS MB   RSS MB per GiB');
    for (const gib of sizes) {
      const dir = join(root, `site-${gib}`);
      const tg = performance.now();
      const s = await makeSite(dir, gib);
      const genS = (performance.now() - tg) / 1000;
      const r = processSite(dir, join(root, `out-${gib}`), 2);
      const inGib = s.bytes / GIB;
      if (!r.ok) console.log(`  ${inGib.toFixed(3)}: process failed: ${r.stderr}`);
      else console.log(`  ${inGib.toFixed(3).padStart(9)} ${String(s.lines).padStart(7)} ${String(s.traces).padStart(9)} ${r.wallS.toFixed(1).padStart(8)} ${(s.traces / r.wallS).toFixed(0).padStart(9)} ${(s.bytes / 2 ** 20 / r.wallS).toFixed(2).padStart(6)} ${r.rssMb.toFixed(0).padStart(13)} ${(r.rssMb / inGib).toFixed(0).padStart(16)}   (generated in ${genS.toFixed(1)} s)`);
      if (r.ok) console.log(`            screened in ${r.bands} row band(s); peak RSS per stage, MB: ${r.stages}`);
      if (!keep) rmSync(dir, { recursive: true, force: true });
      rmSync(join(root, `out-${gib}`), { recursive: true, force: true });
    }
    if (speedupGb > 0) {
      const dir = join(root, 'site-speedup');
      const s = await makeSite(dir, speedupGb);
      // warm-up: one untimed run fills the page cache and tsx's transform cache
      processSite(dir, join(root, 'out-warm'), 2);
      const one = processSite(dir, join(root, 'out-1'), 1);
      const two = processSite(dir, join(root, 'out-2'), 2);
      console.log(`\nspeed-up on ${availableParallelism()} cores, same ${(s.bytes / GIB).toFixed(3)} GiB (${s.traces} traces, ${s.lines} lines)`);
      console.log(`  threads 1: ${one.wallS.toFixed(1)} s, ${(s.traces / one.wallS).toFixed(0)} traces/s, peak RSS ${one.rssMb.toFixed(0)} MB${one.ok ? '' : ' FAILED ' + one.stderr}`);
      console.log(`  threads 2: ${two.wallS.toFixed(1)} s, ${(s.traces / two.wallS).toFixed(0)} traces/s, peak RSS ${two.rssMb.toFixed(0)} MB${two.ok ? '' : ' FAILED ' + two.stderr}`);
      console.log(`  speed-up ${(one.wallS / two.wallS).toFixed(2)}x`);
    }
  } finally {
    if (!keep) rmSync(root, { recursive: true, force: true });
  }
}
