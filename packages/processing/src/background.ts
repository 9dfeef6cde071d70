import type { RadarLine } from '@lamina/radar-data';
import { selectInPlace } from '@lamina/stats';
import { alongTrackM, outputFor, withData } from './line-util';

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
  // the window transposed (sample-major), read trace by trace; each sample's median selected in its
  // contiguous column by index range (medianInPlace's rule, without a subarray per sample). Centres near
  // the ends share the window clamped to the line: its median trace is computed once.
  const block = new Float64Array(win * nSamples);
  const byStart = new Map<number, Float32Array>();
  // each sample's selected value in the previous window: the next window shares three quarters of its
  // traces, so its median lies near and is a good first pivot (`selectNear`)
  const prev = new Float64Array(nSamples);
  let havePrev = false;
  const bg = centres.map((c) => {
    const a = Math.max(0, Math.min(nTraces - win, c - Math.floor(win / 2)));
    const known = byStart.get(a);
    if (known) return known;
    const b = Math.min(nTraces, a + win);
    const m = b - a;
    for (let t = a; t < b; t++) {
      const o = t * nSamples;
      for (let s = 0; s < nSamples; s++) block[s * m + t - a] = data[o + s] as number;
    }
    const trace = new Float32Array(nSamples);
    for (let s = 0; s < nSamples; s++) {
      const lo = s * m;
      const hi = havePrev ? selectNear(block, lo + (m >> 1), lo, lo + m - 1, prev[s] as number) : selectInPlace(block, lo + (m >> 1), lo, lo + m - 1);
      prev[s] = hi;
      if (m % 2) trace[s] = hi;
      else {
        let below = -Infinity;
        for (let i = lo; i < lo + (m >> 1); i++) if ((block[i] as number) > below) below = block[i] as number;
        trace[s] = 0.5 * (below + hi);
      }
    }
    byStart.set(a, trace);
    havePrev = true;
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

/**
 * The k-th smallest of a[left..right] as `selectInPlace` of @lamina/stats finds it (the same value, and
 * the same order property: smaller or equal before k, larger or equal after), with a first partition
 * around the value `guess` (any number; the closer to the answer, the smaller the part left to it).
 */
function selectNear(a: Float64Array, k: number, left: number, right: number, guess: number): number {
  // a[left..i-1] < guess <= a[i..right]
  let i = left;
  let j = right;
  for (;;) {
    while (i <= j && (a[i] as number) < guess) i++;
    while (j >= i && (a[j] as number) >= guess) j--;
    if (i >= j) break;
    const t = a[i] as number;
    a[i] = a[j] as number;
    a[j] = t;
    i++;
    j--;
  }
  return k < i ? selectInPlace(a, k, left, i - 1) : selectInPlace(a, k, i, right);
}
