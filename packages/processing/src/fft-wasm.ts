import { FFT_WASM_BASE64 } from './fft-wasm-binary';
import type { Transform } from './fft';
import { fftStages } from './fft-plan';

interface Kernels {
  memory: WebAssembly.Memory;
  radix2(x: number, y: number, m: number, s: number, tw: number): void;
  radix3(x: number, y: number, m: number, s: number, tw: number, sg: number): void;
  radix4(x: number, y: number, m: number, s: number, tw: number, sg: number): void;
  radix4Last(x: number, y: number, s: number, sg: number): void;
  radix5(x: number, y: number, m: number, s: number, tw: number, sg: number): void;
  radix5Last(x: number, y: number, s: number, sg: number): void;
  hilbertMul(x: number, y: number, n: number): void;
  envelopePair(x: number, h: number, out: number, m: number, s: number): void;
}

let compiled: WebAssembly.Module | null | undefined;

/** The kernels' module, compiled once per thread; null where WebAssembly SIMD is not available. */
function kernelModule(): WebAssembly.Module | null {
  if (compiled === undefined) {
    try {
      const bytes = typeof Buffer !== 'undefined' ? Buffer.from(FFT_WASM_BASE64, 'base64') : Uint8Array.from(atob(FFT_WASM_BASE64), (c) => c.charCodeAt(0));
      compiled = WebAssembly.validate(bytes) ? new WebAssembly.Module(bytes) : null;
    } catch {
      compiled = null;
    }
  }
  return compiled;
}

const images = new Map<number, { radices: number[]; image: Float64Array; fwd: number[]; inv: number[] }>();

/**
 * The twiddles of `fftStages(n)` as the kernels read them: per twiddle w = (wr, wi) the vectors (wr, wr)
 * and (-wi, wi), the inverse's conjugated, each stage's forward then inverse twiddles; `fwd`, `inv` the
 * byte offsets of each stage's in `image`. Made once per size.
 */
export function twiddleImage(n: number): { radices: number[]; image: Float64Array; fwd: number[]; inv: number[] } {
  let t = images.get(n);
  if (t) return t;
  const { radices, twiddles } = fftStages(n);
  const image = new Float64Array(twiddles.reduce((sum, tw) => sum + 4 * tw.length, 0));
  const fwd: number[] = [];
  const inv: number[] = [];
  let at = 0;
  let len = n;
  for (let st = 0; st < radices.length; st++) {
    const p = radices[st] as number;
    const tw = twiddles[st] as Float64Array;
    const m = len / p;
    fwd.push(at);
    inv.push(at + 32 * m * (p - 1));
    for (let q = 0; q < m; q++) {
      for (let kk = 1; kk < p; kk++) {
        const wr = tw[2 * (q * (p - 1) + kk - 1)] as number;
        const wi = tw[2 * (q * (p - 1) + kk - 1) + 1] as number;
        image.set([wr, wr, -wi, wi], at / 8 + 4 * (q * (p - 1) + kk - 1));
        image.set([wr, wr, wi, -wi], (at + 32 * m * (p - 1)) / 8 + 4 * (q * (p - 1) + kk - 1));
      }
    }
    at += 64 * m * (p - 1);
    len = m;
  }
  t = { radices, image, fwd, inv };
  images.set(n, t);
  return t;
}

/** True where `WasmFFT` can run (WebAssembly with 128-bit SIMD). */
export function wasmFftAvailable(): boolean {
  return kernelModule() !== null;
}

/**
 * `MixedRadixFFT` (the same Stockham stages, radices 4, 2, 3, 5 in that order, and the same twiddles) with
 * its butterflies in WebAssembly, one complex number per 128-bit SIMD vector (wasm/fft-kernels.ts).
 * Each instance has its own module memory: the input, two work arrays and the twiddle tables. Agrees
 * with `MixedRadixFFT` to float rounding (test/fft.test.ts, against numpy).
 */
export class WasmFFT implements Transform {
  readonly size: number;
  private readonly k: Kernels;
  private readonly radices: number[];
  /** Byte offsets of each stage's twiddles, forward and inverse. */
  private readonly twFwd: number[];
  private readonly twInv: number[];
  private readonly bufA: number;
  private readonly bufB: number;
  /** The third work array: the stages after the first alternate between B and C, so A keeps the input. */
  private readonly bufC: number;
  /** The fourth: the Hilbert step's spectrum and envelopes (`hilbertEnvelopes`). */
  private readonly bufD: number;
  private readonly view: Float64Array;

