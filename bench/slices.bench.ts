// Depth-slice gridding: our kNN IDW (one neighbour search per cell, weights reused for every slice)
// side by side with GDAL's `gdal_grid -a invdistnn` (Debian gdal-bin) on the same points and parameters.
// Last, peak memory against the number of lines on one grid (bench/slices-memory.ts, child processes).
// A synthetic site of our own: 250 parallel lines 0.5 m apart, 4000 traces each 1/32 m apart (1 million
// positions), 40 slices, a 1000 x 1000 grid of 0.125 m cells. Seeded; prints figures, asserts nothing.
//   pnpm bench slices            (SLICES_BENCH_SMALL=1 for a 10x smaller quick run)
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync, createWriteStream } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { once } from 'node:events';
import { constantModel } from '../packages/velocity/src';
import { sliceWindows, SliceBuilder, writeSlices, type LineInput, type SliceGrid } from '../packages/slices/src';
import { buildIndex, idwGrid, searchFrame } from '../packages/slices/src/idw';
import { idwGridParallel } from '../packages/slices/src/idw-parallel';
import { availableParallelism } from 'node:os';
import { mulberry32 } from '../packages/random/src/index';

const small = process.env.SLICES_BENCH_SMALL === '1';
const N_LINES = small ? 80 : 250;
const N_TRACES = small ? 1250 : 4000;
const LINE_SPACING = 0.5;
const TRACE_STEP = 1 / 32;
const N_SLICES = 40;
const NS = 256;
const DT = 0.2;
const V = 0.1;
const CELL = 0.125;
const RADIUS = 0.5;
const MAX_POINTS = 12;


/** One synthetic processed line at a time (envelope with a few reflectors over noise): the stream. */
function* lines(): Generator<LineInput> {
  const r = mulberry32(1234);
  for (let j = 0; j < N_LINES; j++) {
    const x = new Float64Array(N_TRACES);
    const y = new Float64Array(N_TRACES);
    const data = new Float32Array(N_TRACES * NS);
    for (let t = 0; t < N_TRACES; t++) {
      x[t] = t * TRACE_STEP + 0.003 * (r() - 0.5);
      y[t] = j * LINE_SPACING + 0.02 * (r() - 0.5);
      const base = t * NS;
      for (let s = 0; s < NS; s++) data[base + s] = 0.05 * r();
      const pipe = Math.abs(x[t]! - 0.3 * y[t]! - 20) < 0.4 ? 1 : 0;
      const s0 = 40 + ((t * 7 + j * 13) % 150);
      for (let s = s0; s < Math.min(NS, s0 + 8); s++) data[base + s] = data[base + s]! + 0.3 + pipe;
    }
    yield { id: `L${j}`, nTraces: N_TRACES, nSamples: NS, dtNs: DT, timeZeroNs: 2, data, x, y };
  }
}

function stats(xs: number[]) {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  const std = Math.sqrt(xs.reduce((a, b) => a + (b - mean) ** 2, 0) / xs.length);
  return { min: Math.min(...xs), mean, std };
}

const fmt = (s: number) => s.toFixed(3);
const mb = (b: number) => `${(b / 1048576).toFixed(0)} MB`;
let peakRss = 0;
const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 20);

// 1. Stream lines into the builder: per-trace slice values only.
const windows = sliceWindows(0, 1.8, { thicknessM: 0.045 }).slice(0, N_SLICES);
const t0 = performance.now();
const builder = new SliceBuilder({ windows, model: constantModel(V), separationM: 0.1 });
let tAdd = 0;
for (const l of lines()) {
  const a = performance.now();
  builder.add(l);
  tAdd += (performance.now() - a) / 1000;
}
const tStream = (performance.now() - t0) / 1000;
const { coords, values, lineStarts } = builder.points();
const n = coords.length / 2;
console.log(`site: ${N_LINES} lines x ${N_TRACES} traces = ${n} positions, ${windows.length} slices, ${NS} samples/trace`);
console.log(`stream: ${fmt(tStream)} s incl. synthesis; builder.add (depths + slice values): ${fmt(tAdd)} s (${Math.round(n / tAdd)} traces/s); spilled to disk ${mb(coords.byteLength + values.byteLength)} (read back into memory here only for the gdal_grid comparison)`);

