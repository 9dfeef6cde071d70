import type { Rng } from './prng';

/**
 * Smooth random fields and coloured noise for the richer scenes (rough ground, patchy layers, coupling
 * along a line). Seeded through the caller's `Rng`, so a scenario gives the same bytes on every run.
 */

/**
 * A stationary Gaussian random field of unit variance with correlation length `lengthM` (Gaussian
 * spectrum), as a sum of `waves` cosines of random direction, wavenumber and phase (spectral
 * synthesis): f(x, y) = sqrt(2 / N) sum cos(kx x + ky y + phi).
 */
export function randomField(r: Rng, lengthM: number, waves = 48): (x: number, y: number) => number {
  const kx = new Float64Array(waves), ky = new Float64Array(waves), ph = new Float64Array(waves);
  for (let i = 0; i < waves; i++) {
    // a Gaussian covariance exp(-d^2 / L^2) has a Gaussian spectrum of std sqrt(2) / L per component
    kx[i] = (r.gauss() * Math.SQRT2) / lengthM;
    ky[i] = (r.gauss() * Math.SQRT2) / lengthM;
    ph[i] = r.next() * 2 * Math.PI;
  }
  const s = Math.sqrt(2 / waves);
  return (x, y) => {
    let v = 0;
    for (let i = 0; i < waves; i++) v += Math.cos(kx[i]! * x + ky[i]! * y + ph[i]!);
    return s * v;
  };
}

/** Inverse of the standard normal distribution function (Acklam's rational approximation, from memory; |error| < 1.2e-9). */
export function normalQuantile(p: number): number {
  const a = [-39.69683028665376, 220.9460984245205, -275.9285104469687, 138.357751867269, -30.66479806614716, 2.506628277459239];
  const b = [-54.47609879822406, 161.5858368580409, -155.6989798598866, 66.80131188771972, -13.28068155288572];
  const c = [-0.007784894002430293, -0.3223964580411365, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
  const d = [0.007784695709041462, 0.3224671290700398, 2.445134137142996, 3.754408661907416];
  const q0 = Math.min(Math.max(p, 1e-12), 1 - 1e-12);
  if (q0 < 0.02425 || q0 > 1 - 0.02425) {
    const q = Math.sqrt(-2 * Math.log(q0 < 0.5 ? q0 : 1 - q0));
    const v = (((((c[0]! * q + c[1]!) * q + c[2]!) * q + c[3]!) * q + c[4]!) * q + c[5]!) / ((((d[0]! * q + d[1]!) * q + d[2]!) * q + d[3]!) * q + 1);
    return q0 < 0.5 ? v : -v;
  }
  const q = q0 - 0.5, t = q * q;
  return ((((((a[0]! * t + a[1]!) * t + a[2]!) * t + a[3]!) * t + a[4]!) * t + a[5]!) * q) / (((((b[0]! * t + b[1]!) * t + b[2]!) * t + b[3]!) * t + b[4]!) * t + 1);
}

/**
 * Pink (1/f power) noise of unit variance: a sum of `octaves` first-order autoregressive processes whose
 * corner frequencies are an octave apart from Nyquist down, each of unit variance, so every octave in
 * between carries about the same power (the usual sum-of-relaxations construction of 1/f noise).
 */
export function pinkNoise(r: Rng, n: number, out: Float64Array = new Float64Array(n), octaves = 10): Float64Array {
  const p = new Float64Array(octaves), g = new Float64Array(octaves), x = new Float64Array(octaves);
  for (let k = 0; k < octaves; k++) {
    p[k] = Math.exp(-Math.PI / 2 ** k); // corner at fs / 2^(k+1)
    g[k] = Math.sqrt(1 - p[k]! * p[k]!);
    x[k] = r.gauss();
  }
  const s = 1 / Math.sqrt(octaves);
  for (let i = 0; i < n; i++) {
    let v = 0;
    for (let k = 0; k < octaves; k++) {
      x[k] = p[k]! * x[k]! + g[k]! * r.gauss();
      v += x[k]!;
    }
    out[i] = v * s;
  }
  return out;
}
