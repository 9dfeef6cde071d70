// AssemblyScript source of the WebAssembly kernels of `lineKernels` (../src/line-wasm.ts): loops over a
// whole line that JavaScript ran cold in every worker (the JIT warms up per thread, a line's work is done
// a few dozen times per thread). Each is the JavaScript version's arithmetic in the same order in float64
// (or the same float32 roundings), so the results are the same bits. Built by scripts/build-wasm.mjs into
// ../src/line-wasm-binary.ts; rebuild after a change here. Pointers are byte offsets into the module's
// memory, which ../src/line-wasm.ts lays out per call.
import { selectRank } from './select';

/** Samples i of two float32 traces at a and b as the lanes of one vector. */
@inline function pairAt(a: usize, b: usize, i: i32): v128 {
  const o = <usize>i << 2;
  return f64x2.replace_lane(f64x2.splat(<f64>load<f32>(a + o)), 1, <f64>load<f32>(b + o));
}

/**
 * `sosfiltInPlacePair` (../src/butterworth.ts) on `len` vectors at x, one trace per lane: the cascade in
 * transposed direct form II, states at z (two vectors per section), backwards with `reverse`.
 */
function cascadePair(sos: usize, nSec: i32, x: usize, len: i32, z: usize, reverse: bool): void {
  for (let s = 0; s < nSec; s++) {
    const c = sos + (<usize>(6 * s) << 3);
    const b0 = f64x2.splat(load<f64>(c));
    const b1 = f64x2.splat(load<f64>(c, 8));
    const b2 = f64x2.splat(load<f64>(c, 16));
    const a1 = f64x2.splat(load<f64>(c, 32));
    const a2 = f64x2.splat(load<f64>(c, 40));
    let z0 = v128.load(z + (<usize>(2 * s) << 4));
    let z1 = v128.load(z + (<usize>(2 * s + 1) << 4));
    for (let k = 0; k < len; k++) {
      const p = x + (<usize>(reverse ? len - 1 - k : k) << 4);
      const xi = v128.load(p);
      const y = f64x2.add(f64x2.mul(b0, xi), z0);
      z0 = f64x2.add(f64x2.sub(f64x2.mul(b1, xi), f64x2.mul(a1, y)), z1);
      z1 = f64x2.sub(f64x2.mul(b2, xi), f64x2.mul(a2, y));
      v128.store(p, y);
    }
  }
}

/**
 * `zeroPhaseFilter` (../src/bandpass.ts): `sosfiltfiltPair` on the traces of a line two at a time (a last
 * odd trace in both lanes), float32 in at `data`, float32 out at `out` (n samples a trace). `ext` holds
 * n + 2 edge vectors, `z` 2 nSec, `zi` the 2 nSec steady-state numbers of `sosfiltZi`.
 */
export function filtfiltLine(data: usize, out: usize, nTraces: i32, n: i32, sos: usize, nSec: i32, zi: usize, edge: i32, ext: usize, z: usize): void {
  if (n === 0) return;
  const len = n + 2 * edge;
  const two = f64x2.splat(2);
  for (let t = 0; t < nTraces; t += 2) {
    const a = data + (<usize>t * <usize>n << 2);
    const pair = t + 1 < nTraces;
    const b = pair ? a + (<usize>n << 2) : a;
    const x0 = f64x2.mul(two, pairAt(a, b, 0));
    const xn = f64x2.mul(two, pairAt(a, b, n - 1));
    for (let i = 0; i < edge; i++) {
      v128.store(ext + (<usize>i << 4), f64x2.sub(x0, pairAt(a, b, edge - i)));
      v128.store(ext + (<usize>(edge + n + i) << 4), f64x2.sub(xn, pairAt(a, b, n - 2 - i)));
    }
    for (let i = 0; i < n; i++) v128.store(ext + (<usize>(edge + i) << 4), pairAt(a, b, i));
    const first = v128.load(ext);
    for (let i = 0; i < 2 * nSec; i++) v128.store(z + (<usize>i << 4), f64x2.mul(f64x2.splat(load<f64>(zi + (<usize>i << 3))), first));
    cascadePair(sos, nSec, ext, len, z, false);
    const last = v128.load(ext + (<usize>(len - 1) << 4));
    for (let i = 0; i < 2 * nSec; i++) v128.store(z + (<usize>i << 4), f64x2.mul(f64x2.splat(load<f64>(zi + (<usize>i << 3))), last));
    cascadePair(sos, nSec, ext, len, z, true);
    const oa = out + (<usize>t * <usize>n << 2);
    for (let i = 0; i < n; i++) {
      const y = v128.load(ext + (<usize>(edge + i) << 4));
      store<f32>(oa + (<usize>i << 2), <f32>f64x2.extract_lane(y, 0));
      if (pair) store<f32>(oa + (<usize>(n + i) << 2), <f32>f64x2.extract_lane(y, 1));
    }
  }
}

