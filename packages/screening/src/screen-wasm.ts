import { ensureMemory, lazyKernels, type WasmKernels } from '@lamina/anomalies';
import type { SliceGrid } from '@lamina/slices';
import { cellCentreX, cellCentreY } from '@lamina/slices';
import { SCREEN_WASM_BASE64 } from './screen-wasm-binary';

interface Kernels extends WasmKernels {
  distanceField(seg: number, nSeg: number, pts: number, nPts: number, xs: number, width: number, ys: number, height: number, mpu: number, out: number): void;
  locusBandScores(field: number, sc: number, width: number, r0: number, r1: number, c0: number, c1: number, radius: number, bandHalf: number, vals: number): number;
  medianHigh(vals: number, n: number): number;
  locusResiduals(cells: number, n: number, step: number, pts: number, nPts: number, seg: number, nSeg: number, rhos: number, width: number, originX: number, originY: number, cellSize: number, mpu: number, radius: number, out: number): number;
  pointModel(xs: number, ys: number, rs: number, n: number, cellSize: number, res: number): void;
  lineStrips(z: number, labels: number, seen: number, queue: number, width: number, height: number, low: number, threshold: number, minCells: number, out: number, found: number): number;
}

/** The module's one instance on this thread; null where WebAssembly does not run. */
const instance = lazyKernels<Kernels>(SCREEN_WASM_BASE64);

/**
 * `distanceField` of a reflector's segments and points into `out`, in WebAssembly
 * (wasm/screen-kernels.ts); null where WebAssembly does not run. The cell centres are worked out here, as
 * `distanceFieldInJs` works them out.
 */
export function wasmDistanceField(segments: Float64Array, points: Float64Array, grid: SliceGrid, metresPerUnit: number, out: Float32Array): Float32Array | null {
  const k = instance();
  if (!k) return null;
  const { width, height } = grid;
  // blocks of rows: the module's memory stays small whatever the grid
  const rows = Math.max(1, Math.min(height, Math.floor(BLOCK_CELLS / Math.max(1, width))));
  // float64: segments, points, column x, row y; then a block's float32 field
  const seg = 0, pts = seg + 8 * segments.length, xs = pts + 8 * points.length, ys = xs + 8 * width, f = ys + 8 * height;
  ensureMemory(k, f + 4 * width * rows);
  const mem = new Float64Array(k.memory.buffer, 0, f / 8);
  mem.set(segments, seg / 8);
  mem.set(points, pts / 8);
  for (let col = 0; col < width; col++) mem[xs / 8 + col] = cellCentreX(grid, col);
  for (let row = 0; row < height; row++) mem[ys / 8 + row] = cellCentreY(grid, row);
  const block = new Float32Array(k.memory.buffer, f, width * rows);
  for (let r0 = 0; r0 < height; r0 += rows) {
    const n = Math.min(rows, height - r0);
    k.distanceField(seg, segments.length / 4, pts, points.length / 2, xs, width, ys + 8 * r0, n, metresPerUnit, f);
    out.set(n === rows ? block : block.subarray(0, n * width), r0 * width);
  }
  return out;
}

/** Cells of the field worked out per call (the module's float32 block). */
const BLOCK_CELLS = 1 << 16;


/**
 * The before-background test's locus band in a box of rows r0..r1 and columns c0..c1 (a grid `width`
 * wide): the scores `sc` of its cells whose distance `field` lies within `bandHalfM` of `radiusM` and
 * that are finite, their count and `medianHigh`, in WebAssembly (wasm/screen-kernels.ts: the same cells
 * in the same order, the same selection); null where WebAssembly does not run.
 */
export function wasmLocusBandMedian(field: Float32Array, sc: Float32Array, width: number, r0: number, r1: number, c0: number, c1: number, radiusM: number, bandHalfM: number): { count: number; median: number } | null {
  const k = instance();
  if (!k) return null;
  // the box's rows of both grids (whole rows: one copy each), one after the other, then room for the gathered scores
  const cells = (r1 - r0 + 1) * width;
  const fb = 0, sb = 4 * cells, vals = (8 * cells + 7) & ~7;
  ensureMemory(k, vals + 8 * cells);
  const f32 = new Float32Array(k.memory.buffer);
  f32.set(field.subarray(r0 * width, (r1 + 1) * width), fb / 4);
  f32.set(sc.subarray(r0 * width, (r1 + 1) * width), sb / 4);
  const count = k.locusBandScores(fb, sb, width, 0, r1 - r0, c0, c1, radiusM, bandHalfM, vals);
  return { count, median: k.medianHigh(vals, count) };
}