// 2. Our gridding: same isotropic parameters as gdal_grid, all slices in one pass.
const width = Math.round((N_TRACES * TRACE_STEP) / CELL);
const height = Math.round((N_LINES * LINE_SPACING) / CELL);
const grid: SliceGrid = { crs: 'EPSG:32617', originX: 0, originY: height * CELL, cellSize: CELL, width, height, nodata: -9999 };
const idw = { radius: RADIUS, maxPoints: MAX_POINTS, power: 2 };
// Warm-up on a strip of the grid.
idwGrid(coords, values, windows.length, { ...grid, height: Math.max(1, Math.round(height / 20)) }, idw);
const runs: number[] = [];
let ours: Float32Array[] = [];
for (let i = 0; i < 3; i++) {
  const a = performance.now();
  const index = buildIndex(coords, searchFrame(idw));
  ours = idwGrid(coords, values, windows.length, grid, idw, index);
  runs.push((performance.now() - a) / 1000);
}
const s = stats(runs);
console.log(`ours, ${width} x ${height} grid, ${windows.length} slices, 1 thread: min ${fmt(s.min)} s, mean ${fmt(s.mean)} +- ${fmt(s.std)} s`);
console.log(`  per slice: ${fmt(s.min / windows.length)} s; ${Math.round((width * height * windows.length) / s.min)} cell-slices/s`);
const threads = availableParallelism();
const p0 = performance.now();
const par = await idwGridParallel(coords, values, windows.length, grid, idw, threads);
const tPar = (performance.now() - p0) / 1000;
console.log(`ours on ${threads} worker threads: ${fmt(tPar)} s for all slices (${fmt(tPar / windows.length)} s per slice)`);
void par;
const aniso = performance.now();
idwGrid(coords, values, windows.length, grid, { radius: RADIUS / 2, radiusAcross: RADIUS, directionDeg: 0, maxPoints: MAX_POINTS });
console.log(`ours, default anisotropic search (0.25 m along x 0.5 m across): ${fmt((performance.now() - aniso) / 1000)} s for all slices`);

// 3. gdal_grid on slice 0 with the same points and parameters.
const dir = mkdtempSync(join(tmpdir(), 'lamina-bench-'));
const csv = createWriteStream(join(dir, 'pts.csv'));
csv.write('x,y,z\n');
for (let i = 0; i < n; i++) {
  if (!csv.write(`${coords[2 * i]!.toPrecision(17)},${coords[2 * i + 1]!.toPrecision(17)},${values[i * windows.length]!.toPrecision(9)}\n`)) await once(csv, 'drain');
}
csv.end();
await once(csv, 'finish');
writeFileSync(
  join(dir, 'pts.vrt'),
  `<OGRVRTDataSource><OGRVRTLayer name="pts"><SrcDataSource>${join(dir, 'pts.csv')}</SrcDataSource><SrcLayer>pts</SrcLayer>` +
    '<GeometryType>wkbPoint</GeometryType><GeometryField encoding="PointFromColumns" x="x" y="y"/></OGRVRTLayer></OGRVRTDataSource>',
);
const gdalThreads = process.env.GDAL_NUM_THREADS ?? 'ALL_CPUS';
const g0 = performance.now();
execFileSync('gdal_grid', ['-q', '-a', `invdistnn:power=2:radius=${RADIUS}:max_points=${MAX_POINTS}:nodata=-9999`,
  '-txe', '0', String(width * CELL), '-tye', String(height * CELL), '0', '-outsize', String(width), String(height),
  '-ot', 'Float32', '-zfield', 'z', '-l', 'pts', join(dir, 'pts.vrt'), join(dir, 'g.tif')],
  { env: { ...process.env, GDAL_NUM_THREADS: gdalThreads }, stdio: 'inherit' });
const tGdal = (performance.now() - g0) / 1000;
console.log(`gdal_grid -a invdistnn (GDAL_NUM_THREADS=${gdalThreads}), 1 slice incl. reading ${n} points: ${fmt(tGdal)} s`);
console.log(`RATIO per slice: gdal_grid / ours = ${(tGdal / (s.min / windows.length)).toFixed(0)}x (1 thread), ` +
  `${(tGdal / (tPar / windows.length)).toFixed(0)}x (${threads} threads); all ${windows.length} slices by us vs 1 by gdal_grid: ${(tGdal / s.min).toFixed(1)}x`);

