/**
 * Per-trace Hilbert envelope |x + i H(x)| of a trace-major block, by FFT (analytic signal: zero the
 * negative frequencies, double the positive ones). Zero-padded to a power of two, so the ends see a
 * little less ringing than a circular transform of the raw length.
 */
export function envelopeTraces(data: Float32Array, nTraces: number, nSamples: number, out?: Float32Array): Float32Array {
  const env = out ?? new Float32Array(nTraces * nSamples);
  let n = 1;
  while (n < nSamples * 2) n <<= 1;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  const tw = twiddles(n);
  for (let t = 0; t < nTraces; t++) {
    re.fill(0);
    im.fill(0);
    const o = t * nSamples;
    for (let s = 0; s < nSamples; s++) re[s] = data[o + s]!;
    fft(re, im, tw, false);
    for (let k = 1; k < n / 2; k++) {
      re[k] = re[k]! * 2;
      im[k] = im[k]! * 2;
    }
    for (let k = n / 2 + 1; k < n; k++) {
      re[k] = 0;
      im[k] = 0;
    }
    fft(re, im, tw, true);
    for (let s = 0; s < nSamples; s++) env[o + s] = Math.sqrt(re[s]! * re[s]! + im[s]! * im[s]!) / n;
  }
  return env;
}

/**
 * Dominant frequency (MHz) of a block: the centroid of the mean power spectrum over all traces.
 * Used for pick windows when the antenna frequency is not given.
 */
export function dominantFrequencyMHz(data: Float32Array, nTraces: number, nSamples: number, dtNs: number): number {
  let n = 1;
  while (n < nSamples) n <<= 1;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  const tw = twiddles(n);
  const power = new Float64Array(n / 2);
  const stride = Math.max(1, Math.floor(nTraces / 64));
  for (let t = 0; t < nTraces; t += stride) {
    re.fill(0);
    im.fill(0);
    for (let s = 0; s < nSamples; s++) re[s] = data[t * nSamples + s]!;
    fft(re, im, tw, false);
    for (let k = 1; k < n / 2; k++) power[k] = power[k]! + re[k]! ** 2 + im[k]! ** 2;
  }
  let num = 0;
  let den = 0;
  for (let k = 1; k < n / 2; k++) {
    num += k * power[k]!;
    den += power[k]!;
  }
  if (den === 0) return Number.NaN;
  return ((num / den) / (n * dtNs)) * 1000;
}

function twiddles(n: number): { cos: Float64Array; sin: Float64Array } {
  const cos = new Float64Array(n / 2);
  const sin = new Float64Array(n / 2);
  for (let k = 0; k < n / 2; k++) {
    cos[k] = Math.cos((2 * Math.PI * k) / n);
    sin[k] = Math.sin((2 * Math.PI * k) / n);
  }
  return { cos, sin };
}

/** In-place iterative radix-2 FFT (unnormalised both ways). */
function fft(re: Float64Array, im: Float64Array, tw: { cos: Float64Array; sin: Float64Array }, inverse: boolean): void {
  const n = re.length;
  for (let i = 1, j = 0; i < n; i++) {
    let bit = n >> 1;
    for (; j & bit; bit >>= 1) j ^= bit;
    j ^= bit;
    if (i < j) {
      const tr = re[i]!;
      re[i] = re[j]!;
      re[j] = tr;
      const ti = im[i]!;
      im[i] = im[j]!;
      im[j] = ti;
    }
  }
  const sign = inverse ? 1 : -1;
  for (let len = 2; len <= n; len <<= 1) {
    const half = len >> 1;
    const step = n / len;
    for (let i = 0; i < n; i += len) {
      for (let k = 0; k < half; k++) {
        const c = tw.cos[k * step]!;
        const s = sign * tw.sin[k * step]!;
        const a = i + k;
        const b = a + half;
        const xr = re[b]! * c - im[b]! * s;
        const xi = re[b]! * s + im[b]! * c;
        re[b] = re[a]! - xr;
        im[b] = im[a]! - xi;
        re[a] = re[a]! + xr;
        im[a] = im[a]! + xi;
      }
    }
  }
}
