import { twiddleImage } from './fft-wasm';
import { LINE_WASM_BASE64 } from './line-wasm-binary';

/** The exports of wasm/line-kernels.ts (pointers are byte offsets into `memory`). */
export interface LineKernelExports {
  memory: WebAssembly.Memory;
  filtfiltLine(data: number, out: number, nTraces: number, n: number, sos: number, nSec: number, zi: number, edge: number, ext: number, z: number): void;
  transposeLine(data: number, out: number, nTraces: number, nSamples: number): void;
  windowMedians(bySample: number, nTraces: number, a: number, m: number, nSamples: number, first: boolean, spread: number, lo: number, hi: number, mid: number, side: number, bg: number, kth: number, flags: number): void;
  subtractBackground(data: number, out: number, nTraces: number, nSamples: number, bg: number, centres: number, which: number, nC: number): void;
  fkTraces(data: number, nTraces: number, nSamples: number, nt: number, nx: number, spec: number, plan: number, a: number, b: number, c: number, power: number): void;
  fkColumns(spec: number, nTraces: number, nx: number, nw: number, lo: number, hi: number, plan: number, a: number, b: number, c: number): void;
  rotateBins(spec: number, nx: number, nw: number, m0: number, m1: number, c: number, s: number): void;
  stoltInterpolate(spec: number, nx: number, nw: number, nb: number, lo: number, hi: number, tu: number, tjac: number, tsin: number, tth: number, tskip: number, taps: number, fRe: number, fIm: number, val: number, sinT: number, thT: number): number;
  stoltAcross(val: number, sinT: number, thT: number, nx: number, nTraces: number, m0: number, m1: number, s1: number, sMax: number, th1: number, thMax: number, scale: number, plan: number, a: number, b: number, c: number, hc: number): void;
  envelopeLine(data: number, out: number, nTraces: number, nSamples: number, n: number, plan: number, a: number, b: number, c: number, d: number): void;
  resampleLine(data: number, out: number, nTraces: number, nSamples: number, src: number, tap: number, wt: number, k0: number): void;
  shiftLine(src: number, dst: number, nTraces: number, n: number, whole: number, w: number, exact: number): void;
  stoltTime(plain: number, plainFrom: number, nm: number, nt: number, nTraces: number, nSamples: number, nodes: number, nNodes: number, plan: number, full: number, b: number, c: number, acc: number, out: number): void;
}

/** Bytes of an FFT plan of size n in the kernels' memory (`LineKernels.fftPlan`): the plan, then its twiddles. */
export function fftPlanBytes(n: number): number {
  const t = twiddleImage(n);
  return 16 * Math.ceil((8 + 12 * t.radices.length) / 16) + 8 * t.image.length;
}

/**
 * The line kernels of this thread (one module instance, its memory reused from call to call). A caller
 * lays out its arrays with `layout`, which grows the memory first, then takes views of them: views are
 * valid until the next `layout`.
 */
export class LineKernels {
  readonly k: LineKernelExports;

  /** Bytes at the start of the memory kept from call to call (`keep`). */
  private kept = 0;
  /** The end of the arrays laid out last. */
  private top = 0;

  constructor(mod: WebAssembly.Module) {
    // the dip taper's cosine is JavaScript's, so that the kernels' numbers are the JavaScript path's
    this.k = new WebAssembly.Instance(mod, { Math: { cos: Math.cos } }).exports as unknown as LineKernelExports;
  }

  /**
   * A region of at least `bytes` at offset 0 that later `layout`s leave alone, for a cache kept from line
   * to line (Stolt's table). Its content survives while the requests do not grow.
   */
  keep(bytes: number): number {
    if (bytes > this.kept) this.kept = Math.ceil(bytes / 16) * 16;
    return 0;
  }

  /** Byte offsets of arrays of the given byte sizes, each 16-byte aligned after the kept region, the memory grown to hold them. */
  layout<T extends number[]>(...bytes: T): { [K in keyof T]: number } {
    this.top = this.kept;
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
    const have = this.k.memory.buffer.byteLength;
    if (end > have) this.k.memory.grow(Math.ceil((end - have) / 65536));
    this.top = end;
    return at as { [K in keyof T]: number };
  }

  /** Writes the plan of an FFT of size n for the kernels' `runPlan` at `at` (`fftPlanBytes(n)` bytes). */
  fftPlan(n: number, at: number): void {
    const t = twiddleImage(n);
    const tw = at + 16 * Math.ceil((8 + 12 * t.radices.length) / 16);
    const plan = this.i32(at, 2 + 3 * t.radices.length);
    plan[0] = n;
    plan[1] = t.radices.length;
    t.radices.forEach((p, st) => plan.set([p, tw + (t.fwd[st] as number), tw + (t.inv[st] as number)], 2 + 3 * st));
    this.f64(tw, t.image.length).set(t.image);
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
let enabled = true;

/**
 * Whether `lineKernels` hands out the kernels (default true): false makes every caller run its
 * JavaScript, as where WebAssembly SIMD does not run (the tests compare the two paths).
 */
export function useLineKernels(on: boolean): void {
  enabled = on;
}

/** This thread's `LineKernels`; null where WebAssembly SIMD is not available (callers run their JavaScript). */
export function lineKernels(): LineKernels | null {
  if (!enabled) return null;
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
