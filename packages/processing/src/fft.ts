import FFT from 'fft.js';
import { WasmFFT, wasmFftAvailable } from './fft-wasm';
import { fftStages } from './fft-plan';

/** Smallest power of two >= n (and >= 2, fft.js's minimum size). */
export function nextPow2(n: number): number {
  let p = 2;
  while (p < n) p *= 2;
  return p;
}

/**
 * Smallest n' >= n (and >= 2) with no prime factor above 5. The padded transforms of the f-k migrations
 * take it instead of the next power of two: 1280 instead of 2048 for a record of 640 samples padded twice.
 */
export function nextFastSize(n: number): number {
  let best = nextPow2(n);
  for (let p5 = 1; p5 < best; p5 *= 5) {
    for (let p35 = p5; p35 < best; p35 *= 3) {
      let m = p35;
      while (m < n) m *= 2;
      if (m >= 2 && m < best) best = m;
    }
  }
  return best;
}

/** What the transforms here offer (fft.js's interface): interleaved complex arrays of 2n numbers. */
export interface Transform {
  readonly size: number;
  /** Forward DFT, e^{-i 2 pi k m / n}. */
  transform(out: Float64Array, data: Float64Array): void;
  /** Inverse DFT with the 1/n factor. */
  inverseTransform(out: Float64Array, data: Float64Array): void;
  /** Forward DFT of n real numbers; bins 0..n/2 of `out` are set (others may be). */
  realTransform(out: Float64Array, data: Float64Array): void;
}

/**
 * The inverse DFT of `f` into `out` without the 1/n factor, for callers that fold it into a weight they
 * apply anyway (`MixedRadixFFT` skips a pass over the result; other transforms are rescaled).
 */
export function inverseUnscaled(f: Transform, out: Float64Array, data: Float64Array): void {
  if (f instanceof MixedRadixFFT || f instanceof WasmFFT) {
    f.inverseUnscaled(out, data);
    return;
  }
  f.inverseTransform(out, data);
  const n = f.size;
  for (let i = 0; i < 2 * n; i++) out[i] = (out[i] as number) * n;
}

/** A transform that runs on its own input array (`stagedTransform`). */
export interface Staged {
  /** The input, 2n numbers (interleaved complex); a run leaves it as it was. */
  readonly input: Float64Array;
  /** The forward transform, or the inverse without its 1/n, of `input`: an array valid until the next run. */
  run(inverse: boolean): Float64Array;
}

/**
 * `f` run on an input array of its own: for `WasmFFT` the module's memory itself (no copy in or out),
 * for the others an array and the result copied out as usual. For loops of many transforms of one size.
 */
export function stagedTransform(f: Transform): Staged {
  if (f instanceof WasmFFT) return { input: f.input, run: (inverse) => f.runInput(inverse) };
  const input = new Float64Array(2 * f.size);
  const out = new Float64Array(2 * f.size);
  return {
    input,
    run: (inverse) => {
      if (inverse) inverseUnscaled(f, out, input);
      else f.transform(out, input);
      return out;
    },
  };
}

/**
 * Complex FFT of a size with prime factors 2, 3 and 5 (Stockham autosort: each stage reads one array
 * and writes the other in order, no bit reversal), radix 4 where it can. For sizes that are not powers of
 * two, where fft.js is used.
 */
export class MixedRadixFFT implements Transform {
  readonly size: number;
  private readonly radices: number[];
  /** Per stage: twiddles w^(k q) for q < m, k = 1..p-1, interleaved (`fftStages`). */
  private readonly twiddles: Float64Array[];
  /** The same, conjugated (the inverse's). */
  private readonly twiddlesConj: Float64Array[];
  private readonly work: Float64Array;
  private readonly work2: Float64Array;

  constructor(n: number) {
    this.size = n;
    const { radices, twiddles } = fftStages(n);
    this.radices = radices;
    this.twiddles = twiddles;
    this.twiddlesConj = twiddles.map((tw) => tw.map((v, i) => (i & 1 ? -v : v)));
    this.work = new Float64Array(2 * n);
    this.work2 = new Float64Array(2 * n);
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
    const z = this.work2;
    for (let i = 0; i < this.size; i++) {
      z[2 * i] = data[i] as number;
      z[2 * i + 1] = 0;
    }
    this.run(out, z, false);
  }

  /**
   * Stage with radix p on length len = p m at stride s: y[q + s (p j + k)] = w^(j k) sum_r x[q + s (j + r m)]
   * e^{-+ i 2 pi r k / p}, w = e^{-+ i 2 pi / len}; then the next stage on m at stride s p.
   */
  private run(out: Float64Array, data: Float64Array, inverse: boolean): void {
    const n = this.size;
    let x: Float64Array = data;
    // the last stage writes into `out`; stages alternate between the two work arrays before it
    const stages = this.radices.length;
    let s = 1;
    let len = n;
    for (let st = 0; st < stages; st++) {
      const p = this.radices[st] as number;
      const m = len / p;
      const y = st === stages - 1 ? out : x === this.work ? this.work2 : this.work;
      const tw = (inverse ? this.twiddlesConj[st] : this.twiddles[st]) as Float64Array;
      const sg = inverse ? -1 : 1;
      if (p === 4) {
        if (m === 1) radix4Last(x, y, s, sg);
        else radix4(x, y, m, s, tw, sg);
      } else if (p === 2) radix2(x, y, m, s, tw);
      else if (p === 3) radix3(x, y, m, s, tw, sg);
      else radix5(x, y, m, s, tw, sg);
      x = y;
      s *= p;
      len = m;
    }
  }
}

