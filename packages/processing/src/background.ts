import type { RadarLine } from '@lamina/radar-data';
import { selectInPlace, selectNear } from '@lamina/stats';
import { alongTrackM, outputFor, withData } from './line-util';
import { lineKernels, type LineKernels } from './line-wasm';

export interface BackgroundOptions {
  /**
   * `mean`: subtract the whole-line mean trace; `movingMean`: the mean of the traces within `windowM`;
   * `movingMedian`: their median (sampled at window centres every quarter window, linear between), which
   * leaves no ghost of a hyperbola in the other traces of the window. @default 'mean'
   */
  method?: 'mean' | 'movingMean' | 'movingMedian';
  /** Moving window length along the track, metres (traces within +-windowM/2). @default 10 */
  windowM?: number;
  /** Metres per CRS unit of `line.x/y`. @default 1 */
  metresPerUnit?: number;
}

/**
 * Background removal: subtracts the average trace, which removes events flat along the line (antenna
 * ringing, the direct wave, and also a flat reflection from anything parallel to the line, e.g. a wall).
 * Keeps dipping and curved events such as diffraction hyperbolas. `out` may be `line.data`.
 */
export function backgroundRemoval(line: RadarLine, options: BackgroundOptions = {}, out?: Float32Array): RadarLine {
  const method = options.method ?? 'mean';
  const { nSamples: ns, nTraces: nt } = line;
  const { src, dst } = outputFor(line, out);
  const sum = new Float64Array(ns);
  const kernels = lineKernels();
  if (method === 'mean' && kernels) {
    // the same sums in the line kernels (`subtractMeanTrace`)
    const n = nt * ns;
    const [d, o, m] = kernels.layout(4 * n, 4 * n, 8 * ns);
    kernels.f32(d, n).set(src.subarray(0, n));
    kernels.k.subtractMeanTrace(d, o, nt, ns, m);
    dst.set(kernels.f32(o, n));
    return withData(line, dst);
  }
  if (method === 'mean') {
    for (let t = 0; t < nt; t++) for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) + (src[t * ns + i] as number);
    for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) / Math.max(1, nt);
    for (let t = 0; t < nt; t++) for (let i = 0; i < ns; i++) dst[t * ns + i] = (src[t * ns + i] as number) - (sum[i] as number);
    return withData(line, dst);
  }
  const windowM = options.windowM ?? 10;
  if (!(windowM > 0)) throw new Error(`backgroundRemoval: windowM must be > 0, found ${windowM}`);
  const s = alongTrackM(line, options.metresPerUnit ?? 1);
  if (method === 'movingMedian') {
    const spacing = nt > 1 ? (s[nt - 1] as number) / (nt - 1) : 1;
    movingMedian(src, nt, ns, spacing > 0 ? Math.round(windowM / spacing) : nt, dst);
    return withData(line, dst);
  }
  const half = windowM / 2;
  // Two pointers over the along-track distance keep a running sum of the traces inside the window.
  let lo = 0;
  let hi = 0;
  for (let t = 0; t < nt; t++) {
    const st = s[t] as number;
    while (hi < nt && (s[hi] as number) <= st + half) {
      for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) + (src[hi * ns + i] as number);
      hi++;
    }
    while ((s[lo] as number) < st - half) {
      for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) - (src[lo * ns + i] as number);
      lo++;
    }
    const inv = 1 / (hi - lo);
    for (let i = 0; i < ns; i++) dst[t * ns + i] = (src[t * ns + i] as number) - (sum[i] as number) * inv;
  }
  return withData(line, dst);
}

/** `movingMedian`'s transposed line, kept from call to call on this thread (it lives inside one call). */
let bySampleScratch = new Float32Array(0);

/**
 * Subtract the median trace of a window of `w` traces, computed at window centres every w/4 traces
 * and interpolated linearly between them (a median per sample at every trace would cost w times more).
 * Every trace of the window counts: the background's own noise is subtracted from every trace, so a
 * median of fewer traces adds noise that is coherent along the line.
 */
function movingMedian(data: Float32Array, nTraces: number, nSamples: number, w: number, out: Float32Array): void {
  const win = Math.max(3, Math.min(w, nTraces));
  const step = Math.max(1, Math.floor(win / 4));
  const centres: number[] = [];
  for (let c = 0; c < nTraces; c += step) centres.push(c);
  if (centres[centres.length - 1] !== nTraces - 1) centres.push(nTraces - 1);
  const kernels = lineKernels();
  if (kernels) movingMedianWasm(kernels, data, nTraces, nSamples, win, centres, out);
  else movingMedianJs(data, nTraces, nSamples, win, centres, out);
}

