import { ensureMemory, lazyKernels, type WasmKernels } from './wasm-module';
import { SELECT_WASM_BASE64 } from './select-wasm-binary';

interface Kernels extends WasmKernels {
  gatherValid(src: number, n: number, nodata: number, dst: number): number;
  median(a: number, n: number): number;
  quantile(a: number, n: number, q: number): number;
  absDeviations(a: number, n: number, centre: number): void;
}

/** The module's one instance on this thread; null where WebAssembly does not run. */
const instance = lazyKernels<Kernels>(SELECT_WASM_BASE64);

/**
 * The slice's values in the module's memory (float32 at 0) and room for its valid ones as float64
 * after them; the byte offset of that room and the valid count.
 */
function gathered(k: Kernels, values: Float32Array, nodata: number): { dst: number; n: number } {
  const dst = (4 * values.length + 7) & ~7;
  const bytes = dst + 8 * values.length;
  ensureMemory(k, bytes);
  new Float32Array(k.memory.buffer, 0, values.length).set(values);
  return { dst, n: k.gatherValid(0, values.length, nodata, dst) };
}

/**
 * Median and raw MAD of the values that are neither `nodata` nor NaN nor infinite, as `robustStats`
 * works them out in JavaScript (the same selections, wasm/select-kernels.ts); null where WebAssembly
 * does not run.
 */
export function validMedianMad(values: Float32Array, nodata: number): { median: number; mad: number; count: number } | null {
  const k = instance();
  if (!k) return null;
  const { dst, n } = gathered(k, values, nodata);
  const median = k.median(dst, n);
  k.absDeviations(dst, n, median);
  return { median, mad: k.median(dst, n), count: n };
}

/**
 * The quantiles q of the valid values (as `validMedianMad`), selected one after another in one array as
 * `quantileInPlace` does in turn; null where WebAssembly does not run.
 */
export function validQuantiles(values: Float32Array, nodata: number, qs: readonly number[]): { quantiles: number[]; count: number } | null {
  const k = instance();
  if (!k) return null;
  const { dst, n } = gathered(k, values, nodata);
  return { quantiles: qs.map((q) => k.quantile(dst, n, q)), count: n };
}