// In the butterflies `sg` is 1 forward, -1 inverse: it conjugates the DFT kernel; `tw` is the stage's
// twiddle table, already conjugated for the inverse.

function radix2(x: Float64Array, y: Float64Array, m: number, s: number, tw: Float64Array): void {
  for (let j = 0; j < m; j++) {
    const wr = tw[2 * j] as number;
    const wi = tw[2 * j + 1] as number;
    for (let q = 0; q < s; q++) {
      const i0 = 2 * (q + s * j);
      const i1 = i0 + 2 * s * m;
      const ar = x[i0] as number, ai = x[i0 + 1] as number;
      const br = x[i1] as number, bi = x[i1 + 1] as number;
      const o = 2 * (q + s * 2 * j);
      y[o] = ar + br;
      y[o + 1] = ai + bi;
      const dr = ar - br, di = ai - bi;
      y[o + 2 * s] = dr * wr - di * wi;
      y[o + 2 * s + 1] = dr * wi + di * wr;
    }
  }
}

function radix4(x: Float64Array, y: Float64Array, m: number, s: number, tw: Float64Array, sg: number): void {
  const sm = 2 * s * m;
  for (let j = 0; j < m; j++) {
    const t = 6 * j;
    const w1r = tw[t] as number, w1i = tw[t + 1] as number;
    const w2r = tw[t + 2] as number, w2i = tw[t + 3] as number;
    const w3r = tw[t + 4] as number, w3i = tw[t + 5] as number;
    for (let q = 0; q < s; q++) {
      const i0 = 2 * (q + s * j);
      const ar = x[i0] as number, ai = x[i0 + 1] as number;
      const br = x[i0 + sm] as number, bi = x[i0 + sm + 1] as number;
      const cr = x[i0 + 2 * sm] as number, ci = x[i0 + 2 * sm + 1] as number;
      const dr = x[i0 + 3 * sm] as number, di = x[i0 + 3 * sm + 1] as number;
      const t0r = ar + cr, t0i = ai + ci;
      const t1r = ar - cr, t1i = ai - ci;
      const t2r = br + dr, t2i = bi + di;
      // -i sg (b - d)
      const t3r = sg * (bi - di), t3i = -sg * (br - dr);
      const o = 2 * (q + s * 4 * j);
      const os = 2 * s;
      y[o] = t0r + t2r;
      y[o + 1] = t0i + t2i;
      const y1r = t1r + t3r, y1i = t1i + t3i;
      y[o + os] = y1r * w1r - y1i * w1i;
      y[o + os + 1] = y1r * w1i + y1i * w1r;
      const y2r = t0r - t2r, y2i = t0i - t2i;
      y[o + 2 * os] = y2r * w2r - y2i * w2i;
      y[o + 2 * os + 1] = y2r * w2i + y2i * w2r;
      const y3r = t1r - t3r, y3i = t1i - t3i;
      y[o + 3 * os] = y3r * w3r - y3i * w3i;
      y[o + 3 * os + 1] = y3r * w3i + y3i * w3r;
    }
  }
}

/**
 * `radix4` for m = 1 (the last stage when the size is a multiple of 4 with no other factor left): its
 * twiddles are all w^0 = 1, so the products are skipped (the same numbers for finite data).
 */
function radix4Last(x: Float64Array, y: Float64Array, s: number, sg: number): void {
  const sm = 2 * s;
  for (let q = 0; q < s; q++) {
    const i0 = 2 * q;
    const ar = x[i0] as number, ai = x[i0 + 1] as number;
    const br = x[i0 + sm] as number, bi = x[i0 + sm + 1] as number;
    const cr = x[i0 + 2 * sm] as number, ci = x[i0 + 2 * sm + 1] as number;
    const dr = x[i0 + 3 * sm] as number, di = x[i0 + 3 * sm + 1] as number;
    const t0r = ar + cr, t0i = ai + ci;
    const t1r = ar - cr, t1i = ai - ci;
    const t2r = br + dr, t2i = bi + di;
    const t3r = sg * (bi - di), t3i = -sg * (br - dr);
    y[i0] = t0r + t2r;
    y[i0 + 1] = t0i + t2i;
    y[i0 + sm] = t1r + t3r;
    y[i0 + sm + 1] = t1i + t3i;
    y[i0 + 2 * sm] = t0r - t2r;
    y[i0 + 2 * sm + 1] = t0i - t2i;
    y[i0 + 3 * sm] = t1r - t3r;
    y[i0 + 3 * sm + 1] = t1i - t3i;
  }
}

const S3 = Math.sqrt(3) / 2;

