// A tile's cost on a corridor: peak RSS and wall time of `lamina process-tile` on one tile of a survey of
// a few long parallel lines (seeded synthetic radargrams: a direct wave, point reflectors, noise), cut in
// square tiles: by default (each piece processed with its whole line, or with the stretch of it that
// `--line-memory` allows), with whole lines whatever their size, and with `--line-context` metres of line
// around each piece. The tile is processed by the
// built CLI under `/usr/bin/time -v` (peak RSS of the whole process, worker threads included).
// Usage: pnpm bench tile-memory
//   LAMINA_BENCH_TILE_LINE_M=1000   line length, m (0.05 m trace spacing, 512 samples at 0.1 ns)
//   LAMINA_BENCH_TILE_LINES=4       parallel lines, 0.5 m apart
//   LAMINA_BENCH_TILE_SIZE=50       tile size, m (overlap 2 m)
//   LAMINA_BENCH_TILE_CONTEXT=10    --line-context of the bounded run, m
//   LAMINA_BENCH_TILE_THREADS=1     --threads of process-tile
//   LAMINA_BENCH_TILE_KEEP=1        keep the site, tiles and outputs (printed folder)
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeSegy } from '../packages/radar-data/src/index';
import { mulberry32 } from '../packages/random/src/index';

const NS = 512;
const DT = 0.1;
const SPACING_M = 0.05;
const lineM = Number(process.env.LAMINA_BENCH_TILE_LINE_M ?? 1000);
const nLines = Number(process.env.LAMINA_BENCH_TILE_LINES ?? 4);
const size = process.env.LAMINA_BENCH_TILE_SIZE ?? '50';
const context = process.env.LAMINA_BENCH_TILE_CONTEXT ?? '10';
const threads = process.env.LAMINA_BENCH_TILE_THREADS ?? '1';
const E0 = 500000;
const N0 = 3900000;
const root = join(import.meta.dirname, '..');
const cli = join(root, 'apps/cli/dist/lamina.mjs');
const env = { ...process.env, LAMINA_PROGRESS: '0', LAMINA_THREADS: threads };

// Ricker wavelet, the usual formula (1 - 2 pi^2 f^2 t^2) exp(-pi^2 f^2 t^2), f in GHz, t in ns.
const ricker = (t: number, fGHz: number): number => {
  const a = Math.PI * Math.PI * fGHz * fGHz * t * t;
  return (1 - 2 * a) * Math.exp(-a);
};

function radargram(traces: number, seed: number): Float32Array {
  const rnd = mulberry32(seed);
  const v = 0.1;
  const pipes = Array.from({ length: Math.round(lineM / 6) }, (_, k) => ({ x: 3 + k * 6 + rnd() * 2, d: 0.4 + rnd() * 1.2, a: 0.3 + rnd() * 0.7 }));
  const data = new Float32Array(traces * NS);
  for (let t = 0; t < traces; t++) {
    const x = t * SPACING_M;
    const o = t * NS;
    for (let s = 0; s < NS; s++) data[o + s] = 8000 * ricker(s * DT - 4, 0.4) + (rnd() - 0.5) * 60;
    for (const p of pipes) {
      const dx = x - p.x;
      if (Math.abs(dx) > 3) continue;
      const r = Math.sqrt(p.d * p.d + dx * dx);
      const tt = 4 + (2 * r) / v;
      const amp = (p.a * 3000) / (1 + 2 * r);
      for (let s = Math.max(0, Math.floor((tt - 3) / DT)); s < Math.min(NS, Math.ceil((tt + 3) / DT)); s++) data[o + s] = data[o + s]! + amp * ricker(s * DT - tt, 0.4);
    }
  }
  return data;
}

