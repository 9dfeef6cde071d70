/**
 * Ricker wavelet (the negative normalised second derivative of a Gaussian):
 * r(t) = (1 - 2 pi^2 f^2 t^2) exp(-pi^2 f^2 t^2), peak frequency f, zero crossings at t = +-1/(pi f sqrt 2).
 * t in ns, f in GHz (MHz / 1000).
 */
export function ricker(tNs: number, frequencyMHz: number): number {
  const a = Math.PI * (frequencyMHz / 1000) * tNs;
  const a2 = a * a;
  return (1 - 2 * a2) * Math.exp(-a2);
}

/** Time of the positive zero crossing of the Ricker wavelet, ns. */
export function rickerZeroCrossingNs(frequencyMHz: number): number {
  return 1 / (Math.PI * (frequencyMHz / 1000) * Math.SQRT2);
}

/** Half-width (ns) beyond which the wavelet stays below 1e-6 of its peak: |pi f t| > 4.2. */
export function rickerHalfWidthNs(frequencyMHz: number): number {
  return 4.2 / (Math.PI * (frequencyMHz / 1000));
}

/** Sampled Ricker wavelet centred at `centreNs` on `n` samples of `dtNs` (for tests and noise shaping). */
export function rickerSeries(n: number, dtNs: number, frequencyMHz: number, centreNs: number, out = new Float64Array(n)): Float64Array {
  for (let i = 0; i < n; i++) out[i] = ricker(i * dtNs - centreNs, frequencyMHz);
  return out;
}

/**
 * Add `amplitude * r(t - arrivalNs)` to one trace in place, evaluated at the exact (fractional) arrival
 * so sub-sample timing is kept. Only the samples where the wavelet is not negligible are touched.
 */
export function addRicker(trace: Float64Array, dtNs: number, arrivalNs: number, amplitude: number, frequencyMHz: number): void {
  const half = rickerHalfWidthNs(frequencyMHz);
  const i0 = Math.max(0, Math.ceil((arrivalNs - half) / dtNs));
  const i1 = Math.min(trace.length - 1, Math.floor((arrivalNs + half) / dtNs));
  const k = Math.PI * (frequencyMHz / 1000);
  for (let i = i0; i <= i1; i++) {
    const a = k * (i * dtNs - arrivalNs);
    const a2 = a * a;
    trace[i] = (trace[i] as number) + amplitude * (1 - 2 * a2) * Math.exp(-a2);
  }
}