function radix3(x: Float64Array, y: Float64Array, m: number, s: number, tw: Float64Array, sg: number): void {
  const sm = 2 * s * m;
  for (let j = 0; j < m; j++) {
    const t = 4 * j;
    const w1r = tw[t] as number, w1i = tw[t + 1] as number;
    const w2r = tw[t + 2] as number, w2i = tw[t + 3] as number;
    for (let q = 0; q < s; q++) {
      const i0 = 2 * (q + s * j);
      const ar = x[i0] as number, ai = x[i0 + 1] as number;
      const br = x[i0 + sm] as number, bi = x[i0 + sm + 1] as number;
      const cr = x[i0 + 2 * sm] as number, ci = x[i0 + 2 * sm + 1] as number;
      const sr = br + cr, si = bi + ci;
      const mr = ar - 0.5 * sr, mi = ai - 0.5 * si;
      // -i sg sqrt(3)/2 (b - c)
      const dr = sg * S3 * (bi - ci), di = -sg * S3 * (br - cr);
      const o = 2 * (q + s * 3 * j);
      const os = 2 * s;
      y[o] = ar + sr;
      y[o + 1] = ai + si;
      const y1r = mr + dr, y1i = mi + di;
      y[o + os] = y1r * w1r - y1i * w1i;
      y[o + os + 1] = y1r * w1i + y1i * w1r;
      const y2r = mr - dr, y2i = mi - di;
      y[o + 2 * os] = y2r * w2r - y2i * w2i;
      y[o + 2 * os + 1] = y2r * w2i + y2i * w2r;
    }
  }
}

const C1 = Math.cos((2 * Math.PI) / 5);
const C2 = Math.cos((4 * Math.PI) / 5);
const S1 = Math.sin((2 * Math.PI) / 5);
const S2 = Math.sin((4 * Math.PI) / 5);

function radix5(x: Float64Array, y: Float64Array, m: number, s: number, tw: Float64Array, sg: number): void {
  const sm = 2 * s * m;
  const os = 2 * s;
  for (let j = 0; j < m; j++) {
    const t = 8 * j;
    for (let q = 0; q < s; q++) {
      const i0 = 2 * (q + s * j);
      const ar = x[i0] as number, ai = x[i0 + 1] as number;
      const br = x[i0 + sm] as number, bi = x[i0 + sm + 1] as number;
      const cr = x[i0 + 2 * sm] as number, ci = x[i0 + 2 * sm + 1] as number;
      const dr = x[i0 + 3 * sm] as number, di = x[i0 + 3 * sm + 1] as number;
      const er = x[i0 + 4 * sm] as number, ei = x[i0 + 4 * sm + 1] as number;
      // pairs k and 5 - k: cosine parts from b + e, c + d; sine parts from b - e, c - d
      const p1r = br + er, p1i = bi + ei, m1r = br - er, m1i = bi - ei;
      const p2r = cr + dr, p2i = ci + di, m2r = cr - dr, m2i = ci - di;
      const r1r = ar + C1 * p1r + C2 * p2r, r1i = ai + C1 * p1i + C2 * p2i;
      const r2r = ar + C2 * p1r + C1 * p2r, r2i = ai + C2 * p1i + C1 * p2i;
      // -i sg (S1 m1 + S2 m2) and -i sg (S2 m1 - S1 m2)
      const q1r = sg * (S1 * m1i + S2 * m2i), q1i = -sg * (S1 * m1r + S2 * m2r);
      const q2r = sg * (S2 * m1i - S1 * m2i), q2i = -sg * (S2 * m1r - S1 * m2r);
      const o = 2 * (q + s * 5 * j);
      y[o] = ar + p1r + p2r;
      y[o + 1] = ai + p1i + p2i;
      twiddled(y, o + os, r1r + q1r, r1i + q1i, tw, t);
      twiddled(y, o + 2 * os, r2r + q2r, r2i + q2i, tw, t + 2);
      twiddled(y, o + 3 * os, r2r - q2r, r2i - q2i, tw, t + 4);
      twiddled(y, o + 4 * os, r1r - q1r, r1i - q1i, tw, t + 6);
    }
  }
}

/** y[o] = z times twiddle `t`. */
function twiddled(y: Float64Array, o: number, zr: number, zi: number, tw: Float64Array, t: number): void {
  const wr = tw[t] as number;
  const wi = tw[t + 1] as number;
  y[o] = zr * wr - zi * wi;
  y[o + 1] = zr * wi + zi * wr;
}

// Transform tables are costly to build; lines reuse a handful of sizes.
const cache = new Map<number, Transform>();

/**
 * The transform of size n (factors 2, 3, 5): `WasmFFT` where WebAssembly SIMD runs (about twice as fast
 * as either of the others on the migration's and envelopes' sizes), else fft.js for a power of two and
 * `MixedRadixFFT` for the others.
 */
export function fftOfSize(n: number): Transform {
  let f = cache.get(n);
  if (!f) {
    f = wasmFftAvailable() ? new WasmFFT(n) : (n & (n - 1)) === 0 ? Object.assign(new FFT(n), { size: n }) : new MixedRadixFFT(n);
    cache.set(n, f);
  }
  return f;
}
