import { CELLS_WASM_BASE64 } from './cells-wasm-binary';

interface Kernels {
  memory: WebAssembly.Memory;
  minCellDistance2(a: number, na: number, b: number, nb: number, edgeA: number, nea: number, edgeB: number, neb: number, width: number): number;
}

let kernels: Kernels | null | undefined;

/** The module's one instance on this thread (its memory grown as needed); null where WebAssembly does not run. */
function instance(): Kernels | null {
  if (kernels === undefined) {
    try {
      const bytes = typeof Buffer !== 'undefined' ? Buffer.from(CELLS_WASM_BASE64, 'base64') : Uint8Array.from(atob(CELLS_WASM_BASE64), (c) => c.charCodeAt(0));
      kernels = WebAssembly.validate(bytes) ? (new WebAssembly.Instance(new WebAssembly.Module(bytes), {}).exports as unknown as Kernels) : null;
    } catch {
      kernels = null;
    }
  }
  return kernels;
}

/**
 * `minCellDistance` (join.ts) in WebAssembly (wasm/cells-kernels.ts: the same integer arithmetic, the
 * same square root after it); null where WebAssembly does not run.
 */
export function wasmMinCellDistance(a: Int32Array, b: Int32Array, width: number, edgeA: Int32Array, edgeB: Int32Array): number | null {
  const k = instance();
  if (!k) return null;
  const pa = 0, pb = pa + 4 * a.length, pea = pb + 4 * b.length, peb = pea + 4 * edgeA.length, end = peb + 4 * edgeB.length;
  const have = k.memory.buffer.byteLength;
  if (end > have) k.memory.grow(Math.ceil((end - have) / 65536));
  const i32 = new Int32Array(k.memory.buffer);
  i32.set(a, pa / 4);
  i32.set(b, pb / 4);
  i32.set(edgeA, pea / 4);
  i32.set(edgeB, peb / 4);
  return Math.sqrt(k.minCellDistance2(pa, a.length, pb, b.length, pea, edgeA.length, peb, edgeB.length, width));
}
