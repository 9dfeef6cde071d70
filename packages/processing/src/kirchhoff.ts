import type { RadarLine } from '@lamina/radar-data';
import { fftOfSize, nextPow2 } from './fft';
import { alongTrackM, outputFor, withData } from './line-util';

export interface KirchhoffOptions {
  /** Constant velocity of the ground, m/ns. */
  velocityMPerNs: number;
  /** Antenna separation along the line, m (bistatic travel times). @default 0 */
  separationM?: number;
  /** Largest half-aperture, m. @default 2 */
  apertureM?: number;
  /** Largest angle from the vertical summed over; the half-aperture at depth z is min(apertureM, z tan(angle)). @default 60 */
  maxAngleDeg?: number;
  /** Fraction of the aperture at its edge tapered by a cosine. @default 0.2 */
  taper?: number;
  /**
   * Apply the 2D half-derivative filter before summing. It keeps reflectors (and diffractions modelled by
   * 2D wave propagation) zero-phase; a diffraction made of the source wavelet at ray travel times
   * focuses zero-phase without it (it would then lag by 45 degrees). Phase does not matter to
   * envelope-based slices. @default false
   */
  halfDerivative?: boolean;
  /** Metres per CRS unit of `line.x/y`. @default 1 */
  metresPerUnit?: number;
}

/**
 * Half-derivative filter sqrt(|omega|) e^{-i pi/4 sgn(omega)} of every trace (omega in rad/ns; forward FFT
 * e^{-i omega t}), by FFT with zero padding to a power of two >= 2 nSamples. It undoes the +45 degree
 * phase lead and the 1/sqrt(omega) amplitude that 2D diffraction summation gives a reflector
 * (stationary phase along the summation curve).
 */
export function halfDerivative(data: Float32Array, nSamples: number, dtNs: number): Float32Array {
  const nt = data.length / nSamples;
  const n = nextPow2(2 * nSamples);
  const f = fftOfSize(n);
  const real = new Float64Array(n);
  const spec = new Float64Array(2 * n);
  const back = new Float64Array(2 * n);
  const res = new Float32Array(data.length);
  const half = n / 2;
  const c = Math.SQRT1_2;
  for (let t = 0; t < nt; t++) {
    real.fill(0);
    for (let i = 0; i < nSamples; i++) real[i] = data[t * nSamples + i] as number;
    f.realTransform(spec, real);
    spec[0] = 0;
    spec[1] = 0;
    for (let k = 1; k <= half; k++) {
      const a = Math.sqrt((2 * Math.PI * k) / (n * dtNs));
      const re = spec[2 * k] as number;
      const im = spec[2 * k + 1] as number;
      // multiply by a * e^{-i pi/4}
      spec[2 * k] = a * c * (re + im);
      spec[2 * k + 1] = a * c * (im - re);
    }
    spec[2 * half + 1] = 0;
    for (let k = 1; k < half; k++) {
      spec[2 * (n - k)] = spec[2 * k] as number;
      spec[2 * (n - k) + 1] = -(spec[2 * k + 1] as number);
    }
    f.inverseTransform(back, spec);
    for (let i = 0; i < nSamples; i++) res[t * nSamples + i] = back[2 * i] as number;
  }
  return res;
}

/**
 * Constant-velocity 2D Kirchhoff (diffraction-summation) time migration with a bounded aperture, for a
 * common-offset line with the antennas `separationM` apart along it. Output sample at apex time t0
 * (after time-zero) of trace j sums the input along the bistatic diffraction curve of a point at depth
 * z = sqrt((v t0 / 2)^2 - (s/2)^2) under trace j, t(dx) = (sqrt((dx - s/2)^2 + z^2) + sqrt((dx + s/2)^2 + z^2)) / v,
 * with weights dx_i cos(theta) / sqrt(2 pi (v/2) r) (the 2D Kirchhoff weight in the exploding-reflector model, r
 * the mean one-way distance; dx_i the local trace spacing, so irregular spacing is integrated properly). With
 * `halfDerivative` a flat reflector keeps its time and amplitude. Samples above the shallowest point (v t0 / 2 <= s/2) pass
 * through unchanged. `out` may be `line.data`.
 */
export function kirchhoffMigrate(line: RadarLine, options: KirchhoffOptions, out?: Float32Array): RadarLine {
  const v = options.velocityMPerNs;
  if (!(v > 0)) throw new Error(`migration: velocity must be > 0 m/ns, found ${v}`);
  const h = (options.separationM ?? 0) / 2;
  const apertureM = options.apertureM ?? 2;
  const tanMax = Math.tan(((options.maxAngleDeg ?? 60) * Math.PI) / 180);
  const taper = Math.min(1, Math.max(0, options.taper ?? 0.2));
  const { nSamples: ns, nTraces: nt, dtNs: dt, timeZeroNs: tz } = line;
  const { src, dst } = outputFor(line, out);
  const input = options.halfDerivative ? halfDerivative(src, ns, dt) : src;
  const s = alongTrackM(line, options.metresPerUnit ?? 1);
  // trapezoid weights of an irregular line
  const ds = new Float64Array(nt);
  for (let i = 0; i < nt; i++) {
    const a = i > 0 ? (s[i] as number) - (s[i - 1] as number) : 0;
    const b = i < nt - 1 ? (s[i + 1] as number) - (s[i] as number) : 0;
    ds[i] = nt === 1 ? 1 : (a + b) / 2;
  }
  const zOf = new Float64Array(ns);
  for (let k = 0; k < ns; k++) {
    const r0 = (v * (k * dt - tz)) / 2;
    zOf[k] = k * dt - tz > 0 && r0 > h ? Math.sqrt(r0 * r0 - h * h) : -1;
  }
  const acc = new Float64Array(ns);
  let lo = 0;
  for (let j = 0; j < nt; j++) {
    const sj = s[j] as number;
    while ((s[lo] as number) < sj - apertureM) lo++;
    acc.fill(0);
    for (let i = lo; i < nt && (s[i] as number) <= sj + apertureM; i++) {
      const dx = (s[i] as number) - sj;
      const adx = Math.abs(dx);
      const o = i * ns;
      const wi = ds[i] as number;
      for (let k = 0; k < ns; k++) {
        const z = zOf[k] as number;
        if (z < 0) continue;
        const a = Math.min(apertureM, z * tanMax);
        if (adx > a) continue;
        const r1 = Math.sqrt((dx - h) * (dx - h) + z * z);
        const r2 = Math.sqrt((dx + h) * (dx + h) + z * z);
        const u = ((r1 + r2) / v + tz) / dt;
        const iu = Math.floor(u);
        if (iu >= ns - 1) break; // times only grow with k on this trace
        const fr = u - iu;
        const r = (r1 + r2) / 2;
        let w = (wi * z) / (r * Math.sqrt(Math.PI * v * r));
        const edge = a * (1 - taper);
        if (adx > edge && a > edge) w *= 0.5 * (1 + Math.cos((Math.PI * (adx - edge)) / (a - edge)));
        acc[k] = (acc[k] as number) + w * ((input[o + iu] as number) * (1 - fr) + (input[o + iu + 1] as number) * fr);
      }
    }
    for (let k = 0; k < ns; k++) dst[j * ns + k] = (zOf[k] as number) < 0 ? (src[j * ns + k] as number) : (acc[k] as number);
  }
  return withData(line, dst);
}