/** Trace-major float32 data (nTraces x nSamples) sample-major into out, in tiles (as `transpose` of ../src/background.ts). */
export function transposeLine(data: usize, out: usize, nTraces: i32, nSamples: i32): void {
  for (let t0 = 0; t0 < nTraces; t0 += 8) {
    const t1 = min(nTraces, t0 + 8);
    for (let s0 = 0; s0 < nSamples; s0 += 64) {
      const s1 = min(nSamples, s0 + 64);
      for (let t = t0; t < t1; t++) {
        const o = data + (<usize>t * <usize>nSamples << 2);
        for (let s = s0; s < s1; s++) store<f32>(out + ((<usize>s * <usize>nTraces + <usize>t) << 2), load<f32>(o + (<usize>s << 2)));
      }
    }
  }
}

/**
 * One window of `movingMedian` (../src/background.ts): at each sample s the median of the m values at
 * bySample + 4 (s nTraces + a), into bg[s] (float32) with the value of rank m >> 1 into kth[s] (float64).
 * The median is one value, or the mean of two, whichever way it is selected, but for the sign of a zero:
 * flags[s] = 1 where it or the value below it is zero, or the window holds NaN, for the JavaScript
 * selection to decide (bg[s] and kth[s] are then not written).
 * The way here is `WindowMedian.of`'s: one pass without branches counts the values below and above a
 * bracket (float32 lo[s], hi[s]: the last window's values of rank k -+ `spread`; -+Infinity at first,
 * `first` set) and keeps those inside in `mid`; the median is selected among them, or, when it moved out
 * of the bracket, among the values on its side (`side`). mid and side hold m + 1 float32 numbers each.
 */
