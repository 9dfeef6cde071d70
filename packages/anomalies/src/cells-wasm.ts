import { ensureMemory, lazyKernels, type WasmKernels } from './wasm-module';
import { CELLS_WASM_BASE64 } from './cells-wasm-binary';

interface Kernels extends WasmKernels {
  minCellDistance2(a: number, na: number, b: number, nb: number, edgeA: number, nea: number, edgeB: number, neb: number, width: number): number;
  mergeCells(a: number, wa: number, na: number, b: number, wb: number, nb: number, oc: number, ow: number): number;
}

/** The module's one instance on this thread; null where WebAssembly does not run. */
const instance = lazyKernels<Kernels>(CELLS_WASM_BASE64);

/**
 * `minCellDistance` (join.ts) in WebAssembly (wasm/cells-kernels.ts: the same integer arithmetic, the
 * same square root after it); null where WebAssembly does not run.
 */
export function wasmMinCellDistance(a: Int32Array, b: Int32Array, width: number, edgeA: Int32Array, edgeB: Int32Array): number | null {
  const k = instance();
  if (!k) return null;
  const pa = 0, pb = pa + 4 * a.length, pea = pb + 4 * b.length, peb = pea + 4 * edgeA.length, end = peb + 4 * edgeB.length;
  ensureMemory(k, end);
  const i32 = new Int32Array(k.memory.buffer);
  i32.set(a, pa / 4);
  i32.set(b, pb / 4);
  i32.set(edgeA, pea / 4);
  i32.set(edgeB, peb / 4);
  return Math.sqrt(k.minCellDistance2(pa, a.length, pb, b.length, pea, edgeA.length, peb, edgeB.length, width));
}


/**
 * `unionOfCells` (extract.ts) of members' cells and scores, merged in WebAssembly one member after
 * another in the same order (wasm/cells-kernels.ts `mergeCells`, the same Math.max); null where
 * WebAssembly does not run. At least two members.
 */
export function wasmUnionOfCells(members: readonly { cells: Int32Array; scores: Float32Array }[]): { cells: Int32Array; weights: Float32Array } | null {
  const k = instance();
  if (!k) return null;
  let total = 0;
  for (const m of members) total += m.cells.length;
  // two lists of the union so far (cells, float64 weights), then each member's cells and float32 scores
  const c0 = 0, w0 = 8 * total, c1 = 16 * total, w1 = 24 * total, mc = 32 * total, ms = 36 * total;
  ensureMemory(k, 40 * total);
  const i32 = new Int32Array(k.memory.buffer), f32 = new Float32Array(k.memory.buffer), f64 = new Float64Array(k.memory.buffer);
  let at = 0;
  for (const m of members) {
    i32.set(m.cells, mc / 4 + at);
    f32.set(m.scores.subarray(0, m.cells.length), ms / 4 + at);
    at += m.cells.length;
  }
  // the first member's list as the union so far
  const first = members[0]!;
  i32.copyWithin(c0 / 4, mc / 4, mc / 4 + first.cells.length);
  for (let i = 0; i < first.cells.length; i++) f64[w0 / 8 + i] = f32[ms / 4 + i]!;
  let n = first.cells.length;
  let cur = [c0, w0], next = [c1, w1];
  at = first.cells.length;
  for (let m = 1; m < members.length; m++) {
    const nb = members[m]!.cells.length;
    n = k.mergeCells(cur[0]!, cur[1]!, n, mc + 4 * at, ms + 4 * at, nb, next[0]!, next[1]!);
    at += nb;
    [cur, next] = [next, cur];
  }
  return { cells: i32.slice(cur[0]! / 4, cur[0]! / 4 + n), weights: Float32Array.from(f64.subarray(cur[1]! / 8, cur[1]! / 8 + n)) };
}
