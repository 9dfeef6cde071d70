import type { RadarLine } from '@lamina/radar-data';
import { C_M_PER_NS } from '@lamina/constants';
import { InputError } from '@lamina/errors';
import { runningMedian } from '@lamina/stats';
import { hilbertEnvelopePair, hilbertWorkspace, lineEnvelopesAt } from './envelope';
import { nextPow2 } from './fft';
import { medianOf, outputFor, withData } from './line-util';
import { lineKernels, type LineKernels } from './line-wasm';


export type TimeZeroPick = 'peak' | 'firstPeak' | 'onset';

export interface TimeZeroOptions {
  /** Threshold on the envelope, a fraction of the trace's envelope maximum. @default 0.25 */
  threshold?: number;
  /**
   * What is picked on the direct arrival: `firstPeak` (default) = the largest |trace| sample within one
   * period after the threshold crossing (parabolic refinement): the main lobe of the direct wavelet,
   * hardly pulled by a ground wave arriving within a period after it (but taken by that ground wave if
   * it is the stronger one: then use `onset` or `searchNs`); `peak` = the centre of the envelope lobe (centroid above half
   * its maximum) at the largest envelope value within one period after the threshold crossing, i.e. the
   * wavelet centre for any wavelet phase, but pulled by an overlapping ground wave; `onset` = the
   * threshold crossing itself. @default 'firstPeak'
   */
  pick?: TimeZeroPick;
  /** Centre frequency, MHz: sets the one-period peak search after the crossing. */
  frequencyMHz: number;
  /** Antenna separation, m. Time-zero is the direct-air-wave pick minus separationM / c. @default 0 */
  separationM?: number;
  /** Traces in the running median of the picks (odd). @default 11 */
  medianTraces?: number;
  /** A pick further than this from the running median is replaced by the median, ns. @default a quarter period */
  maxDeviationNs?: number;
  /** `fractional`: Keys cubic interpolation; `integer`: whole-sample shifts. @default 'fractional' */
  shift?: 'fractional' | 'integer';
  /** Only search samples in [from, to) ns from the first sample. @default the whole trace */
  searchNs?: [number, number];
}

export interface TimeZeroResult {
  line: RadarLine;
  /**
   * First-arrival pick per trace, ns from the first sample (NaN for a dead trace); picked again with the
   * line's typical direct-wave envelope as reference where the first pick lay over half a period from
   * the wide running median (see `timeZero`).
   */
  picksNs: Float64Array;
  /** Pick used for alignment: the raw pick, or the running median where the raw pick was an outlier or dead. */
  usedNs: Float64Array;
  /** Shift applied to each trace, ns (positive = moved later). */
  shiftsNs: Float64Array;
  /** Common time of the direct-arrival pick after alignment, ns from the first sample. */
  pickNs: number;
  /** Common time-zero, ns from the first sample: `pickNs - separationM / c`. */
  timeZeroNs: number;
  /** Traces whose pick was replaced (dead or outlier). */
  replaced: number[];
}

/**
 * First-arrival pick on one trace's envelope: first sample above `threshold` x max (or `level`), then (`peak`) the
 * centroid of the envelope lobe at the largest value in the following period. Returns samples (fractional), NaN if
 * the trace is dead (zero or non-finite envelope).
 */