export function windowMedians(bySample: usize, nTraces: i32, a: i32, m: i32, nSamples: i32, first: bool, spread: i32, lo: usize, hi: usize, mid: usize, side: usize, bg: usize, kth: usize, flags: usize): void {
  const k = m >> 1;
  for (let s = 0; s < nSamples; s++) {
    const src = bySample + ((<usize>s * <usize>nTraces + <usize>a) << 2);
    // the first window's bracket: that of the sample before (oversampled traces: its median is near)
    const b = <usize>(first && s > 0 ? s - 1 : s) << 2;
    const g1 = load<f32>(lo + b);
    const g2 = load<f32>(hi + b);
    let nLow = 0;
    let nMid = 0;
    let nHigh = 0;
    for (let i = 0; i < m; i++) {
      const x = load<f32>(src + (<usize>i << 2));
      store<f32>(mid + (<usize>nMid << 2), x);
      nLow += <i32>(x < g1);
      nHigh += <i32>(x > g2);
      nMid += <i32>(x >= g1) & <i32>(x <= g2);
    }
    if (nLow + nMid + nHigh != m) {
      store<u8>(flags + s, 1);
      store<f32>(lo + (<usize>s << 2), -Infinity);
      store<f32>(hi + (<usize>s << 2), Infinity);
      continue;
    }
    let part = mid;
    let n = nMid;
    let r = k - nLow;
    let floor: f32 = g1;
    let ceil: f32 = g2;
    if (r < 0) {
      n = 0;
      for (let i = 0; i < m; i++) {
        const x = load<f32>(src + (<usize>i << 2));
        store<f32>(side + (<usize>n << 2), x);
        n += <i32>(x < g1);
      }
      part = side;
      r = k;
      floor = -Infinity;
      ceil = g1;
    } else if (r >= nMid) {
      n = 0;
      for (let i = 0; i < m; i++) {
        const x = load<f32>(src + (<usize>i << 2));
        store<f32>(side + (<usize>n << 2), x);
        n += <i32>(x > g2);
      }
      part = side;
      r = k - nLow - nMid;
      floor = g2;
      ceil = Infinity;
    }
    const h = selectRank<f32>(part, 0, n - 1, r);
    let med = <f64>h;
    let flag = h == 0;
    if (!(m & 1)) {
      // the largest value of rank below k: in the part before rank r, or the largest under the part
      let below: f32 = -Infinity;
      if (r > 0) for (let i = 0; i < r; i++) below = max(below, load<f32>(part + (<usize>i << 2)));
      else if (part == mid) {
        for (let i = 0; i < m; i++) {
          const x = load<f32>(src + (<usize>i << 2));
          if (x < g1) below = max(below, x);
        }
      } else {
        for (let i = 0; i < m; i++) {
          const x = load<f32>(src + (<usize>i << 2));
          if (x <= g2) below = max(below, x);
        }
      }
      flag = flag || below == 0;
      med = 0.5 * (<f64>below + med);
    }
    store<u8>(flags + s, flag ? 1 : 0);
    store<f32>(lo + (<usize>s << 2), r - spread >= 0 ? selectRank<f32>(part, 0, r - 1, r - spread) : floor);
    store<f32>(hi + (<usize>s << 2), r + spread < n ? selectRank<f32>(part, r + 1, n - 1, r + spread) : ceil);
    if (flag) continue;
    store<f64>(kth + (<usize>s << 3), <f64>h);
    store<f32>(bg + (<usize>s << 2), <f32>med);
  }
}

/**
 * The last loop of `movingMedian`: each trace minus its background, linear between the median traces of
 * the centres around it. centres (int32, nC, ascending) are traces; trace c of centre index k is
 * bg + 4 nSamples which[k].
 */
export function subtractBackground(data: usize, out: usize, nTraces: i32, nSamples: i32, bg: usize, centres: usize, which: usize, nC: i32): void {
  let k = 0;
  for (let t = 0; t < nTraces; t++) {
    while (k < nC - 2 && load<i32>(centres + (<usize>(k + 1) << 2)) <= t) k++;
    const k1 = min(k + 1, nC - 1);
    const c0 = load<i32>(centres + (<usize>k << 2));
    const c1 = load<i32>(centres + (<usize>k1 << 2));
    const f: f64 = c1 > c0 ? <f64>(t - c0) / <f64>(c1 - c0) : 0;
    const b0 = bg + (<usize>load<i32>(which + (<usize>k << 2)) * <usize>nSamples << 2);
    const b1 = bg + (<usize>load<i32>(which + (<usize>k1 << 2)) * <usize>nSamples << 2);
    const o = <usize>t * <usize>nSamples << 2;
    for (let s = 0; s < nSamples; s++) {
      const p = <f64>load<f32>(b0 + (<usize>s << 2));
      const q = <f64>load<f32>(b1 + (<usize>s << 2));
      store<f32>(out + o + (<usize>s << 2), <f32>(<f64>load<f32>(data + o + (<usize>s << 2)) - (p + f * (q - p))));
    }
  }
}

export { fkTraces, fkColumns, rotateBins, stoltInterpolate, stoltAcross, stoltTime } from './stolt';
export { dewowLine, envelopeLine, pickLine, resampleLine, shiftLine, subtractMeanTrace } from './trace-ops';

/** Where the module's own static data ends: arrays laid out from JavaScript start at or after it. */
export function heapBase(): usize {
  return __heap_base;
}
