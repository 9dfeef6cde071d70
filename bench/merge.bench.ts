// Peak memory of `lamina merge` against the survey size: a site (LAMINA_BENCH_MERGE_SITES, comma list of
// site folders, e.g. those `LAMINA_BENCH_SCALE_KEEP=1 pnpm bench scale` keeps) is fitted once
// (`lamina velocity`, the one model every tile must share), cut by `lamina tiles --velocity`,
// every tile processed by `lamina process-tile` (two at a time, one thread each), and the tiles merged
// by the built CLI under `/usr/bin/time -v` (peak RSS of the whole process): screened again as one run
// (the default) and, side by side on the same tiles, with --tile-anomalies (the tiles' own anomalies
// joined at core edges). Figures: tiles, mosaic cells, anomalies, wall s, peak RSS MB; with
// LAMINA_BENCH_MERGE_UNTILED=1 also the untiled `lamina process --velocity` of the same site (2 threads):
// its peak, and whether its anomalies.geojson equals the merge's byte for byte.
// Usage: LAMINA_BENCH_MERGE_SITES=/tmp/site-0.25,/tmp/site-1 pnpm bench merge
//   LAMINA_BENCH_MERGE_SIZE=50 LAMINA_BENCH_MERGE_OVERLAP=5   tile size and overlap, m
//   LAMINA_BENCH_MERGE_KEEP=1                                 keep the tiles and outputs
import { spawn, spawnSync } from 'node:child_process';
import { readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { join } from 'node:path';

const root = join(import.meta.dirname, '..');
const cli = join(root, 'apps/cli/dist/lamina.mjs');
const sites = (process.env.LAMINA_BENCH_MERGE_SITES ?? '').split(',').filter(Boolean);
const size = process.env.LAMINA_BENCH_MERGE_SIZE ?? '50';
const overlap = process.env.LAMINA_BENCH_MERGE_OVERLAP ?? '5';
const env = { ...process.env, LAMINA_PROGRESS: '0', LAMINA_THREADS: '1' };

const bytesOf = (dir: string): number => readdirSync(join(dir, 'lines')).reduce((s, f) => s + statSync(join(dir, 'lines', f)).size, 0);

function timed(args: string[]): { wallS: number; rssMb: number; ok: boolean; stdout: string; stderr: string } {
  const t0 = performance.now();
  const r = spawnSync('/usr/bin/time', ['-v', process.execPath, cli, ...args], { cwd: root, env, encoding: 'utf8', maxBuffer: 1 << 26 });
  const m = /Maximum resident set size \(kbytes\): (\d+)/.exec(r.stderr);
  return { wallS: (performance.now() - t0) / 1000, rssMb: m ? Number(m[1]) / 1024 : NaN, ok: r.status === 0, stdout: r.stdout, stderr: r.stderr.split('\n').slice(0, 3).join(' | ') };
}

/** Every tile of tiles.json processed, `jobs` at a time. */
async function processTiles(tilesDir: string, n: number, jobs: number): Promise<number> {
  const t0 = performance.now();
  let next = 0;
  const worker = async (): Promise<void> => {
    while (next < n) {
      const i = next++;
      await new Promise<void>((ok, fail) => {
        const p = spawn(process.execPath, [cli, 'process-tile', join(tilesDir, 'tiles.json'), '--index', String(i), '-q'], { cwd: root, env, stdio: 'ignore' });
        p.on('exit', (code) => (code === 0 ? ok() : fail(new Error(`tile ${i} failed (${code})`))));
      });
    }
  };
  await Promise.all(Array.from({ length: jobs }, worker));
  return (performance.now() - t0) / 1000;
}

if (sites.length === 0) console.log('merge: give LAMINA_BENCH_MERGE_SITES (site folders; `LAMINA_BENCH_SCALE_KEEP=1 pnpm bench scale` makes some)');
spawnSync(process.execPath, [join(root, 'apps/cli/build.mjs')], { cwd: root, stdio: 'ignore' });
console.log(`cores ${availableParallelism()}, load ${loadavg().map((l) => l.toFixed(2)).join(' ')}; tiles of ${size} m, overlap ${overlap} m`);
console.log('  input GiB  tiles  tiles s  mosaic cells  anomalies  merge s  merge peak RSS MB  --tile-anomalies: anomalies  s  peak RSS MB  untiled process peak RSS MB  same anomalies as untiled');
for (const site of sites) {
  const work = `${site}-merge-bench`;
  rmSync(work, { recursive: true, force: true });
  const tilesDir = join(work, 'tiles');
  for (const args of [
    ['velocity', site, '--out', join(work, 'survey')],
    ['tiles', site, '--size', size, '--overlap', overlap, '--velocity', join(work, 'survey', 'velocity.json'), '--out', tilesDir],
  ]) {
    const r = spawnSync(process.execPath, [cli, ...args], { cwd: root, env: { ...env, LAMINA_THREADS: '2' }, encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`lamina ${args[0]} failed: ${r.stderr}`);
  }
  const n = (JSON.parse(readFileSync(join(tilesDir, 'tiles.json'), 'utf8')) as { tiles: unknown[] }).tiles.length;
  const tilesS = await processTiles(tilesDir, n, 2);
  const merge = timed(['merge', tilesDir, '--out', join(work, 'merged'), '-q']);
  const slices = JSON.parse(readFileSync(join(work, 'merged', 'slices.json'), 'utf8')) as { width: number; height: number };
  const anomalies = /(\d+) anomalies/.exec(merge.stdout)?.[1] ?? '?';
  const pieces = timed(['merge', tilesDir, '--out', join(work, 'merged-pieces'), '--tile-anomalies', '-q']);
  const pieceAnomalies = /(\d+) anomalies/.exec(pieces.stdout)?.[1] ?? '?';
  const untiled = process.env.LAMINA_BENCH_MERGE_UNTILED === '1' ? timed(['process', site, '--velocity', join(work, 'survey', 'velocity.json'), '--out', join(work, 'untiled'), '--threads', '2', '-q']) : { rssMb: NaN, ok: false };
  const same = untiled.ok ? (readFileSync(join(work, 'untiled', 'anomalies.geojson'), 'utf8') === readFileSync(join(work, 'merged', 'anomalies.geojson'), 'utf8') ? 'yes' : 'NO') : '-';
  const gib = bytesOf(site) / 2 ** 30;
  console.log(`  ${gib.toFixed(3).padStart(9)} ${String(n).padStart(6)} ${tilesS.toFixed(0).padStart(8)} ${String(slices.width * slices.height).padStart(13)} ${anomalies.padStart(10)} ${merge.wallS.toFixed(1).padStart(8)} ${merge.rssMb.toFixed(0).padStart(18)} ${pieceAnomalies.padStart(28)} ${pieces.wallS.toFixed(1).padStart(2)} ${pieces.rssMb.toFixed(0).padStart(12)} ${untiled.rssMb.toFixed(0).padStart(28)} ${same.padStart(26)}${merge.ok ? '' : ` MERGE FAILED ${merge.stderr}`}${pieces.ok ? '' : ` --tile-anomalies FAILED ${pieces.stderr}`}`);
  if (process.env.LAMINA_BENCH_MERGE_KEEP !== '1') rmSync(work, { recursive: true, force: true });
}