export function pickFirstArrival(
  env: ArrayLike<number>,
  options: { threshold: number; pick: TimeZeroPick; periodSamples: number; from?: number; to?: number; trace?: ArrayLike<number>; level?: number },
): number {
  const from = Math.max(0, options.from ?? 0);
  const to = Math.min(env.length, options.to ?? env.length);
  let max = 0;
  for (let i = from; i < to; i++) {
    const e = env[i] as number;
    if (e > max) max = e;
  }
  if (!(max > 0) || !Number.isFinite(max)) return Number.NaN;
  // `level`: an absolute threshold (the line's typical direct wave), for a trace whose own maximum is
  // a later, stronger event.
  const thr = options.level ?? options.threshold * max;
  let c = from;
  while (c < to && (env[c] as number) < thr) c++;
  if (options.pick === 'onset') {
    if (c === from) return c;
    const e0 = env[c - 1] as number;
    const e1 = env[c] as number;
    return c - 1 + (thr - e0) / (e1 - e0 || 1);
  }
  const end = Math.min(to, c + Math.max(2, Math.round(options.periodSamples)) + 1);
  if (options.pick === 'firstPeak') {
    const x = options.trace;
    if (!x) throw new Error('pickFirstArrival: firstPeak needs the trace');
    // Largest |x| in the period after the crossing: the main lobe of the direct wavelet. (A rule on the
    // first lobe above a fraction of it was tried and fails where a ground wave's side lobe cancels part
    // of the main lobe.)
    let j = c;
    for (let i = c; i < end; i++) if (Math.abs(x[i] as number) > Math.abs(x[j] as number)) j = i;
    // vertex of a least-squares parabola over +-h samples (h ~ a tenth of a period): steadier under noise
    // than the three-point vertex
    const h = Math.max(1, Math.round(options.periodSamples / 10));
    if (j - h >= 0 && j + h < x.length) {
      let s0 = 0, s2 = 0, s4 = 0, sy = 0, suy = 0, su2y = 0;
      for (let u = -h; u <= h; u++) {
        const y = x[j + u] as number;
        s0 += 1;
        s2 += u * u;
        s4 += u * u * u * u;
        sy += y;
        suy += u * y;
        su2y += u * u * y;
      }
      const b = suy / s2;
      const cc = (s0 * su2y - s2 * sy) / (s0 * s4 - s2 * s2);
      if (cc !== 0 && Math.sign(cc) === -Math.sign(x[j] as number)) return j + Math.max(-1, Math.min(1, -b / (2 * cc)));
    }
    return j;
  }
  let k = c;
  for (let i = c; i < end; i++) if ((env[i] as number) > (env[k] as number)) k = i;
  // The envelope is flat at its top, so its argmax wanders with noise: take the centroid of the lobe above
  // half the peak instead (weights env - peak/2), which is the centre of a symmetric wavelet's envelope.
  const half = 0.5 * (env[k] as number);
  let a = k;
  while (a > from && (env[a - 1] as number) > half) a--;
  let b = k;
  while (b < to - 1 && (env[b + 1] as number) > half) b++;
  let sw = 0;
  let swi = 0;
  for (let i = a; i <= b; i++) {
    const w = (env[i] as number) - half;
    sw += w;
    swi += w * i;
  }
  return sw > 0 ? swi / sw : k;
}

/** Keys cubic convolution weight (a = -0.5). */
export function keys(x: number): number {
  const ax = Math.abs(x);
  if (ax < 1) return 1.5 * ax * ax * ax - 2.5 * ax * ax + 1;
  if (ax < 2) return -0.5 * ax * ax * ax + 2.5 * ax * ax - 4 * ax + 2;
  return 0;
}

