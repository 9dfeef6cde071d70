// Per-trace operations of a whole line as line kernels: the envelope (`envelope`, ../src/envelope.ts),
// time-zero's first-arrival picks (`pickFirstArrival`) and sub-sample shift (`shiftTrace`, ../src/time-zero.ts),
// the JavaScript's operations in the same order, so the same numbers.
import { envelopePair, hilbertMul } from './fft-kernels';
import { runPlan } from './fft-run';

/**
 * Hilbert envelopes of the nTraces float32 traces at `data` (nSamples each, zero padded to n, a plan of
 * size n), two per transform as `WasmFFT.hilbertEnvelopes` takes them (a last odd trace with zeros), into
 * the float64 `out`. a, b, c, d: work arrays of n complex numbers.
 */
export function envelopeLine(data: usize, out: usize, nTraces: i32, nSamples: i32, n: i32, plan: usize, a: usize, b: usize, c: usize, d: usize): void {
  memory.fill(a, 0, <usize>(2 * n) << 3);
  const s = 1.0 / <f64>n;
  for (let t = 0; t < nTraces; t += 2) {
    const two = t + 1 < nTraces;
    const ta = data + (<usize>(t * nSamples) << 2);
    const tb = ta + (<usize>nSamples << 2);
    for (let i = 0; i < nSamples; i++) {
      store<f64>(a + (<usize>(2 * i) << 3), <f64>load<f32>(ta + (<usize>i << 2)));
      store<f64>(a + (<usize>(2 * i + 1) << 3), two ? <f64>load<f32>(tb + (<usize>i << 2)) : 0);
    }
    hilbertMul(runPlan(plan, a, b, c, false), d, n);
    envelopePair(a, runPlan(plan, d, b, c, true), d, nSamples, s);
    const o = out + (<usize>(t * nSamples) << 3);
    for (let i = 0; i < nSamples; i++) {
      store<f64>(o + (<usize>i << 3), load<f64>(d + (<usize>(2 * i) << 3)));
      if (two) store<f64>(o + (<usize>(nSamples + i) << 3), load<f64>(d + (<usize>(2 * i + 1) << 3)));
    }
  }
}

/** Sample i of the float64 trace at p (n samples), NaN past its end: what JavaScript reads there (undefined) counts as. */
@inline function envAt(p: usize, i: i32, n: i32): f64 {
  return i < n ? load<f64>(p + (<usize>i << 3)) : NaN;
}

/** Sample i of the float32 trace at p (n samples) as float64, NaN past its end. */
@inline function traceAt(p: usize, i: i32, n: i32): f64 {
  return i < n ? <f64>load<f32>(p + (<usize>i << 2)) : NaN;
}

/**
 * `pickFirstArrival` (../src/time-zero.ts) of each trace t, its float64 envelope at env and float32
 * samples at data (n samples a trace), searched in [from, to) (0 <= from, to <= n), into out[t]
 * (float64, samples; NaN for a dead trace). pick: 0 `onset`, 1 `firstPeak`, 2 `peak`; span is
 * max(2, round(periodSamples)), h the parabola's half width max(1, round(periodSamples / 10)), as the
 * JavaScript rounds them.
 */
export function pickLine(env: usize, data: usize, nTraces: i32, n: i32, from: i32, to: i32, pick: i32, threshold: f64, span: i32, h: i32, out: usize): void {
  for (let t = 0; t < nTraces; t++) {
    const e = env + (<usize>(t * n) << 3);
    const x = data + (<usize>(t * n) << 2);
    store<f64>(out + (<usize>t << 3), pickTrace(e, x, n, from, to, pick, threshold, span, h));
  }
}

