// `envelopeLevel` (../src/noise-level.ts) and `normalised` (../src/detect.ts) of a line in WebAssembly:
// the same medians, sums and float32 roundings, so the same numbers.
import { medianOf } from './median';

/**
 * The noise level of the float32 envelope at env (nTraces x nSamples) into level (float64, nSamples), and
 * the envelope divided by it, as float32, into N. `cols` holds ceil(nTraces / every) x nSamples float32
 * numbers, every = ceil(nTraces / 128). No NaN in env.
 */
export function normalisedEnvelope(env: usize, nTraces: i32, nSamples: i32, smooth: i32, floorFraction: f64, cols: usize, raw: usize, level: usize, N: usize): void {
  const every = max(1, <i32>Math.ceil(<f64>nTraces / 128));
  const m = <i32>Math.ceil(<f64>nTraces / <f64>every);
  const n = nTraces * nSamples;
  let mx: f64 = 0;
  for (let i = 0; i < n; i++) {
    const x = <f64>load<f32>(env + (<usize>i << 2));
    if (x > mx) mx = x;
  }
  for (let t = 0, j = 0; t < nTraces; t += every, j++) {
    const o = t * nSamples;
    for (let s = 0; s < nSamples; s++) store<f32>(cols + (<usize>(s * m + j) << 2), load<f32>(env + (<usize>(o + s) << 2)));
  }
  for (let s = 0; s < nSamples; s++) store<f64>(raw + (<usize>s << 3), medianOf(cols + (<usize>(s * m) << 2), m));
  const floor = max(mx * floorFraction, 5e-324);
  for (let s = 0; s < nSamples; s++) {
    let acc: f64 = 0;
    let cnt = 0;
    for (let k = max(0, s - smooth); k <= min(nSamples - 1, s + smooth); k++) {
      acc += load<f64>(raw + (<usize>k << 3));
      cnt++;
    }
    store<f64>(level + (<usize>s << 3), max(acc / <f64>cnt, floor));
  }
  // normalised: the inverse level rounded to float32 (`Float32Array.from(level, (l) => 1 / l)`), the product too
  for (let s = 0; s < nSamples; s++) store<f32>(raw + (<usize>s << 2), <f32>(1 / load<f64>(level + (<usize>s << 3))));
  for (let t = 0; t < nTraces; t++) {
    const o = t * nSamples;
    for (let s = 0; s < nSamples; s++) {
      const p = <usize>(o + s) << 2;
      store<f32>(N + p, <f32>(<f64>load<f32>(env + p) * <f64>load<f32>(raw + (<usize>s << 2))));
    }
  }
}

/**
 * `apexCandidates` of ../src/detect.ts: the local maxima of N (float32, nTraces x nSamples) at samples
 * [sStart, sEnd) at or above `threshold` over -+nbT traces and -+halfS samples (ties to the earlier trace,
 * then the earlier sample), in trace then sample order, as (trace, sample) int32 pairs into out; returns
 * their count.
 */
export function apexMaxima(N: usize, nTraces: i32, nSamples: i32, sStart: i32, sEnd: i32, threshold: f64, nbT: i32, halfS: i32, out: usize): i32 {
  let count = 0;
  for (let t = 0; t < nTraces; t++) {
    for (let s = sStart; s < sEnd; s++) {
      const v = load<f32>(N + (<usize>(t * nSamples + s) << 2));
      if (<f64>v < threshold) continue;
      let isMax = true;
      for (let dt = -nbT; dt <= nbT && isMax; dt++) {
        const tt = t + dt;
        if (tt < 0 || tt >= nTraces) continue;
        for (let ds = -halfS; ds <= halfS; ds++) {
          const ss = s + ds;
          if (ss < 0 || ss >= nSamples || (dt == 0 && ds == 0)) continue;
          const u = load<f32>(N + (<usize>(tt * nSamples + ss) << 2));
          if (u > v || (u == v && (dt < 0 || (dt == 0 && ds < 0)))) {
            isMax = false;
            break;
          }
        }
      }
      if (isMax) {
        store<i32>(out + (<usize>(2 * count) << 2), t);
        store<i32>(out + (<usize>(2 * count + 1) << 2), s);
        count++;
      }
    }
  }
  return count;
}