/** out[i] = x(i - shift) by Keys cubic interpolation (zero outside the trace). */
export function shiftTrace(x: ArrayLike<number>, shiftSamples: number, out: Float32Array | Float64Array): void {
  const n = x.length;
  const whole = Math.floor(shiftSamples);
  const f = shiftSamples - whole;
  if (f === 0) {
    for (let i = 0; i < n; i++) {
      const j = i - whole;
      out[i] = j >= 0 && j < n ? (x[j] as number) : 0;
    }
    return;
  }
  // source position u = i - shift = (i - whole - 1) + (1 - f)
  const w0 = keys(2 - f);
  const w1 = keys(1 - f);
  const w2 = keys(f);
  const w3 = keys(1 + f);
  // samples whose four taps all lie inside the trace: k = i - whole - 2 .. i - whole + 1
  const i0 = Math.min(n, Math.max(0, whole + 2));
  const i1 = Math.max(i0, Math.min(n, n - 1 + whole));
  const edge = (i: number) => {
    const j = i - whole - 1;
    let acc = 0;
    for (let m = 0; m < 4; m++) {
      const k = j - 1 + m;
      if (k >= 0 && k < n) acc += (x[k] as number) * (m === 0 ? w0 : m === 1 ? w1 : m === 2 ? w2 : w3);
    }
    out[i] = acc;
  };
  for (let i = 0; i < i0; i++) edge(i);
  for (let i = i0; i < i1; i++) {
    const k = i - whole - 2;
    // the same sum, in the same order, as at the edges
    let acc = 0;
    acc += (x[k] as number) * w0;
    acc += (x[k + 1] as number) * w1;
    acc += (x[k + 2] as number) * w2;
    acc += (x[k + 3] as number) * w3;
    out[i] = acc;
  }
  for (let i = i1; i < n; i++) edge(i);
}

/**
 * Time-zero: picks the direct arrival on every trace, replaces dead or outlying picks by the running
 * median across traces, shifts every trace so the picks line up at their median, and sets
 * `timeZeroNs` = aligned pick - separationM / c: the moment the wave left the transmitter, so that later
 * stages measure two-way travel time from it. `out` may be `line.data`.
 */