function pickTrace(env: usize, x: usize, n: i32, from: i32, to: i32, pick: i32, threshold: f64, span: i32, h: i32): f64 {
  let top: f64 = 0;
  for (let i = from; i < to; i++) {
    const e = envAt(env, i, n);
    if (e > top) top = e;
  }
  if (!(top > 0) || !isFinite(top)) return NaN;
  const thr = threshold * top;
  let c = from;
  while (c < to && envAt(env, c, n) < thr) c++;
  if (pick == 0) {
    if (c == from) return <f64>c;
    const e0 = envAt(env, c - 1, n);
    const e1 = envAt(env, c, n);
    let d = e1 - e0;
    // JavaScript's `|| 1`: 0, -0 and NaN are falsy
    if (d == 0 || isNaN(d)) d = 1;
    return <f64>(c - 1) + (thr - e0) / d;
  }
  const end = min(to, c + span + 1);
  if (pick == 1) {
    let j = c;
    for (let i = c; i < end; i++) if (Math.abs(traceAt(x, i, n)) > Math.abs(traceAt(x, j, n))) j = i;
    if (j - h >= 0 && j + h < n) {
      let s0: f64 = 0, s2: f64 = 0, s4: f64 = 0, sy: f64 = 0, suy: f64 = 0, su2y: f64 = 0;
      for (let k = -h; k <= h; k++) {
        const u = <f64>k;
        const y = traceAt(x, j + k, n);
        s0 += 1;
        s2 += u * u;
        s4 += u * u * u * u;
        sy += y;
        suy += u * y;
        su2y += u * u * y;
      }
      const b = suy / s2;
      const cc = (s0 * su2y - s2 * sy) / (s0 * s4 - s2 * s2);
      const xj = traceAt(x, j, n);
      // Math.sign(cc) === -Math.sign(x[j]), cc !== 0
      if (cc != 0 && ((cc > 0 && xj < 0) || (cc < 0 && xj > 0))) return <f64>j + max(-1.0, min(1.0, -b / (2 * cc)));
    }
    return <f64>j;
  }
  let k = c;
  for (let i = c; i < end; i++) if (envAt(env, i, n) > envAt(env, k, n)) k = i;
  const half = 0.5 * envAt(env, k, n);
  let a = k;
  while (a > from && envAt(env, a - 1, n) > half) a--;
  let b = k;
  while (b < to - 1 && envAt(env, b + 1, n) > half) b++;
  let sw: f64 = 0;
  let swi: f64 = 0;
  for (let i = a; i <= b; i++) {
    const w = envAt(env, i, n) - half;
    sw += w;
    swi += w * <f64>i;
  }
  return sw > 0 ? swi / sw : <f64>k;
}

/**
 * `shiftTrace` of each trace t of the float32 line at src into dst (n samples a trace): by whole[t]
 * samples (int32) where exact[t], else by Keys cubic interpolation with the weights w[4 t..4 t + 3]
 * (float64) of taps j - 1..j + 2, j = i - whole[t] - 1, zero outside the trace.
 */
export function shiftLine(src: usize, dst: usize, nTraces: i32, n: i32, whole: usize, w: usize, exact: usize): void {
  for (let t = 0; t < nTraces; t++) {
    const x = src + (<usize>(t * n) << 2);
    const out = dst + (<usize>(t * n) << 2);
    const wh = load<i32>(whole + (<usize>t << 2));
    if (load<u8>(exact + <usize>t)) {
      for (let i = 0; i < n; i++) {
        const j = i - wh;
        store<f32>(out + (<usize>i << 2), j >= 0 && j < n ? load<f32>(x + (<usize>j << 2)) : 0);
      }
      continue;
    }
    const wt = w + (<usize>(4 * t) << 3);
    const w0 = load<f64>(wt);
    const w1 = load<f64>(wt, 8);
    const w2 = load<f64>(wt, 16);
    const w3 = load<f64>(wt, 24);
    const i0 = min(n, max(0, wh + 2));
    const i1 = max(i0, min(n, n - 1 + wh));
    for (let i = 0; i < n; i++) {
      let acc: f64 = 0;
      const k = i - wh - 2;
      if (i >= i0 && i < i1) {
        acc += <f64>load<f32>(x + (<usize>k << 2)) * w0;
        acc += <f64>load<f32>(x + (<usize>(k + 1) << 2)) * w1;
        acc += <f64>load<f32>(x + (<usize>(k + 2) << 2)) * w2;
        acc += <f64>load<f32>(x + (<usize>(k + 3) << 2)) * w3;
      } else {
        // the edges: the taps inside the trace, in the same order
        for (let m = 0; m < 4; m++) {
          const km = k + m;
          if (km >= 0 && km < n) acc += <f64>load<f32>(x + (<usize>km << 2)) * (m == 0 ? w0 : m == 1 ? w1 : m == 2 ? w2 : w3);
        }
      }
      store<f32>(out + (<usize>i << 2), <f32>acc);
    }
  }
}

/** Keys cubic convolution weight (a = -0.5): `keys` of ../src/time-zero.ts. */
function keys(x: f64): f64 {
  const ax = Math.abs(x);
  if (ax < 1) return 1.5 * ax * ax * ax - 2.5 * ax * ax + 1;
  if (ax < 2) return -0.5 * ax * ax * ax + 2.5 * ax * ax - 4 * ax + 2;
  return 0;
}

/**
 * `resampleFrom` (../src/fk.ts) of the float32 line at `data` into the float64 `out`, samples k0.. of each
 * trace: sample k from source position src[k] (float64; < 0: zero), by the four weights wt[4 k..] of taps
 * tap[k]..tap[k] + 3 (int32) where tap[k] >= 0, else Keys cubic interpolation (`cubicAt`) within the trace.
 */
