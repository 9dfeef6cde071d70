import type { RadarLine } from '@lamina/radar-data';
import { dipWeigher, fk2d, fkLine, halfOrderFilter, ifk2d, kxOf, paddedSizes, shiftSpectrum, type FkLineOptions } from './fk';

export interface StoltOptions extends FkLineOptions {
  /** Constant velocity of the ground, m/ns. */
  velocityMPerNs: number;
}

/** Options of the flat kernel. */
export interface StoltKernelOptions {
  /** @default 60 */
  maxAngleDeg?: number;
  /** @default 0.2 */
  taper?: number;
  /** Run the inverse (Stolt modelling, demigration). @default false */
  inverse?: boolean;
  /** Kirchhoff's half-aperture, m, as one dip limit for the line (see `stoltDipLimit`). @default Infinity */
  apertureM?: number;
  /** Half-integral of the input before migration (half-derivative of the output after modelling). @default false */
  halfIntegral?: boolean;
  /** Frequencies holding this fraction of the energy are dropped from the ends of the band (`band`, fk.ts). @default 0 */
  energyTolerance?: number;
}

const HALF_TAPS = 4;

/**
 * Windowed-sinc interpolation along omega of row `row` of a centred spectrum at fractional bin `u`: 8 taps,
 * Hann window, weights normalised to sum 1. Negative bins are conjugates of the row of -kx (`rowc`), bins
 * past Nyquist zero. The spectrum was centred (traces shifted so their support is [-T/4, T/4] of the padded
 * length T), so along omega it is oversampled twice (round trips in the tests: below 1 % RMS).
 * The value is returned in `ip` times e^{-i pi u / 2}, the shift back by T/4 at bin u (Stolt's e^{-i w T/4}).
 */
function interpolate(spec: Float64Array, row: number, rowc: number, nw: number, u: number, ip: Float64Array): void {
  const i0 = Math.floor(u);
  const f = u - i0;
  let re = 0;
  let im = 0;
  let c2 = 1;
  let s2 = 0;
  if (f === 0) {
    if (i0 < nw) {
      re = spec[row + 2 * i0] as number;
      im = spec[row + 2 * i0 + 1] as number;
    }
  } else {
    // sinc(d) for the taps n = i0 - q, d = f + q, is (-1)^q sin(pi f) / (pi d): the common factor cancels
    // in the normalisation; the Hann term by angle addition
    const cf4 = Math.cos((Math.PI * f) / HALF_TAPS);
    const sf4 = Math.sin((Math.PI * f) / HALF_TAPS);
    let ws = 0;
    for (let q = -HALF_TAPS; q < HALF_TAPS; q++) {
      const hann = 0.5 * (1 + cf4 * (COS_Q[q + HALF_TAPS] as number) - sf4 * (SIN_Q[q + HALF_TAPS] as number));
      const w = ((q & 1 ? -hann : hann) / (f + q));
      ws += w;
      const n = i0 - q;
      if (n >= nw) continue;
      if (n >= 0) {
        re += w * (spec[row + 2 * n] as number);
        im += w * (spec[row + 2 * n + 1] as number);
      } else {
        re += w * (spec[rowc - 2 * n] as number);
        im -= w * (spec[rowc - 2 * n + 1] as number);
      }
    }
    re /= ws;
    im /= ws;
    // e^{-i pi f / 2} from the quarter angle
    c2 = cf4 * cf4 - sf4 * sf4;
    s2 = 2 * sf4 * cf4;
  }
  // times (c2 - i s2), then (-i)^i0
  const r = re * c2 + im * s2;
  const i = im * c2 - re * s2;
  switch (i0 & 3) {
    case 0:
      ip[0] = r;
      ip[1] = i;
      break;
    case 1:
      ip[0] = i;
      ip[1] = -r;
      break;
    case 2:
      ip[0] = -r;
      ip[1] = -i;
      break;
    default:
      ip[0] = -i;
      ip[1] = r;
  }
}

const COS_Q = Float64Array.from({ length: 2 * HALF_TAPS }, (_, i) => Math.cos((Math.PI * (i - HALF_TAPS)) / HALF_TAPS));
const SIN_Q = Float64Array.from({ length: 2 * HALF_TAPS }, (_, i) => Math.sin((Math.PI * (i - HALF_TAPS)) / HALF_TAPS));

