import { LINE_WASM_BASE64 } from './line-wasm-binary';

/** The exports of wasm/line-kernels.ts (pointers are byte offsets into `memory`). */
export interface LineKernelExports {
  memory: WebAssembly.Memory;
  filtfiltLine(data: number, out: number, nTraces: number, n: number, sos: number, nSec: number, zi: number, edge: number, ext: number, z: number): void;
  transposeLine(data: number, out: number, nTraces: number, nSamples: number): void;
  windowMedians(bySample: number, nTraces: number, a: number, m: number, nSamples: number, first: boolean, spread: number, lo: number, hi: number, mid: number, side: number, bg: number, kth: number, flags: number): void;
  subtractBackground(data: number, out: number, nTraces: number, nSamples: number, bg: number, centres: number, which: number, nC: number): void;
}

/**
 * The line kernels of this thread (one module instance, its memory reused from call to call). A caller
 * lays out its arrays with `layout`, which grows the memory first, then takes views of them: views are
 * valid until the next `layout`.
 */
export class LineKernels {
  readonly k: LineKernelExports;

  constructor(mod: WebAssembly.Module) {
    this.k = new WebAssembly.Instance(mod, {}).exports as unknown as LineKernelExports;
  }

  /** Byte offsets of arrays of the given byte sizes, each 16-byte aligned, the memory grown to hold them. */
  layout<T extends number[]>(...bytes: T): { [K in keyof T]: number } {
    const at: number[] = [];
    let end = 0;
    for (const b of bytes) {
      at.push(end);
      end += Math.ceil(b / 16) * 16;
    }
    const have = this.k.memory.buffer.byteLength;
    if (end > have) this.k.memory.grow(Math.ceil((end - have) / 65536));
    return at as { [K in keyof T]: number };
  }

  f32(at: number, n: number): Float32Array {
    return new Float32Array(this.k.memory.buffer, at, n);
  }

  f64(at: number, n: number): Float64Array {
    return new Float64Array(this.k.memory.buffer, at, n);
  }

  i32(at: number, n: number): Int32Array {
    return new Int32Array(this.k.memory.buffer, at, n);
  }

  u8(at: number, n: number): Uint8Array {
    return new Uint8Array(this.k.memory.buffer, at, n);
  }
}

let kept: LineKernels | null | undefined;

/** This thread's `LineKernels`; null where WebAssembly SIMD is not available (callers run their JavaScript). */
export function lineKernels(): LineKernels | null {
  if (kept === undefined) {
    try {
      const bytes = typeof Buffer !== 'undefined' ? Buffer.from(LINE_WASM_BASE64, 'base64') : Uint8Array.from(atob(LINE_WASM_BASE64), (c) => c.charCodeAt(0));
      kept = WebAssembly.validate(bytes) ? new LineKernels(new WebAssembly.Module(bytes)) : null;
    } catch {
      kept = null;
    }
  }
  return kept;
}
