/** What every kernel module exports besides its functions. */
export interface WasmKernels {
  memory: WebAssembly.Memory;
}

/**
 * A kernel module given as base64 (scripts/build-wasm.mjs), compiled and instantiated on first
 * use, once per thread; the getter returns null where WebAssembly does not run (callers fall back to
 * their JavaScript).
 */
export function lazyKernels<K extends WasmKernels>(base64: string, imports: WebAssembly.Imports = {}): () => K | null {
  let kernels: K | null | undefined;
  return () => {
    if (kernels === undefined) {
      try {
        const bytes = typeof Buffer !== 'undefined' ? Buffer.from(base64, 'base64') : Uint8Array.from(atob(base64), (c) => c.charCodeAt(0));
        kernels = WebAssembly.validate(bytes) ? (new WebAssembly.Instance(new WebAssembly.Module(bytes), imports).exports as unknown as K) : null;
      } catch {
        kernels = null;
      }
    }
    return kernels;
  };
}

/** Room in a module's memory for `bytes` bytes from 0 (grown by whole 64 KiB pages; views made before are then stale). */
export function ensureMemory(k: WasmKernels, bytes: number): void {
  const have = k.memory.buffer.byteLength;
  if (bytes > have) k.memory.grow(Math.ceil((bytes - have) / 65536));
}