/**
 * Stolt (1978) f-k migration of a zero-offset section, or with `inverse` its modelling (demigration), for
 * a constant velocity v in the exploding-reflector model (v/2 for two-way time). Traces at a regular
 * spacing `dxM`; sample k at k dt - timeZeroNs after time-zero on both axes.
 *
 * Migration: M(kx, w_tau) = cos(theta) P(kx, w), w = sqrt(w_tau^2 + (v kx / 2)^2), cos(theta) = w_tau / w
 * (the Jacobian dw / dw_tau of the change of variable, the obliquity factor), sin(theta) = v |kx| / (2 w) limited by
 * `dipWeight`. Modelling: P(kx, w) = M(kx, w_tau) / cos(theta), w_tau = sqrt(w^2 - (v kx / 2)^2), with the
 * same dip limit, so modelling inverts migration inside the dip limit. Padding by `paddedSizes` (twice the
 * samples in time); interpolation along the frequency axis by `interpolate`.
 */
export function stoltKernel(
  data: ArrayLike<number>,
  nTraces: number,
  nSamples: number,
  dtNs: number,
  dxM: number,
  timeZeroNs: number,
  velocityMPerNs: number,
  options: StoltKernelOptions = {},
  out: Float32Array = new Float32Array(nTraces * nSamples),
): Float32Array {
  const v = velocityMPerNs;
  if (!(v > 0)) throw new Error(`migration: velocity must be > 0 m/ns, found ${v}`);
  const angle = stoltDipLimit(nSamples, dtNs, timeZeroNs, v / 2, options.maxAngleDeg ?? 60, options.apertureM ?? Infinity);
  return stoltMap(data, nTraces, nSamples, dtNs, dxM, timeZeroNs, v, options, angle, out);
}

/**
 * Kirchhoff's aperture as Stolt's one dip limit, degrees. Stolt's operator cannot vary with depth, so a
 * line gets the angle Kirchhoff's summation reaches half-way down the record, min(maxAngle,
 * atan(apertureM / z_mid)), z_mid = v_e (t_end - timeZero) / 2: shallower it passes a little less than
 * Kirchhoff, deeper a little more (phase-shift applies the depth-dependent limit exactly, at no extra cost).
 * One limit, not a blend of several, because each limit costs a full inverse transform.
 */
export function stoltDipLimit(nSamples: number, dtNs: number, timeZeroNs: number, ve: number, maxAngleDeg: number, apertureM: number): number {
  const zMid = (ve * ((nSamples - 1) * dtNs - timeZeroNs)) / 2;
  if (!(zMid > 0) || !Number.isFinite(apertureM)) return maxAngleDeg;
  return Math.min(maxAngleDeg, (Math.atan(apertureM / zMid) * 180) / Math.PI);
}

/**
 * The Stolt map with the dip limit `angleDeg` into `out`: the spectrum interpolated along omega, times
 * the Jacobian and the dip weight, back across traces and in time (`ifk2d`).
 */