export function timeZero(line: RadarLine, options: TimeZeroOptions, out?: Float32Array): TimeZeroResult {
  const { nSamples: ns, nTraces: nt, dtNs } = line;
  const threshold = options.threshold ?? 0.25;
  const pick = options.pick ?? 'firstPeak';
  const period = 1000 / options.frequencyMHz;
  const medianTraces = Math.max(1, (options.medianTraces ?? 11) | 1);
  const maxDev = options.maxDeviationNs ?? period / 4;
  const from = options.searchNs ? Math.floor(options.searchNs[0] / dtNs) : 0;
  const to = options.searchNs ? Math.ceil(options.searchNs[1] / dtNs) : ns;
  // Padded by at least half a trace: the analytic signal's FFT is circular, and a trace that ends far
  // from zero (a low-frequency transient, late signal) wraps its end onto its first samples. With the
  // next power of two alone (126 samples -> 128) that wrap raised the envelope at the start above the
  // threshold, and the direct wave was picked 10 ns early on a fifth of a site's traces; runs longer than
  // the median's window then went through uncorrected.
  const ws = hilbertWorkspace(ns, nextPow2(Math.ceil(1.5 * ns)));
  const env = new Float64Array(ns);
  const envB = new Float64Array(ns);
  const picksNs = new Float64Array(nt);
  // envelope at each pick: the direct wave's strength on that trace
  const levels = new Float64Array(nt);
  // one options object, its trace swapped per call (not a spread per trace)
  const opts: Parameters<typeof pickFirstArrival>[1] = { threshold, pick, periodSamples: period / dtNs, from, to, trace: line.data };
  // the envelope at pick pNs of the trace at offset o of e
  const envAt = (e: Float64Array, o: number, pNs: number) => (Number.isFinite(pNs) ? (e[o + Math.min(ns - 1, Math.max(0, Math.round(pNs / dtNs)))] as number) : Number.NaN);
  const kernels = lineKernels();
  // the line's envelopes and picks at once in the kernels (the same pairs, the same numbers)
  const inKernels = kernels && Number.isFinite(opts.periodSamples) ? linePicksWasm(kernels, line.data, nt, ns, ws.n, opts) : undefined;
  if (inKernels) {
    for (let t = 0; t < nt; t++) {
      picksNs[t] = (inKernels.picks[t] as number) * dtNs;
      levels[t] = envAt(inKernels.env, t * ns, picksNs[t] as number);
    }
  } else {
    for (let t = 0; t < nt; t += 2) {
      const tr = line.data.subarray(t * ns, (t + 1) * ns);
      const trB = t + 1 < nt ? line.data.subarray((t + 1) * ns, (t + 2) * ns) : undefined;
      hilbertEnvelopePair(tr, trB, ws, env, envB);
      opts.trace = tr;
      picksNs[t] = pickFirstArrival(env, opts) * dtNs;
      levels[t] = envAt(env, 0, picksNs[t] as number);
      if (trB) {
        opts.trace = trB;
        picksNs[t + 1] = pickFirstArrival(envB, opts) * dtNs;
        levels[t + 1] = envAt(envB, 0, picksNs[t + 1] as number);
      }
    }
  }
  if (!picksNs.some(Number.isFinite)) {
    throw new InputError(line.id, 'time-zero: expected a direct arrival, found no trace with signal (all traces zero or not finite)');
  }
  const h = medianTraces >> 1;
  // Runs of wrong picks: a strong shallow reflector (a metal tank just below the surface) outshines the
  // direct wave on tens of consecutive traces, so the threshold, a share of each trace's own maximum,
  // falls on the reflector; a stretch of weak coupling leaves only noise above it. The running median
  // of `medianTraces` cannot outvote a run longer than half its window. So: picks further than half a
  // period from the median of a five times wider window are picked again with the line's typical
  // direct-wave envelope as the threshold's reference (the direct wave arrives on every trace at nearly
  // the same time and amplitude), and picks still that far out are left out of the medians below.
  // running medians: each window's median from one sorted window that slides (`runningMedian`)
  const wide = (v: Float64Array) => runningMedian(v, 5 * h);
  const halfPeriodNs = period / 2;
  const farFrom = (v: Float64Array) => {
    const m = wide(v);
    return Uint8Array.from(v, (p, t) => (Math.abs(p - (m[t] as number)) <= halfPeriodNs ? 0 : 1));
  };
  let far = farFrom(picksNs);
  const level = threshold * medianOf(levels);
  if (level > 0 && far.includes(1)) {
    for (let t = 0; t < nt; t++) {
      if (!far[t]) continue;
      const tr = line.data.subarray(t * ns, (t + 1) * ns);
      hilbertEnvelopePair(tr, undefined, ws, env);
      picksNs[t] = pickFirstArrival(env, { ...opts, trace: tr, level }) * dtNs;
    }
    far = farFrom(picksNs);
  }
  const valid = picksNs.map((p, t) => (far[t] ? Number.NaN : p));
  const usedNs = new Float64Array(nt);
  const replaced: number[] = [];
  const validMedian = medianOf(valid);
  const global = Number.isFinite(validMedian) ? validMedian : medianOf(picksNs);
  const local = runningMedian(valid, h);
  let wideValid: Float64Array | undefined;
  for (let t = 0; t < nt; t++) {
    let med = local[t] as number;
    if (!Number.isFinite(med)) med = (wideValid ??= wide(valid))[t] as number;
    if (!Number.isFinite(med)) med = global;
    const p = valid[t] as number;
    if (Number.isFinite(p) && Math.abs(p - med) <= maxDev) usedNs[t] = p;
    else {
      usedNs[t] = med;
      replaced.push(t);
    }
  }
  const pickNs = medianOf(usedNs);
  const shiftsNs = new Float64Array(nt);
  const shifts = new Float64Array(nt);
  const { src, dst } = outputFor(line, out);
  for (let t = 0; t < nt; t++) {
    let sh = (pickNs - (usedNs[t] as number)) / dtNs;
    if (options.shift === 'integer') sh = Math.round(sh);
    shifts[t] = sh;
    shiftsNs[t] = sh * dtNs;
  }
  if (kernels && shifts.every(Number.isFinite)) shiftLineWasm(kernels, src, dst, nt, ns, shifts);
  else for (let t = 0; t < nt; t++) shiftTrace(src.subarray(t * ns, (t + 1) * ns), shifts[t] as number, dst.subarray(t * ns, (t + 1) * ns));
  const timeZeroNs = pickNs - (options.separationM ?? 0) / C_M_PER_NS;
  return { line: withData(line, dst, timeZeroNs), picksNs, usedNs, shiftsNs, pickNs, timeZeroNs, replaced };
}