export function resampleLine(data: usize, out: usize, nTraces: i32, nSamples: i32, src: usize, tap: usize, wt: usize, k0: i32): void {
  for (let i = 0; i < nTraces; i++) {
    const o = i * nSamples;
    for (let k = k0; k < nSamples; k++) {
      const t = load<i32>(tap + (<usize>k << 2));
      let v: f64;
      if (t >= 0) {
        const q = data + (<usize>(o + t) << 2);
        const w = wt + (<usize>(4 * k) << 3);
        v = <f64>load<f32>(q) * load<f64>(w) + <f64>load<f32>(q, 4) * load<f64>(w, 8) + <f64>load<f32>(q, 8) * load<f64>(w, 16) + <f64>load<f32>(q, 12) * load<f64>(w, 24);
      } else {
        const u = load<f64>(src + (<usize>k << 3));
        v = 0;
        if (!(u < 0)) {
          // cubicAt(data, o + u, o, o + nSamples)
          const uu = <f64>o + u;
          const i0f = Math.floor(uu);
          const i0 = <i32>i0f;
          if (uu - i0f == 0) v = i0 >= o && i0 < o + nSamples ? <f64>load<f32>(data + (<usize>i0 << 2)) : 0;
          else {
            for (let m = i0 - 1; m <= i0 + 2; m++) if (m >= o && m < o + nSamples) v += <f64>load<f32>(data + (<usize>m << 2)) * keys(uu - <f64>m);
          }
        }
      }
      store<f64>(out + (<usize>(o + k) << 3), v);
    }
  }
}

/**
 * `dewow` (../src/dewow.ts), running mean: each float32 trace minus the mean of its w = 2 h + 1 samples
 * centred on each sample (the window clamped to the trace at its ends), from the float64 cumulative sum
 * (`cum`, n + 1 numbers), into out.
 */
export function dewowLine(data: usize, out: usize, nTraces: i32, n: i32, h: i32, cum: usize): void {
  const w = <f64>(2 * h + 1);
  const i0 = min(n, h);
  const i1 = max(i0, n - h);
  for (let t = 0; t < nTraces; t++) {
    const x = data + (<usize>(t * n) << 2);
    const y = out + (<usize>(t * n) << 2);
    let acc: f64 = 0;
    store<f64>(cum, 0);
    for (let i = 0; i < n; i++) {
      acc += <f64>load<f32>(x + (<usize>i << 2));
      store<f64>(cum + (<usize>(i + 1) << 3), acc);
    }
    const c0 = load<f64>(cum);
    for (let i = 0; i < i0; i++) {
      const b = min(n, i + h + 1);
      store<f32>(y + (<usize>i << 2), <f32>(<f64>load<f32>(x + (<usize>i << 2)) - (load<f64>(cum + (<usize>b << 3)) - c0) / <f64>b));
    }
    for (let i = i0; i < i1; i++) {
      store<f32>(y + (<usize>i << 2), <f32>(<f64>load<f32>(x + (<usize>i << 2)) - (load<f64>(cum + (<usize>(i + h + 1) << 3)) - load<f64>(cum + (<usize>(i - h) << 3))) / w));
    }
    const cn = load<f64>(cum + (<usize>n << 3));
    for (let i = i1; i < n; i++) {
      const a = max(0, i - h);
      store<f32>(y + (<usize>i << 2), <f32>(<f64>load<f32>(x + (<usize>i << 2)) - (cn - load<f64>(cum + (<usize>a << 3))) / <f64>(n - a)));
    }
  }
}

/**
 * `backgroundRemoval` (../src/background.ts), method `mean`: the mean trace (float64 sums in trace order,
 * into `sum`, n numbers) subtracted from every float32 trace, into out.
 */
export function subtractMeanTrace(data: usize, out: usize, nTraces: i32, n: i32, sum: usize): void {
  memory.fill(sum, 0, <usize>n << 3);
  for (let t = 0; t < nTraces; t++) {
    const x = data + (<usize>(t * n) << 2);
    for (let i = 0; i < n; i++) store<f64>(sum + (<usize>i << 3), load<f64>(sum + (<usize>i << 3)) + <f64>load<f32>(x + (<usize>i << 2)));
  }
  const d = <f64>max(1, nTraces);
  for (let i = 0; i < n; i++) store<f64>(sum + (<usize>i << 3), load<f64>(sum + (<usize>i << 3)) / d);
  for (let t = 0; t < nTraces; t++) {
    const o = <usize>(t * n) << 2;
    for (let i = 0; i < n; i++) store<f32>(out + o + (<usize>i << 2), <f32>(<f64>load<f32>(data + o + (<usize>i << 2)) - load<f64>(sum + (<usize>i << 3))));
  }
}