/** `movingMedian` in JavaScript, for the centres' windows of `win` traces. */
export function movingMedianJs(data: Float32Array, nTraces: number, nSamples: number, win: number, centres: readonly number[], out: Float32Array): void {
  // The line transposed once (sample-major, `transpose`): a window's values at one sample are one
  // contiguous run. Centres near the ends share the window clamped to the line: its median trace is
  // computed once.
  if (bySampleScratch.length < data.length) bySampleScratch = new Float32Array(data.length);
  const bySample = transpose(data, nTraces, nSamples, bySampleScratch.subarray(0, data.length));
  const med = new WindowMedian(win, nSamples);
  const byStart = new Map<number, Float32Array>();
  const bg = centres.map((c) => {
    const a = windowStart(c, win, nTraces);
    const known = byStart.get(a);
    if (known) return known;
    const m = Math.min(nTraces, a + win) - a;
    const trace = new Float32Array(nSamples);
    for (let s = 0; s < nSamples; s++) trace[s] = med.of(bySample, s * nTraces + a, m, s);
    med.next();
    byStart.set(a, trace);
    return trace;
  });
  let k = 0;
  for (let t = 0; t < nTraces; t++) {
    while (k < centres.length - 2 && (centres[k + 1] as number) <= t) k++;
    const c0 = centres[k] as number;
    const c1 = centres[Math.min(k + 1, centres.length - 1)] as number;
    const f = c1 > c0 ? (t - c0) / (c1 - c0) : 0;
    const b0 = bg[k] as Float32Array;
    const b1 = bg[Math.min(k + 1, centres.length - 1)] as Float32Array;
    for (let s = 0; s < nSamples; s++) out[t * nSamples + s] = (data[t * nSamples + s] as number) - ((b0[s] as number) + f * ((b1[s] as number) - (b0[s] as number)));
  }
}

/** The first trace of the window of `win` traces around centre c, clamped to the line. */
function windowStart(c: number, win: number, nTraces: number): number {
  return Math.max(0, Math.min(nTraces - win, c - Math.floor(win / 2)));
}

/**
 * `movingMedian` in the line kernels: the transpose, each window's medians (`windowMedians`) and the
 * subtraction there. The kernel selects its own way; where the sign of a zero or a NaN would depend on the
 * way (flagged), `WindowMedian.exact` selects the sample as the JavaScript path does, from the same
 * previous medians, so the result is the same, bit for bit. `out` may be `data`.
 */
export function movingMedianWasm(kernels: LineKernels, data: Float32Array, nTraces: number, nSamples: number, win: number, centres: readonly number[], out: Float32Array): void {
  const n = nTraces * nSamples;
  const starts = [...new Set(centres.map((c) => windowStart(c, win, nTraces)))];
  const nC = centres.length;
  const [d, t, o, lo, hi, mid, side, bg, kth, flags, cs, which] = kernels.layout(4 * n, 4 * n, 4 * n, 4 * nSamples, 4 * nSamples, 4 * (win + 1), 4 * (win + 1), 4 * nSamples * starts.length, 8 * nSamples, nSamples, 4 * nC, 4 * nC);
  kernels.f32(d, n).set(data);
  kernels.f32(lo, nSamples).fill(-Infinity);
  kernels.f32(hi, nSamples).fill(Infinity);
  kernels.k.transposeLine(d, t, nTraces, nSamples);
  const bySample = kernels.f32(t, n);
  const kthOf = kernels.f64(kth, nSamples);
  const flagOf = kernels.u8(flags, nSamples);
  const med = new WindowMedian(win, nSamples);
  starts.forEach((a, i) => {
    const m = Math.min(nTraces, a + win) - a;
    kernels.k.windowMedians(t, nTraces, a, m, nSamples, i === 0, med.spread, lo, hi, mid, side, bg + 4 * nSamples * i, kth, flags);
    const trace = kernels.f32(bg + 4 * nSamples * i, nSamples);
    for (let s = 0; s < nSamples; s++) {
      if (flagOf[s]) trace[s] = med.exact(bySample, s * nTraces + a, m, s);
      else med.keep(s, kthOf[s] as number);
    }
    med.next();
  });
  kernels.i32(cs, nC).set(centres);
  kernels.i32(which, nC).set(centres.map((c) => starts.indexOf(windowStart(c, win, nTraces))));
  kernels.k.subtractBackground(d, o, nTraces, nSamples, bg, cs, which, nC);
  out.set(kernels.f32(o, n));
}

/**
 * Medians of the windows of one line, sample by sample, each window sharing most of its traces with the
 * one before (`next` between windows). The median is one value, or the mean of two, whatever selects
 * it, but for the sign of a zero (which reaches the output at a centre trace holding -0). So one pass
 * without branches counts the values below and above a bracket, the previous window's values of rank
 * k -+ `spread` at the same sample (the first window: at the sample before; where the median has most
 * likely moved to), and keeps those inside it; the median is selected among those, or (when it moved out
 * of the bracket) among the values of the side it moved to, kept by a second pass. Where the median or the value below it is zero, or the window holds
 * NaN, the window is selected as before (`exact`: the run in trace order, `selectNear` around the
 * previous median), so every result is the same, bit for bit.
 */
class WindowMedian {
  /** The values inside the bracket, and those on the side of it that holds the median when it moved out. */
  private readonly parts: [Float32Array, Float32Array];
  /** A window's run, for `exact`. */
  private readonly col: Float32Array;
  /** The previous window's median at each sample (the first pivot of `exact`). */
  private readonly prev: Float64Array;
  private readonly lo: Float64Array;
  private readonly hi: Float64Array;
  private havePrev = false;
  readonly spread: number;

