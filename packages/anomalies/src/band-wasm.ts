import { ensureMemory, lazyKernels, type WasmKernels } from './wasm-module';
import { BAND_WASM_BASE64 } from './band-wasm-binary';

interface Kernels extends WasmKernels {
  prepare(left: number, col: number, row: number, n: number, width: number): void;
  fullestBand(col: number, row: number, n: number, w: number, eRow: number, eFirst: number, eLast: number, eCells: number, colCells: number, bins: number, cum: number, wide: number, res: number): void;
  takeBand(left: number, col: number, row: number, n: number, c: number, s: number, lo: number, w: number, band: number): number;
  dropBand(left: number, col: number, row: number, n: number, c: number, s: number, lo: number, w: number): number;
}

/** The module's one instance on this thread; null where WebAssembly does not run. */
const instance = lazyKernels<Kernels>(BAND_WASM_BASE64, { env: { cos: Math.cos, sin: Math.sin, hypot: Math.hypot } });

/** Byte offsets of `straightBands`' arrays in the module's memory, for n cells of a grid `width` wide reaching row `lastRow`. */
function layout(n: number, width: number, lastRow: number) {
  // one-cell bins of any direction's offsets: at most the diagonal of the cells' box, with room
  const nBins = Math.floor(Math.hypot(width, lastRow + 1)) + 4;
  let at = 0;
  const take = (bytes: number) => {
    const p = at;
    at += (bytes + 7) & ~7;
    return p;
  };
  const l = {
    col: take(8 * n), row: take(8 * n), eRow: take(8 * n), eFirst: take(8 * n), eLast: take(8 * n), res: take(32),
    left: take(4 * n), eCells: take(4 * n), band: take(4 * n), colCells: take(4 * (width + 1)),
    bins: take(16 * nBins), cum: take(4 * (nBins + 1)),
    // directions searched first (at most 720 / 16) times the bounds kept for each (8)
    wide: take(4 * 45 * 8),
    bytes: 0,
  };
  l.bytes = at;
  return l;
}

/**
 * `straightBands` (split.ts) with its searches and takings-out in WebAssembly (wasm/band-kernels.ts:
 * the same operations, so the same bands and rest); `w` the band's width in whole bins. Null where
 * WebAssembly does not run.
 */
export function wasmStraightBands(cells: Int32Array, width: number, w: number, minCells: number, maxBands: number, accept?: (band: Int32Array) => boolean): { bands: Int32Array[]; rest: Int32Array } | null {
  const k = instance();
  if (!k) return null;
  const n0 = cells.length;
  const l = layout(n0, width, n0 > 0 ? (cells[n0 - 1]! / width) | 0 : 0);
  ensureMemory(k, l.bytes);
  const i32 = () => new Int32Array(k.memory.buffer);
  i32().set(cells, l.left / 4);
  k.prepare(l.left, l.col, l.row, n0, width);
  let n = n0;
  const bands: Int32Array[] = [];
  while (bands.length < maxBands && n >= minCells) {
    k.fullestBand(l.col, l.row, n, w, l.eRow, l.eFirst, l.eLast, l.eCells, l.colCells, l.bins, l.cum, l.wide, l.res);
    const [count, c, s, lo] = new Float64Array(k.memory.buffer, l.res, 4);
    if (count! < minCells) break;
    const nb = k.takeBand(l.left, l.col, l.row, n, c!, s!, lo!, w, l.band);
    const found = i32().slice(l.band / 4, l.band / 4 + nb);
    if (accept && !accept(found)) break;
    n = k.dropBand(l.left, l.col, l.row, n, c!, s!, lo!, w);
    bands.push(found);
  }
  return { bands, rest: i32().slice(l.left / 4, l.left / 4 + n) };
}
