// The noise level of a line's envelope (the median across traces at each time) and the quickselect median it uses.

/** Median of `a` (reordered in place), by quickselect (Hoare), mean of the two middle values for even length. */
export function median(a: Float32Array): number {
  const n = a.length;
  if (n === 0) return Number.NaN;
  const k = n >> 1;
  const hi = select(a, k);
  if (n % 2) return hi;
  let lo = -Infinity;
  for (let i = 0; i < k; i++) if (a[i]! > lo) lo = a[i]!;
  return 0.5 * (lo + hi);
}

function select(a: Float32Array, k: number): number {
  let l = 0;
  let r = a.length - 1;
  while (l < r) {
    const x = a[(l + r) >> 1]!;
    let i = l;
    let j = r;
    while (i <= j) {
      while (a[i]! < x) i++;
      while (a[j]! > x) j--;
      if (i <= j) {
        const t = a[i]!;
        a[i] = a[j]!;
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) r = j;
    else if (k >= i) l = i;
    else break;
  }
  return a[k]!;
}

/**
 * Noise level per sample: the median of the envelope across traces, smoothed over `smooth` samples
 * either side, and never below `floorFraction` of the envelope's maximum (noise-free data would
 * otherwise divide by zero).
 */
export function envelopeLevel(env: Float32Array, nTraces: number, nSamples: number, smooth: number, floorFraction = 1e-3): Float64Array {
  const level = new Float64Array(nSamples);
  // At most 128 traces spread over the line: a median of 128 is within 0.11 standard deviations of the line's.
  const every = Math.max(1, Math.ceil(nTraces / 128));
  const col = new Float32Array(Math.ceil(nTraces / every));
  let max = 0;
  for (let i = 0; i < env.length; i++) if (env[i]! > max) max = env[i]!;
  for (let s = 0; s < nSamples; s++) {
    for (let t = 0, m = 0; t < nTraces; t += every) col[m++] = env[t * nSamples + s]!;
    level[s] = median(col);
  }
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
