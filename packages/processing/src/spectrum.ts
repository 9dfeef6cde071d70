import { fftOfSize, nextPow2 } from './fft';

/**
 * Dominant frequency (MHz) of a trace-major block: the centroid of the mean power spectrum of up to
 * 64 traces spread over the block. For pick windows and periods when the antenna frequency is not given.
 * NaN for an all-zero block.
 */
export function spectralCentroidMHz(data: Float32Array, nTraces: number, nSamples: number, dtNs: number): number {
  const n = nextPow2(nSamples);
  const fft = fftOfSize(n);
  const real = new Float64Array(n);
  const spec = new Float64Array(2 * n);
  const power = new Float64Array(n / 2);
  const stride = Math.max(1, Math.floor(nTraces / 64));
  for (let t = 0; t < nTraces; t += stride) {
    for (let s = 0; s < nSamples; s++) real[s] = data[t * nSamples + s] as number;
    real.fill(0, nSamples);
    fft.realTransform(spec, real);
    for (let k = 1; k < n / 2; k++) power[k] = (power[k] as number) + (spec[2 * k] as number) ** 2 + (spec[2 * k + 1] as number) ** 2;
  }
  let num = 0;
  let den = 0;
  for (let k = 1; k < n / 2; k++) {
    num += k * (power[k] as number);
    den += power[k] as number;
  }
  if (den === 0) return Number.NaN;
  return (num / den / (n * dtNs)) * 1000;
}