  constructor(win: number, nSamples: number) {
    this.parts = [new Float32Array(win + 1), new Float32Array(win + 1)];
    this.col = new Float32Array(win);
    this.prev = new Float64Array(nSamples);
    // the first window's first sample: everything inside
    this.lo = new Float64Array(nSamples).fill(-Infinity);
    this.hi = new Float64Array(nSamples).fill(Infinity);
    this.spread = Math.max(2, win >> 3);
  }

  /** The median of v[o .. o + m) (sample s of the current window). */
  of(v: Float32Array, o: number, m: number, s: number): number {
    const k = m >> 1;
    // the first window's bracket: that of the sample before (the line's samples are oversampled, so its
    // median is near)
    const b = this.havePrev || s === 0 ? s : s - 1;
    const g1 = this.lo[b] as number;
    const g2 = this.hi[b] as number;
    const [mid, side] = this.parts;
    // every value written to `mid`, kept (the count moved on) when inside the bracket; NaN counts nowhere
    let nLow = 0;
    let nMid = 0;
    let nHigh = 0;
    for (let i = o; i < o + m; i++) {
      const x = v[i] as number;
      mid[nMid] = x;
      nLow += +(x < g1);
      nHigh += +(x > g2);
      nMid += +(x >= g1) & +(x <= g2);
    }
    if (nLow + nMid + nHigh !== m) return this.exact(v, o, m, s);
    // the part holding rank k, the rank in it, and the bracket's ends around it
    let a = mid;
    let n = nMid;
    let r = k - nLow;
    let floor = g1;
    let ceil = g2;
    if (r < 0) {
      // the median fell below the bracket: a second pass for the values there
      n = 0;
      for (let i = o; i < o + m; i++) {
        const x = v[i] as number;
        side[n] = x;
        n += +(x < g1);
      }
      [a, r, floor, ceil] = [side, k, -Infinity, g1];
    } else if (r >= nMid) {
      n = 0;
      for (let i = o; i < o + m; i++) {
        const x = v[i] as number;
        side[n] = x;
        n += +(x > g2);
      }
      [a, r, floor, ceil] = [side, k - nLow - nMid, g2, Infinity];
    }
    const h = selectInPlace(a, r, 0, n - 1);
    let below = Number.NaN;
    if (m % 2 === 0) {
      below = -Infinity;
      if (r > 0) for (let i = 0; i < r; i++) below = Math.max(below, a[i] as number);
      // else the largest value under the part (r = 0 and k > 0: not the part below the bracket)
      else if (a === mid) for (let i = o; i < o + m; i++) below = (v[i] as number) < g1 ? Math.max(below, v[i] as number) : below;
      else for (let i = o; i < o + m; i++) below = (v[i] as number) <= g2 ? Math.max(below, v[i] as number) : below;
    }
    if (h === 0 || below === 0) return this.exact(v, o, m, s);
    this.prev[s] = h;
    const d = this.spread;
    this.lo[s] = r - d >= 0 ? selectInPlace(a, r - d, 0, r - 1) : floor;
    this.hi[s] = r + d < n ? selectInPlace(a, r + d, r + 1, n - 1) : ceil;
    return m % 2 ? h : 0.5 * (below + h);
  }

  /** Between windows. */
  next(): void {
    this.havePrev = true;
  }

  /** The value of rank m >> 1 at sample s, selected elsewhere (`movingMedianWasm`): the next window's pivot. */
  keep(s: number, h: number): void {
    this.prev[s] = h;
  }

  /** The selection of `movingMedian` before the bracket, in the run's order; no bracket for the next window. */
  exact(v: Float32Array, o: number, m: number, s: number): number {
    const col = this.col;
    for (let i = 0; i < m; i++) col[i] = v[o + i] as number;
    const k = m >> 1;
    const h = this.havePrev ? selectNear(col, k, 0, m - 1, this.prev[s] as number) : selectInPlace(col, k, 0, m - 1);
    this.prev[s] = h;
    this.lo[s] = -Infinity;
    this.hi[s] = Infinity;
    if (m % 2) return h;
    let below = -Infinity;
    for (let i = 0; i < k; i++) if ((col[i] as number) > below) below = col[i] as number;
    return 0.5 * (below + h);
  }
}

/**
 * Trace-major `data` (nTraces x nSamples) sample-major, in tiles of 8 traces by 64 samples so that
 * both the reads and the writes stay in few cache lines.
 */
function transpose(data: Float32Array, nTraces: number, nSamples: number, out = new Float32Array(nTraces * nSamples)): Float32Array {
  const TT = 8;
  const TS = 64;
  for (let t0 = 0; t0 < nTraces; t0 += TT) {
    const t1 = Math.min(nTraces, t0 + TT);
    for (let s0 = 0; s0 < nSamples; s0 += TS) {
      const s1 = Math.min(nSamples, s0 + TS);
      for (let t = t0; t < t1; t++) {
        const o = t * nSamples;
        for (let s = s0; s < s1; s++) out[s * nTraces + t] = data[o + s] as number;
      }
    }
  }
  return out;
}