function stoltMap(
  data: ArrayLike<number>,
  nTraces: number,
  nSamples: number,
  dtNs: number,
  dxM: number,
  timeZeroNs: number,
  v: number,
  options: StoltKernelOptions,
  angleDeg: number,
  out: Float32Array,
): Float32Array {
  const taper = Math.min(1, Math.max(0, options.taper ?? 0.2));
  const inverse = options.inverse ?? false;
  const ve = v / 2;
  const { nx, nt } = paddedSizes(nTraces, nSamples, dtNs, dxM, ve, angleDeg, 2);
  const nw = nt / 2 + 1;
  const dw = (2 * Math.PI) / (nt * dtNs);
  const tc = (nt * dtNs) / 4;
  const { spec, lo, hi } = fk2d(data, nTraces, nSamples, nx, nt, options.energyTolerance ?? 0);
  if (hi < lo) return out.fill(0);
  if (options.halfIntegral && !inverse) halfOrderFilter(spec, nx, nt, dtNs, -0.5, lo, hi);
  shiftSpectrum(spec, nx, nt, dtNs, timeZeroNs + tc, lo, hi);
  // migration reads bin u >= j, so no output bin lies past hi + HALF_TAPS; modelling's can
  const nb = inverse ? nw : Math.min(nw, hi + HALF_TAPS + 1);
  // per output bin: back to the record's time axis (e^{-i omega timeZero}), and modelling's half-derivative
  const fRe = new Float64Array(nb);
  const fIm = new Float64Array(nb);
  for (let j = 0; j < nb; j++) {
    const ph = -j * dw * timeZeroNs;
    let re = Math.cos(ph);
    let im = Math.sin(ph);
    if (options.halfIntegral && inverse) {
      // halfOrderFilter's half-derivative: |omega|^{1/2} e^{-i pi/4}, zero at omega = 0
      const a = j === 0 ? 0 : Math.pow(j * dw, 0.5) * Math.SQRT1_2;
      [re, im] = [a * re + a * im, a * im - a * re];
    }
    fRe[j] = re;
    fIm[j] = im;
  }
  // the interpolated spectrum times the Jacobian and the dip weight, kx-major as `fk2d` gives it
  const val = new Float64Array(2 * nx * nw);
  const weight = dipWeigher(angleDeg, taper);
  // dipWeight is 1 up to the taper: only the band between needs the weigher
  const s1 = Math.sin((angleDeg * Math.PI * (1 - taper)) / 180);
  // bins the interpolation can reach from [lo, hi] (negative bins mirror positive ones)
  const reach = (u: number) => u - HALF_TAPS <= hi && (u + HALF_TAPS >= lo || HALF_TAPS - u >= lo);
  const ip = new Float64Array(2);
  let jHi = -1;
  for (let ix = 0; ix < nx; ix++) {
    const a = ve * Math.abs(kxOf(ix, nx, dxM));
    const row = 2 * ix * nw;
    const rowc = 2 * ((nx - ix) % nx) * nw;
    for (let j = 0; j < nb; j++) {
      const wj = j * dw;
      let u: number;
      let jac: number;
      let sin: number;
      if (!inverse) {
        const w = Math.sqrt(wj * wj + a * a);
        u = w / dw;
        if (u - HALF_TAPS > hi) break; // u grows with j
        jac = w === 0 ? 1 : wj / w;
        sin = w === 0 ? 0 : a / w;
      } else {
        if (wj <= a && a > 0) continue;
        const wt = Math.sqrt(wj * wj - a * a);
        u = wt / dw;
        if (u - HALF_TAPS > hi) break;
        jac = wj === 0 ? 1 : wj / wt;
        sin = wj === 0 ? 0 : a / wj;
      }
      if (jac === 0 || u > nw - 1 || !reach(u)) continue;
      const g = sin <= s1 ? jac : jac * weight(sin);
      if (g === 0) continue;
      interpolate(spec, row, rowc, nw, u, ip);
      const re = ip[0] as number;
      const im = ip[1] as number;
      const q = row + 2 * j;
      val[q] = (re * (fRe[j] as number) - im * (fIm[j] as number)) * g;
      val[q + 1] = (re * (fIm[j] as number) + im * (fRe[j] as number)) * g;
      if (j > jHi) jHi = j;
    }
  }
  if (jHi < 0) return out.fill(0);
  return ifk2d(val, nTraces, nSamples, nx, nt, out, 0, jHi);
}

/**
 * Stolt migration of a common-offset line (or with `inverse`, its modelling): the line is resampled from
 * bistatic to zero-offset time, migrated by `stoltKernel` on regular slots of its mean trace spacing, and
 * resampled back, so the output keeps the input's time axis (a point images at its bistatic apex time, as
 * with Kirchhoff). Samples before the ground wave (t <= s / v after time-zero) pass through unchanged.
 * `out` may be `line.data`.
 */
export function stoltMigrate(line: RadarLine, options: StoltOptions, out?: Float32Array): RadarLine {
  return stoltLine(line, options, false, out);
}

/** Stolt modelling (demigration): the inverse of `stoltMigrate` inside the dip limit. */
export function stoltModel(line: RadarLine, options: StoltOptions, out?: Float32Array): RadarLine {
  return stoltLine(line, options, true, out);
}

function stoltLine(line: RadarLine, options: StoltOptions, inverse: boolean, out?: Float32Array): RadarLine {
  const v = options.velocityMPerNs;
  if (!(v > 0)) throw new Error(`migration: velocity must be > 0 m/ns, found ${v}`);
  return fkLine(line, [{ topM: 0, velocityMPerNs: v }], options, inverse, (zo, nt, ns, dt, dx, tz, settings) => stoltKernel(zo, nt, ns, dt, dx, tz, v, settings), out);
}