function timed(args: string[]): { wallS: number; rssMb: number; ok: boolean; err: string } {
  const t0 = performance.now();
  const r = spawnSync('/usr/bin/time', ['-v', process.execPath, cli, ...args], { cwd: root, env, encoding: 'utf8', maxBuffer: 1 << 26 });
  const m = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr);
  return { wallS: (performance.now() - t0) / 1000, rssMb: m ? Number(m[1]) / 1024 : NaN, ok: r.status === 0, err: r.stderr.split('\n').slice(0, 2).join(' | ') };
}

const work = join(tmpdir(), `lamina-tile-memory-${process.pid}`);
try {
  spawnSync(process.execPath, [join(root, 'apps/cli/build.mjs')], { cwd: root, stdio: 'ignore' });
  const site = join(work, 'site');
  mkdirSync(join(site, 'lines'), { recursive: true });
  const traces = Math.round(lineM / SPACING_M) + 1;
  const lines: { file: string }[] = [];
  for (let i = 0; i < nLines; i++) {
    const file = `lines/l${i + 1}.sgy`;
    const x = Float64Array.from({ length: traces }, (_, t) => E0 + t * SPACING_M);
    await writeSegy(join(site, file), { nSamples: NS, dtNs: DT, traces: { data: radargram(traces, 20261203 + i), x, y: new Float64Array(traces).fill(N0 + 1 + i * 0.5) } });
    lines.push({ file });
  }
  writeFileSync(join(site, 'site.json'), JSON.stringify({ name: 'corridor', crs: 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, lines }, null, 1));
  const bytes = lines.reduce((s, l) => s + statSync(join(site, l.file)).size, 0);
  console.log(`cores ${availableParallelism()}, load ${loadavg().map((l) => l.toFixed(2)).join(' ')}; ${nLines} lines of ${lineM} m (${traces} traces x ${NS} samples, ${(bytes / 2 ** 20).toFixed(0)} MiB of SEG-Y), tiles of ${size} m, overlap 2 m, ${threads} thread(s)`);
  const v = timed(['velocity', site, '--out', join(work, 'survey')]);
  if (!v.ok) throw new Error(`velocity failed: ${v.err}`);
  console.log('  line processed with a piece   tiles  tile traces  context traces  tile wall s  tile peak RSS MB');
  const runs: [string, string[]][] = [
    ['default (--line-memory)', ['--threads', threads]],
    ['whole line', ['--line-memory', '1e6']],
    [`${context} m each side`, ['--line-context', context]],
  ];
  for (const [label, extra] of runs) {
    const dir = join(work, `tiles-${runs.findIndex((r) => r[0] === label)}`);
    const t = timed(['tiles', site, '--size', size, '--overlap', '2', '--velocity', join(work, 'survey', 'velocity.json'), ...extra, '--out', dir]);
    if (!t.ok) throw new Error(`tiles failed: ${t.err}`);
    const m = JSON.parse(readFileSync(join(dir, 'tiles.json'), 'utf8')) as { tiles: { lines: { first: number; last: number; context?: [number, number] }[] }[] };
    // a tile in the middle of the corridor
    const index = Math.floor(m.tiles.length / 2);
    const tile = m.tiles[index]!;
    const own = tile.lines.reduce((s, l) => s + l.last - l.first + 1, 0);
    const ctxTraces = tile.lines.reduce((s, l) => s + (l.context ? l.context[1] - l.context[0] + 1 : l.last - l.first + 1), 0);
    const r = timed(['process-tile', join(dir, 'tiles.json'), '--index', String(index), '-q', '--threads', threads]);
    if (!r.ok) throw new Error(`process-tile failed: ${r.err}`);
    console.log(`  ${label.padEnd(28)} ${String(m.tiles.length).padStart(6)} ${String(own).padStart(12)} ${String(ctxTraces).padStart(15)} ${r.wallS.toFixed(1).padStart(12)} ${r.rssMb.toFixed(0).padStart(17)}`);
  }
} finally {
  if (process.env.LAMINA_BENCH_TILE_KEEP === '1') console.log(`kept ${work}`);
  else rmSync(work, { recursive: true, force: true });
}
