/**
 * A WebAssembly kernel module's instance on this thread and its memory, reused from call to call. A caller
 * lays out its arrays with `layout` (then `append`), which grows the memory first, then takes views of
 * them: views are valid until the next `layout` or `append`. `keep` reserves a region at the start that
 * layouts leave alone (a cache kept from line to line). The module's own static data, below its
 * `heapBase`, is never laid over.
 */
export class Kernels<E extends { memory: WebAssembly.Memory }> {
  readonly k: E;
  /** Where the module's static data ends (its export `heapBase`): the kept region starts there. */
  readonly base: number;
  /** Bytes kept from call to call (`keep`). */
  private kept = 0;
  /** The end of the arrays laid out last. */
  private top = 0;

  constructor(mod: WebAssembly.Module, imports: WebAssembly.Imports) {
    this.k = new WebAssembly.Instance(mod, imports).exports as unknown as E;
    const heapBase = (this.k as unknown as { heapBase?: () => number }).heapBase;
    this.base = heapBase ? Math.ceil(heapBase() / 16) * 16 : 0;
  }

  /**
   * A region of at least `bytes` at `base` that later `layout`s leave alone, for what outlives one call:
   * a cache kept from line to line (Stolt's table), a line that several calls read between others
   * (the detection's scan between fits); returns its offset. One user per module. Its content survives
   * while the requests do not grow.
   */
  keep(bytes: number): number {
    if (bytes > this.kept) this.kept = Math.ceil(bytes / 16) * 16;
    this.grow(this.base + this.kept);
    return this.base;
  }

  private grow(end: number): void {
    const have = this.k.memory.buffer.byteLength;
    if (end > have) this.k.memory.grow(Math.ceil((end - have) / 65536));
  }

  /** Byte offsets of arrays of the given byte sizes, each 16-byte aligned after the kept region, the memory grown to hold them. */
  layout<T extends number[]>(...bytes: T): { [K in keyof T]: number } {
    this.top = this.base + this.kept;
    return this.append(...bytes);
  }

  /** `layout` continued: arrays after those of the last `layout` or `append`, which keep their content. */
  append<T extends number[]>(...bytes: T): { [K in keyof T]: number } {
    const at: number[] = [];
    let end = this.top;
    for (const b of bytes) {
      at.push(end);
      end += Math.ceil(b / 16) * 16;
    }
    this.grow(end);
    this.top = end;
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

let enabled = true;

/**
 * Whether the kernel modules are handed out (default true): false makes every caller run its
 * JavaScript, as where WebAssembly SIMD does not run (the tests compare the two paths).
 */
export function useKernels(on: boolean): void {
  enabled = on;
}

/**
 * A getter of this thread's `Kernels` of a module (base64, from scripts/build-wasm.mjs), made at the first
 * call; it returns null where WebAssembly SIMD is not available or `useKernels(false)` was called.
 * Imports: JavaScript's Math functions the kernels call, so that their numbers are the JavaScript path's.
 */
export function kernelsOf<E extends { memory: WebAssembly.Memory }>(base64: string, imports: WebAssembly.Imports = {}): () => Kernels<E> | null {
  let made: Kernels<E> | null | undefined;
  return () => {
    if (!enabled) return null;
    if (made === undefined) {
      try {
        const bytes = typeof Buffer !== 'undefined' ? Buffer.from(base64, 'base64') : Uint8Array.from(atob(base64), (c) => c.charCodeAt(0));
        made = WebAssembly.validate(bytes) ? new Kernels<E>(new WebAssembly.Module(bytes), imports) : null;
      } catch {
        made = null;
      }
    }
    return made;
  };
}