  constructor(n: number) {
    const mod = kernelModule();
    if (!mod) throw new Error('fft: WebAssembly SIMD is not available');
    this.size = n;
    const tw = twiddleImage(n);
    this.radices = tw.radices;
    const bytes = 8 * (4 * 2 * n + tw.image.length);
    const instance = new WebAssembly.Instance(mod, {});
    this.k = instance.exports as unknown as Kernels;
    const have = this.k.memory.buffer.byteLength;
    if (bytes > have) this.k.memory.grow(Math.ceil((bytes - have) / 65536));
    this.view = new Float64Array(this.k.memory.buffer);
    this.bufA = 0;
    this.bufB = 16 * n;
    const at = 32 * n;
    this.view.set(tw.image, at / 8);
    this.twFwd = tw.fwd.map((o) => at + o);
    this.twInv = tw.inv.map((o) => at + o);
    this.bufC = at + 8 * tw.image.length;
    this.bufD = this.bufC + 16 * n;
  }

  transform(out: Float64Array, data: Float64Array): void {
    this.run(out, data, false);
  }

  inverseTransform(out: Float64Array, data: Float64Array): void {
    this.run(out, data, true);
    const s = 1 / this.size;
    for (let i = 0; i < 2 * this.size; i++) out[i] = (out[i] as number) * s;
  }

  /** `inverseTransform` without the 1/n factor. */
  inverseUnscaled(out: Float64Array, data: Float64Array): void {
    this.run(out, data, true);
  }

  realTransform(out: Float64Array, data: Float64Array): void {
    const v = this.view;
    for (let i = 0; i < this.size; i++) {
      v[2 * i] = data[i] as number;
      v[2 * i + 1] = 0;
    }
    this.stages(out, false);
  }

  /** The module's input array (2n numbers, interleaved complex): fill it, then `runInput`. */
  get input(): Float64Array {
    return this.view.subarray(0, 2 * this.size);
  }

  /**
   * The transform (the inverse without its 1/n) of what `input` holds, returned as a view of the module's
   * memory, valid until the next call; `input` is left as it was (the stages work in the other two arrays).
   */
  runInput(inverse: boolean): Float64Array {
    const x = this.stageRun(inverse);
    let v = this.results.get(x);
    if (!v) {
      v = this.view.subarray(x / 8, x / 8 + 2 * this.size);
      this.results.set(x, v);
    }
    return v;
  }

  /** Views of the work arrays a run may end in, made once (loops run thousands of transforms). */
  private readonly results = new Map<number, Float64Array>();

  private run(out: Float64Array, data: Float64Array, inverse: boolean): void {
    const n2 = 2 * this.size;
    this.view.set(data.length === n2 ? data : data.subarray(0, n2), 0);
    this.stages(out, inverse);
  }

  /** The stages on the input at `bufA`, the result copied into `out`. */
  private stages(out: Float64Array, inverse: boolean): void {
    const x = this.stageRun(inverse);
    out.set(this.view.subarray(x / 8, x / 8 + 2 * this.size));
  }

  /**
   * The Hilbert envelopes of the two real traces a, b that `input` holds as a + ib (zero-padded to the
   * size n) for the first m samples: forward transform, times -i sgn(k) (zero at 0 and n/2), unscaled
   * inverse (H(a) + i H(b)) times 1/n, sqrt(x^2 + H(x)^2); `hilbertEnvelopePair`'s steps in the same
   * order. Returns (envelope of a, of b) interleaved in its first 2m numbers, a view valid until the next
   * run; `input` is left as it was.
   */
  hilbertEnvelopes(m: number): Float64Array {
    const n = this.size;
    this.k.hilbertMul(this.stageRun(false), this.bufD, n);
    this.k.envelopePair(this.bufA, this.stageRun(true, this.bufD), this.bufD, m, 1 / n);
    let v = this.results.get(-1);
    if (!v) {
      v = this.view.subarray(this.bufD / 8, this.bufD / 8 + 2 * n);
      this.results.set(-1, v);
    }
    return v;
  }

  /** The stages on the input at `from` (left as it was); returns the byte offset of the result. */
  private stageRun(inverse: boolean, from = this.bufA): number {
    const k = this.k;
    const sg = inverse ? -1 : 1;
    const tws = inverse ? this.twInv : this.twFwd;
    let x = from;
    let y = this.bufB;
    let s = 1;
    let len = this.size;
    for (let st = 0; st < this.radices.length; st++) {
      const p = this.radices[st] as number;
      const m = len / p;
      const tw = tws[st] as number;
      if (p === 4) {
        if (m === 1) k.radix4Last(x, y, s, sg);
        else k.radix4(x, y, m, s, tw, sg);
      } else if (p === 2) k.radix2(x, y, m, s, tw);
      else if (p === 3) k.radix3(x, y, m, s, tw, sg);
      else if (m === 1) k.radix5Last(x, y, s, sg);
      else k.radix5(x, y, m, s, tw, sg);
      if (st === 0) [x, y] = [y, this.bufC];
      else [x, y] = [y, x];
      s *= p;
      len = m;
    }
    return x;
  }
}