const PICK_CODES: Record<TimeZeroPick, number> = { onset: 0, firstPeak: 1, peak: 2 };

/**
 * The envelopes of a line (`lineEnvelopesAt`) and `pickFirstArrival` of every trace on them (each trace's
 * own threshold; no `level`) in the line kernels (`pickLine`): the same operations, so the same picks.
 * Returns the picks (samples) and a view of the envelopes (trace-major), valid until the next layout.
 */
export function linePicksWasm(
  kernels: LineKernels,
  data: Float32Array,
  nTraces: number,
  nSamples: number,
  n: number,
  options: { threshold: number; pick: TimeZeroPick; periodSamples: number; from?: number; to?: number },
): { picks: Float64Array; env: Float64Array } {
  const at = lineEnvelopesAt(kernels, data, nTraces, nSamples, n);
  return { picks: pickLineWasm(kernels, at, nTraces, nSamples, options), env: kernels.f64(at.env, nTraces * nSamples) };
}

/**
 * `pickFirstArrival` of every trace (no `level`) in the line kernels (`pickLine`), on a line (float32) and
 * its envelopes (float64) at `at` in their memory, both trace-major: the picks, samples.
 * `options.periodSamples` must be finite.
 */
export function pickLineWasm(
  kernels: LineKernels,
  at: { data: number; env: number },
  nTraces: number,
  nSamples: number,
  options: { threshold: number; pick: TimeZeroPick; periodSamples: number; from?: number; to?: number },
): Float64Array {
  const [out] = kernels.append(8 * nTraces);
  // the search range in [0, nSamples] (an empty or NaN range stays empty), the roundings as the JavaScript
  // makes them, capped where they reach past the trace either way (int32 for the kernel)
  const from = Math.max(0, options.from ?? 0);
  const to = Math.min(nSamples, options.to ?? nSamples);
  const [lo, hi] = from < to ? [from, to] : [0, 0];
  const cap = (v: number) => Math.min(nSamples + 1, v);
  const span = cap(Math.max(2, Math.round(options.periodSamples)));
  const h = cap(Math.max(1, Math.round(options.periodSamples / 10)));
  kernels.k.pickLine(at.env, at.data, nTraces, nSamples, lo, hi, PICK_CODES[options.pick] ?? 2, options.threshold, span, h, out);
  return kernels.f64(out, nTraces).slice();
}

/**
 * `shiftTrace` of every trace (trace t by shifts[t] samples) in the line kernels (`shiftLine`): the same
 * weights (`keys`, made here) and sums, so the same numbers. `dst` may be `src`.
 */
export function shiftLineWasm(kernels: LineKernels, src: Float32Array, dst: Float32Array, nTraces: number, n: number, shifts: Float64Array): void {
  const [x, y, wh, w, ex] = kernels.layout(4 * nTraces * n, 4 * nTraces * n, 4 * nTraces, 32 * nTraces, nTraces);
  kernels.f32(x, nTraces * n).set(src.subarray(0, nTraces * n));
  const whole = kernels.i32(wh, nTraces);
  const weights = kernels.f64(w, 4 * nTraces);
  const exact = kernels.u8(ex, nTraces);
  shifts.forEach((sh, t) => {
    const f = sh - Math.floor(sh);
    // beyond n + 4 samples every tap lies outside the trace either way
    whole[t] = Math.max(-n - 4, Math.min(n + 4, Math.floor(sh)));
    exact[t] = f === 0 ? 1 : 0;
    weights.set([keys(2 - f), keys(1 - f), keys(f), keys(1 + f)], 4 * t);
  });
  kernels.k.shiftLine(x, y, nTraces, n, wh, w, ex);
  dst.set(kernels.f32(y, nTraces * n));
}