// Agreement on slice 0, cell by cell (tolerance as in the tests: 1e-6 relative, Float32 both sides here).
execFileSync('/usr/bin/python3', ['-c', `from osgeo import gdal; ds=gdal.Open('${join(dir, 'g.tif')}'); ds.GetRasterBand(1).ReadAsArray().astype('<f4').tofile('${join(dir, 'g.f32')}')`]);
const raw = readFileSync(join(dir, 'g.f32'));
const ref = new Float32Array(raw.buffer.slice(raw.byteOffset, raw.byteOffset + raw.byteLength));
let agree = 0;
for (let i = 0; i < ref.length; i++) {
  const a = ours[0]![i]!;
  const b = ref[i]!;
  if (a === b || Math.abs(a - b) <= 1e-5 * Math.max(1e-3, Math.abs(b))) agree++;
}
console.log(`agreement with gdal_grid on slice 0: ${agree} of ${ref.length} cells (${((100 * agree) / ref.length).toFixed(3)} %)`);

// 4. Writing slices.tif + slices.json.
const w0 = performance.now();
const load = (await import('node:os')).loadavg()[0]!;
const json = await writeSlices({ grid, slices: windows.map((w, k) => ({ index: w.index, topM: w.topM, bottomM: w.bottomM, values: ours[k]! })) }, dir);
console.log(`writeSlices (${json.slices.length} bands, COG + stats): ${fmt((performance.now() - w0) / 1000)} s, ${mb(readFileSync(join(dir, 'slices.tif')).byteLength)}`);

// 5. Sample-site scale: ~40 lines x 400 traces, 30 slices, ~300 x 300 cells, default (anisotropic) gridding.
{
  const b = new SliceBuilder({ windows: windows.slice(0, 30), model: constantModel(V), separationM: 0.1 });
  let k = 0;
  for (const l of lines()) {
    if (k++ >= 40) break;
    const m = 400;
    const x = Float64Array.from({ length: m }, (_, t) => l.x[t]! * 2.4);
    const y = Float64Array.from({ length: m }, (_, t) => l.y[t]!);
    b.add({ ...l, nTraces: m, data: l.data.subarray(0, m * NS), x, y });
  }
  const a = performance.now();
  const st = b.grid({ crs: 'EPSG:32617' });
  console.log(`sample-site scale (grid(), 1 thread, incl. survey geometry): ${b.traceCount} traces, ${st.slices.length} slices, ${st.grid.width} x ${st.grid.height} cells: ${fmt((performance.now() - a) / 1000)} s`);
}

// 6. Memory against the number of lines, same grid: each size in its own process (peak RSS by getrusage).
if (!small) {
  console.log('memory against the number of lines (same 1000 x 1000 x 40 grid over 125 m x 125 m; a child process each):');
  console.log('  lines  positions  row bands  stream s  grid s  peak RSS MiB  (output grid MiB)');
  for (const nl of [125, 250, 500]) {
    const out = execFileSync(process.execPath, ['--import', 'tsx', join(import.meta.dirname, 'slices-memory.ts'), String(nl)], { encoding: 'utf8', cwd: join(import.meta.dirname, '..') });
    const m = JSON.parse(out.trim().split('\n').pop()!) as { lines: number; positions: number; rowBands: number; streamS: number; gridS: number; peakRssMiB: number; gridMiB: number };
    console.log(`  ${String(m.lines).padStart(5)} ${String(m.positions).padStart(10)} ${String(m.rowBands).padStart(10)} ${m.streamS.toFixed(1).padStart(9)} ${m.gridS.toFixed(1).padStart(7)} ${m.peakRssMiB.toFixed(0).padStart(13)}  (${m.gridMiB.toFixed(0)})`);
  }
}

clearInterval(sampler);
console.log(`load average (1 min) during the run: ${load.toFixed(1)} on ${availableParallelism()} cores`);
console.log(`peak memory: rss ${mb(peakRss)} (sampled), maxRSS ${mb(process.resourceUsage().maxRSS * 1024)} (getrusage, includes the bench's own arrays)`);
rmSync(dir, { recursive: true, force: true });
void lineStarts;