/**
 * `lineStrips` of along-line.ts in WebAssembly (wasm/screen-kernels.ts: the same strips in the same
 * order; `seen` is left as it was); null where WebAssembly does not run.
 */
export function wasmLineStrips(z: Float32Array, labels: Int32Array, seen: Uint8Array, width: number, height: number, low: number, threshold: number, minCells: number): { cells: Int32Array; line: number }[] | null {
  const k = instance();
  if (!k) return null;
  const n = width * height;
  // float32 scores, int32 labels, queue, cells out and strips found (three numbers each), the seen bytes
  const zp = 0, lp = 4 * n, qp = 8 * n, op = 12 * n, fp = 16 * n, sp = 28 * n;
  ensureMemory(k, sp + n);
  new Float32Array(k.memory.buffer, zp, n).set(z);
  new Int32Array(k.memory.buffer, lp, n).set(labels);
  new Uint8Array(k.memory.buffer, sp, n).set(seen);
  const count = k.lineStrips(zp, lp, sp, qp, width, height, low, threshold, minCells, op, fp);
  const i32 = new Int32Array(k.memory.buffer);
  const out: { cells: Int32Array; line: number }[] = [];
  for (let i = 0; i < count; i++) {
    const at = fp / 4 + 3 * i;
    out.push({ cells: i32.slice(op / 4 + i32[at]!, op / 4 + i32[at]! + i32[at + 1]!).sort(), line: i32[at + 2]! });
  }
  return out;
}

/**
 * `locusResidual` (locus-residual.ts) of cells[0], cells[step], ... against points of locus radius
 * `radiusM` and segments of radii `rhos`, in WebAssembly (wasm/screen-kernels.ts: the same operations,
 * the same numbers); null where WebAssembly does not run.
 */
export function wasmLocusResiduals(cells: Int32Array, step: number, points: Float64Array, segments: Float64Array, rhos: Float64Array, grid: SliceGrid, metresPerUnit: number, radiusM: number): Float64Array | null {
  const k = instance();
  if (!k) return null;
  const n = cells.length, m = Math.ceil(n / step);
  // float64: points, segments, radii, residuals; then the int32 cells
  const pts = 0, seg = pts + 8 * points.length, rp = seg + 8 * segments.length, op = rp + 8 * rhos.length, cp = op + 8 * m;
  ensureMemory(k, cp + 4 * n);
  const f64 = new Float64Array(k.memory.buffer);
  f64.set(points, pts / 8);
  f64.set(segments, seg / 8);
  f64.set(rhos, rp / 8);
  new Int32Array(k.memory.buffer, cp, n).set(cells);
  const got = k.locusResiduals(cp, n, step, pts, points.length / 2, seg, segments.length / 4, rp, grid.width, grid.originX, grid.originY, grid.cellSize, metresPerUnit, radiusM, op);
  return new Float64Array(k.memory.buffer, op, got).slice();
}

/**
 * The unsurveyed-obstruction test's point model (checks/unsurveyed.ts `pointModel`) in WebAssembly
 * (wasm/screen-kernels.ts: the same sums in the same order); null where WebAssembly does not run.
 */
export function wasmPointModel(pts: readonly { x: Float64Array; y: Float64Array; r: number }[], px: number, py: number, cellSize: number): [number, number] | null {
  const k = instance();
  if (!k) return null;
  let n = 0;
  for (const p of pts) n += p.x.length;
  const xs = 16, ys = xs + 8 * n, rs = ys + 8 * n;
  ensureMemory(k, rs + 8 * n);
  const f64 = new Float64Array(k.memory.buffer);
  let at = 0;
  for (const p of pts) {
    f64.set(p.x, xs / 8 + at);
    f64.set(p.y, ys / 8 + at);
    f64.fill(p.r, rs / 8 + at, rs / 8 + at + p.x.length);
    at += p.x.length;
  }
  f64[0] = px;
  f64[1] = py;
  k.pointModel(xs, ys, rs, n, cellSize, 0);
  return [f64[0]!, f64[1]!];
}
