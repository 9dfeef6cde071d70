// The noise level of a line's envelope: the median across traces at each time.
import { medianInPlace as median } from '@lamina/stats';

/**
 * Noise level per sample: the median of the envelope across traces, smoothed over `smooth` samples
 * either side, and never below `floorFraction` of the envelope's maximum (noise-free data would
 * otherwise divide by zero).
 */
export function envelopeLevel(env: Float32Array, nTraces: number, nSamples: number, smooth: number, floorFraction = 1e-3): Float64Array {
  const level = new Float64Array(nSamples);
  // At most 128 traces spread over the line: a median of 128 is within 0.11 standard deviations of the line's.
  const every = Math.max(1, Math.ceil(nTraces / 128));
  const m = Math.ceil(nTraces / every);
  let max = 0;
  for (let i = 0; i < env.length; i++) if (env[i]! > max) max = env[i]!;
  // the chosen traces sample-major, read along each trace: gathered across the line at each sample, every
  // value was a cache miss
  const cols = new Float32Array(m * nSamples);
  for (let t = 0, j = 0; t < nTraces; t += every, j++) {
    const o = t * nSamples;
    for (let s = 0; s < nSamples; s++) cols[s * m + j] = env[o + s]!;
  }
  // neighbouring samples have near medians: each selection starts from the one before
  for (let s = 0; s < nSamples; s++) level[s] = median(cols.subarray(s * m, (s + 1) * m), s > 0 ? level[s - 1] : undefined);
  const out = new Float64Array(nSamples);
  const floor = Math.max(max * floorFraction, Number.MIN_VALUE);
  for (let s = 0; s < nSamples; s++) {
    let acc = 0;
    let cnt = 0;
    for (let k = Math.max(0, s - smooth); k <= Math.min(nSamples - 1, s + smooth); k++) {
      acc += level[k]!;
      cnt++;
    }
    out[s] = Math.max(acc / cnt, floor);
  }
  return out;
}
