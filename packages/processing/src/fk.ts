// Shared pieces of the frequency-domain migrations (stolt.ts, phase-shift.ts): the padded 2D transform of a
// line, the dip limit, the trace-slot rule and the bistatic-to-zero-offset time map.
import type { RadarLine } from '@lamina/radar-data';
import { fftOfSize, nextFastSize, nextPow2, stagedTransform } from './fft';
import { alongTrackM, outputFor, withData } from './line-util';
import { lineKernels, type LineKernels } from './line-wasm';
import { keys } from './time-zero';

/** An interval-velocity layer by depth (m, m/ns); the last layer extends to any depth. */
export interface MigrationLayer {
  topM: number;
  velocityMPerNs: number;
}

/**
 * Forward 2D transform of `nTraces` traces of `nSamples` (trace-major), zero-padded to `nx` traces and
 * `nt` samples (`nt` even): FFT in time (e^{-i omega t}, bins m = 0..nt/2; two real traces per complex
 * transform), then complex FFT across traces.
 * Result: `spec[2 * (ix * (nt/2 + 1) + m)]` (re, im), kx-major so that a row is one wavenumber.
 * Only the bins [lo, hi] of `band(power, energyTolerance)` are transformed across traces; the others are
 * zero (with `energyTolerance` 0, every bin with energy). `into` (at least `2 * nx * (nt/2 + 1)` long)
 * is used for the result instead of a new array.
 */
export function fk2d(
  data: ArrayLike<number>,
  nTraces: number,
  nSamples: number,
  nx: number,
  nt: number,
  energyTolerance = 0,
  into?: Float64Array,
): { spec: Float64Array; lo: number; hi: number } {
  const nw = nt / 2 + 1;
  // the padding rows (traces nTraces..nx) must be zero; the others are all written below
  const spec = into ? into.fill(0, 2 * nTraces * nw, 2 * nx * nw) : new Float64Array(2 * nx * nw);
  const ft = stagedTransform(fftOfSize(nt));
  const pair = ft.input;
  const power = new Float64Array(nw);
  // two real traces a, b per complex transform Z of a + ib: A[m] = (Z[m] + conj Z[-m]) / 2, B[m] = (Z[m] - conj Z[-m]) / 2i
  // the padding past nSamples stays 0 (a run leaves its input as it was)
  pair.fill(0);
  for (let i = 0; i < nTraces; i += 2) {
    const two = i + 1 < nTraces;
    const oa = i * nSamples;
    if (two) {
      const ob = oa + nSamples;
      for (let k = 0; k < nSamples; k++) {
        pair[2 * k] = data[oa + k] as number;
        pair[2 * k + 1] = data[ob + k] as number;
      }
    } else for (let k = 0; k < nSamples; k++) {
      pair[2 * k] = data[oa + k] as number;
      pair[2 * k + 1] = 0;
    }
    const cplx = ft.run(false);
    const sa = 2 * i * nw;
    const sb = sa + 2 * nw;
    for (let m = 0; m < nw; m++) {
      const c = 2 * ((nt - m) % nt);
      const zr = cplx[2 * m] as number, zi = cplx[2 * m + 1] as number;
      const cr = cplx[c] as number, ci = cplx[c + 1] as number;
      const ar = 0.5 * (zr + cr), ai = 0.5 * (zi - ci);
      spec[sa + 2 * m] = ar;
      spec[sa + 2 * m + 1] = ai;
      let p = ar * ar + ai * ai;
      if (two) {
        const br = 0.5 * (zi + ci), bi = -0.5 * (zr - cr);
        spec[sb + 2 * m] = br;
        spec[sb + 2 * m + 1] = bi;
        p += br * br + bi * bi;
      }
      power[m] = (power[m] as number) + p;
    }
  }
  const [lo, hi] = band(power, energyTolerance);
  for (let i = 0; i < nTraces; i++) {
    if (hi < lo) spec.fill(0, 2 * i * nw, 2 * (i + 1) * nw);
    else {
      spec.fill(0, 2 * i * nw, 2 * (i * nw + lo));
      spec.fill(0, 2 * (i * nw + hi + 1), 2 * (i + 1) * nw);
    }
  }
  acrossTraces(spec, nx, nw, false, lo, hi);
  return { spec, lo, hi };
}

/**
 * Smallest bin range [lo, hi] of a power spectrum whose two cut-off tails each hold at most tol / 2 of the
 * energy ([0, -1] when there is none). A precision bound: dropping them changes a result by about
 * sqrt(tol) of its RMS.
 */
export function band(power: ArrayLike<number>, tol: number): [number, number] {
  let total = 0;
  for (let m = 0; m < power.length; m++) total += power[m] as number;
  if (!(total > 0)) return [0, -1];
  let lo = 0;
  let acc = 0;
  while (lo < power.length - 1 && acc + (power[lo] as number) <= (tol / 2) * total) acc += power[lo++] as number;
  let hi = power.length - 1;
  acc = 0;
  while (hi > lo && acc + (power[hi] as number) <= (tol / 2) * total) acc += power[hi--] as number;
  return [lo, hi];
}

/** Inverse of `fk2d` (bins outside [lo, hi] taken as zero): the first `nTraces` x `nSamples` of the real line (trace-major) into `out`. */
/**
 * Two real traces in one complex inverse transform: writes bins m0..m1 of the half spectra A (at `oa` in
 * `spec`) and B (at `ob`; none when ob < 0) into `full` as the full spectrum A + iB, whose inverse is
 * a + ib for Hermitian A and B. The DC and Nyquist bins of a real trace are real. Other bins of `full`
 * are left as they are. Bin m of a trace is at `stride` m numbers from its start (2: trace-major).
 */
export function packTracePair(spec: Float64Array, oa: number, ob: number, m0: number, m1: number, nw: number, nt: number, full: Float64Array, stride = 2): void {
  for (let m = m0; m <= m1; m++) {
    const edge = m === 0 || m === nw - 1;
    const ar = spec[oa + stride * m] as number;
    const ai = edge ? 0 : (spec[oa + stride * m + 1] as number);
    const br = ob < 0 ? 0 : (spec[ob + stride * m] as number);
    const bi = ob < 0 || edge ? 0 : (spec[ob + stride * m + 1] as number);
    full[2 * m] = ar - bi;
    full[2 * m + 1] = ai + br;
    if (!edge) {
      // bin nt - m: conj(A) + i conj(B)
      full[2 * (nt - m)] = ar + bi;
      full[2 * (nt - m) + 1] = -ai + br;
    }
  }
}

export function ifk2d(
  spec: Float64Array,
  nTraces: number,
  nSamples: number,
  nx: number,
  nt: number,
  out: Float32Array,
  lo = 0,
  hi = nt / 2,
): Float32Array {
  const nw = nt / 2 + 1;
  acrossTraces(spec, nx, nw, true, lo, hi);
  const ft = fftOfSize(nt);
  const full = new Float64Array(2 * nt);
  const back = new Float64Array(2 * nt);
  const m0 = Math.max(0, lo);
  const m1 = Math.min(hi, nw - 1);
  // two real traces per complex inverse: ifft(A + iB) = a + ib for Hermitian A, B
  for (let i = 0; i < nTraces; i += 2) {
    const oa = 2 * i * nw;
    const ob = i + 1 < nTraces ? 2 * (i + 1) * nw : -1;
    full.fill(0);
    packTracePair(spec, oa, ob, m0, m1, nw, nt, full);
    ft.inverseTransform(back, full);
    for (let k = 0; k < nSamples; k++) out[i * nSamples + k] = back[2 * k] as number;
    if (ob >= 0) for (let k = 0; k < nSamples; k++) out[(i + 1) * nSamples + k] = back[2 * k + 1] as number;
  }
  return out;
}

function acrossTraces(spec: Float64Array, nx: number, nw: number, inverse: boolean, lo = 0, hi = nw - 1): void {
  const fx = fftOfSize(nx);
  const B = 4; // columns per pass: neighbouring bins share cache lines
  const cols = Array.from({ length: B }, () => new Float64Array(2 * nx));
  const res = new Float64Array(2 * nx);
  const m1 = Math.min(hi, nw - 1);
  for (let m0 = Math.max(0, lo); m0 <= m1; m0 += B) {
    const nb = Math.min(B, m1 - m0 + 1);
    for (let i = 0; i < nx; i++) {
      const o = 2 * (i * nw + m0);
      for (let b = 0; b < nb; b++) {
        const col = cols[b] as Float64Array;
        col[2 * i] = spec[o + 2 * b] as number;
        col[2 * i + 1] = spec[o + 2 * b + 1] as number;
      }
    }
    for (let b = 0; b < nb; b++) {
      const col = cols[b] as Float64Array;
      if (inverse) fx.inverseTransform(res, col);
      else fx.transform(res, col);
      col.set(res);
    }
    scatterColumns(cols, nb, nx, nw, m0, spec);
  }
}

/**
 * Writes the first `nb` complex columns of `cols` (length n each) back into a row-major complex array of
 * `stride` bins per row, as bins m0 .. m0 + nb - 1 of rows 0 .. n - 1 (the transpose's way back).
 */
export function scatterColumns(cols: readonly Float64Array[], nb: number, n: number, stride: number, m0: number, out: Float64Array): void {
  for (let i = 0; i < n; i++) {
    const o = 2 * (i * stride + m0);
    for (let b = 0; b < nb; b++) {
      const col = cols[b] as Float64Array;
      out[o + 2 * b] = col[2 * i] as number;
      out[o + 2 * b + 1] = col[2 * i + 1] as number;
    }
  }
}

/** Horizontal wavenumber (rad/m) of row `ix` of an `nx`-point transform at spacing `dxM`. */
export function kxOf(ix: number, nx: number, dxM: number): number {
  return (2 * Math.PI * (ix < nx / 2 ? ix : ix - nx)) / (nx * dxM);
}

/** Multiplies every row of a spectrum by e^{i omega_m shiftNs} (a shift of the traces `shiftNs` earlier). */
export function shiftSpectrum(spec: Float64Array, nx: number, nt: number, dtNs: number, shiftNs: number, lo = 0, hi = nt / 2): void {
  const { c, s } = shiftFactors(nt, dtNs, shiftNs);
  rotateBins(spec, nx, nt / 2 + 1, Math.max(0, lo), Math.min(nt / 2, hi), c, s);
}

/** `shiftSpectrum`'s factor of each bin m < nt / 2 + 1, e^{i omega_m shiftNs} as (c[m], s[m]). */
export function shiftFactors(nt: number, dtNs: number, shiftNs: number): { c: Float64Array; s: Float64Array } {
  const nw = nt / 2 + 1;
  const dw = (2 * Math.PI) / (nt * dtNs);
  const c = new Float64Array(nw);
  const s = new Float64Array(nw);
  for (let m = 0; m < nw; m++) {
    c[m] = Math.cos(m * dw * shiftNs);
    s[m] = Math.sin(m * dw * shiftNs);
  }
  return { c, s };
}

/** Bins m0..m1 of each of nx rows (nw bins) times c[m] + i s[m]; the kernels' `rotateBins` does the same. */
export function rotateBins(spec: Float64Array, nx: number, nw: number, m0: number, m1: number, c: Float64Array, s: Float64Array): void {
  for (let i = 0; i < nx; i++) {
    for (let m = m0; m <= m1; m++) {
      const o = 2 * (i * nw + m);
      const re = spec[o] as number;
      const im = spec[o + 1] as number;
      spec[o] = re * (c[m] as number) - im * (s[m] as number);
      spec[o + 1] = re * (s[m] as number) + im * (c[m] as number);
    }
  }
}

/**
 * Dip limit as a weight of sin(theta) = v_e |kx| / omega (theta the propagation angle from the vertical):
 * 1 up to theta1 = maxAngle (1 - taper), a cosine taper to 0 at maxAngle, 0 beyond. The f-k form of the
 * Kirchhoff step's angle limit and aperture-edge taper.
 */
export function dipWeight(sinTheta: number, maxAngleDeg: number, taper: number): number {
  return dipWeigher(maxAngleDeg, taper)(sinTheta);
}

/** `dipWeight` for one limit, its sines computed once (the f-k loops call it per bin). */
export function dipWeigher(maxAngleDeg: number, taper: number): (sinTheta: number) => number {
  const thMax = (maxAngleDeg * Math.PI) / 180;
  const th1 = thMax * (1 - taper);
  const s1 = Math.sin(th1);
  const sMax = Math.sin(thMax);
  return (sinTheta) => {
    if (!(sinTheta >= 0) || sinTheta >= 1) return sinTheta === 0 ? 1 : 0;
    if (sinTheta <= s1) return 1;
    if (sinTheta >= sMax) return 0;
    const th = Math.asin(sinTheta);
    if (th <= th1) return 1;
    if (th >= thMax) return 0;
    return 0.5 * (1 + Math.cos((Math.PI * (th - th1)) / (thMax - th1)));
  };
}

/** Regular trace slots of a line: mean spacing (least squares of along-track distance on trace index) and the largest deviation from it. */
export interface TraceSlots {
  /** Spacing of the regular grid the f-k methods assume, m. */
  spacingM: number;
  /** Largest |along-track distance - regular slot| over the traces, m. */
  maxDeviationM: number;
}

export function traceSlots(line: RadarLine, metresPerUnit = 1): TraceSlots {
  const s = alongTrackM(line, metresPerUnit);
  const n = s.length;
  if (n < 2) return { spacingM: 1, maxDeviationM: 0 };
  let si = 0;
  let ss = 0;
  let sii = 0;
  let sis = 0;
  for (let i = 0; i < n; i++) {
    const v = s[i] as number;
    si += i;
    ss += v;
    sii += i * i;
    sis += i * v;
  }
  const slope = (n * sis - si * ss) / (n * sii - si * si);
  const icpt = (ss - slope * si) / n;
  let dev = 0;
  for (let i = 0; i < n; i++) dev = Math.max(dev, Math.abs((s[i] as number) - icpt - slope * i));
  return { spacingM: slope > 0 ? slope : 1, maxDeviationM: dev };
}

/**
 * Padded transform sizes (`sizeOf`, by default the smallest even size with prime factors 2, 3, 5:
 * `evenFastSize`): time >= `timeFactor` x nSamples; distance >= nTraces plus the widest lateral reach of
 * the migration operator, z_max tan(maxAngle) (at most nTraces), so that what migration moves past one
 * end does not wrap onto the other. Phase-shift keeps powers of two (`nextPow2`): with its time factor 1
 * they are its only time padding.
 */
export function paddedSizes(
  nTraces: number,
  nSamples: number,
  dtNs: number,
  dxM: number,
  maxHalfVelocity: number,
  maxAngleDeg: number,
  timeFactor: number,
  sizeOf: (n: number) => number = evenFastSize,
): { nx: number; nt: number } {
  const zMax = maxHalfVelocity * nSamples * dtNs;
  const reach = zMax * Math.tan((Math.min(maxAngleDeg, 89) * Math.PI) / 180);
  const pad = Math.min(nTraces, Math.ceil(reach / dxM));
  return { nx: sizeOf(nTraces + pad), nt: sizeOf(Math.ceil(timeFactor * nSamples)) };
}

/** Smallest even size >= n with prime factors 2, 3, 5 (the half spectra, nt / 2 + 1 bins, need it even). */
export function evenFastSize(n: number): number {
  return 2 * nextFastSize(Math.ceil(n / 2));
}

/**
 * Bistatic two-way time (ns after time-zero) of the reflector whose zero-offset vertical two-way time is
 * `tauNs`, through layered interval velocities: straight rays with the time-averaged velocity, as the
 * slices' time-to-depth (t = tau sqrt(z^2 + h^2) / z). Exact at the apex of a point diffraction; away from
 * it the bistatic and zero-offset hyperbolas differ by O(h^2 / r^2), which is why the f-k methods handle the
 * antenna separation only approximately (Kirchhoff sums along the exact bistatic curve).
 */
export function bistaticTime(tauNs: number, layers: readonly MigrationLayer[], separationM: number): number {
  const h = separationM / 2;
  const v1 = (layers[0] as MigrationLayer).velocityMPerNs;
  if (tauNs <= 0) return h > 0 ? (2 * h) / v1 : 0;
  if (h === 0) return tauNs;
  let z = 0;
  let left = tauNs;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i] as MigrationLayer;
    const next = layers[i + 1];
    const thick = next ? next.topM - l.topM : Infinity;
    const tThick = (2 * thick) / l.velocityMPerNs;
    if (left <= tThick) {
      z += (left * l.velocityMPerNs) / 2;
      left = 0;
      break;
    }
    z += thick;
    left -= tThick;
  }
  return (tauNs * Math.hypot(z, h)) / z;
}

function cubicAt(x: ArrayLike<number>, u: number, from: number, to: number): number {
  const i0 = Math.floor(u);
  const f = u - i0;
  if (f === 0) return i0 >= from && i0 < to ? (x[i0] as number) : 0;
  let acc = 0;
  for (let k = i0 - 1; k <= i0 + 2; k++) if (k >= from && k < to) acc += (x[k] as number) * keys(u - k);
  return acc;
}

/**
 * Trace-major line resampled from bistatic time to zero-offset vertical two-way time (`toZeroOffset`), or
 * back. Sample k is at k dt - timeZeroNs on both axes; zero-offset samples at or before time-zero are zero,
 * and bistatic samples before the ground wave (t <= s / v1) are left 0 on the way back (the caller passes
 * the input through there). Keys cubic interpolation.
 */
export function bistaticResample(
  data: ArrayLike<number>,
  nTraces: number,
  nSamples: number,
  dtNs: number,
  timeZeroNs: number,
  layers: readonly MigrationLayer[],
  separationM: number,
  toZeroOffset: boolean,
  out: Float64Array | Float32Array,
): void {
  resampleFrom(data, nTraces, nSamples, resampleMap(nSamples, dtNs, timeZeroNs, layers, separationM, toZeroOffset), 0, out);
}

/** `bistaticResample` through its map, samples `k0` on of every trace only. */
function resampleFrom(data: ArrayLike<number>, nTraces: number, nSamples: number, map: ResampleMap, k0: number, out: Float64Array | Float32Array): void {
  const kernels = lineKernels();
  if (kernels && data instanceof Float32Array) {
    resampleWasm(kernels, data, nTraces, nSamples, map, k0, out);
    return;
  }
  const { src, tap, wt } = map;
  for (let i = 0; i < nTraces; i++) {
    const o = i * nSamples;
    for (let k = k0; k < nSamples; k++) {
      const t = tap[k] as number;
      if (t >= 0) {
        const q = o + t;
        const w = 4 * k;
        out[o + k] = (data[q] as number) * (wt[w] as number) + (data[q + 1] as number) * (wt[w + 1] as number) + (data[q + 2] as number) * (wt[w + 2] as number) + (data[q + 3] as number) * (wt[w + 3] as number);
        continue;
      }
      const u = src[k] as number;
      out[o + k] = u < 0 ? 0 : cubicAt(data, o + u, o, o + nSamples);
    }
  }
}

interface ResampleMap {
  /** Source sample position of every output sample (-1: none). */
  src: Float64Array;
  /** First of the four Keys taps of every output sample whose taps all lie inside the trace, else -1. */
  tap: Int32Array;
  /** Their weights, four per sample. */
  wt: Float64Array;
}

/**
 * `resampleFrom` of a float32 line in the line kernels (`resampleLine`): the same weights and sums, so
 * the same numbers. Samples before k0 of `out` are left as they are.
 */
function resampleWasm(kernels: LineKernels, data: Float32Array, nTraces: number, nSamples: number, map: ResampleMap, k0: number, out: Float64Array | Float32Array): void {
  const n = nTraces * nSamples;
  const [d, o, src, tap, wt] = kernels.layout(4 * n, 8 * n, 8 * nSamples, 4 * nSamples, 32 * nSamples);
  kernels.f32(d, n).set(data.subarray(0, n));
  kernels.f64(src, nSamples).set(map.src);
  kernels.i32(tap, nSamples).set(map.tap);
  kernels.f64(wt, 4 * nSamples).set(map.wt);
  kernels.k.resampleLine(d, o, nTraces, nSamples, src, tap, wt, k0);
  const res = kernels.f64(o, n);
  if (k0 === 0) out.set(res);
  else for (let i = 0; i < nTraces; i++) out.set(res.subarray(i * nSamples + k0, (i + 1) * nSamples), i * nSamples + k0);
}

const resampleMaps = new Map<string, ResampleMap>();

/**
 * The sample map of `bistaticResample`, shared by all traces, kept for the last few parameter sets (the
 * lines of a site share them, and the way back bisects for every sample).
 */
function resampleMap(nSamples: number, dtNs: number, timeZeroNs: number, layers: readonly MigrationLayer[], separationM: number, toZeroOffset: boolean): ResampleMap {
  const key = JSON.stringify([nSamples, dtNs, timeZeroNs, layers.map((l) => [l.topM, l.velocityMPerNs]), separationM, toZeroOffset]);
  const kept = resampleMaps.get(key);
  if (kept) return kept;
  // source sample position of every output sample, shared by all traces
  const src = new Float64Array(nSamples).fill(-1);
  const tMin = bistaticTime(0, layers, separationM);
  for (let k = 0; k < nSamples; k++) {
    const t = k * dtNs - timeZeroNs;
    if (t <= 0) continue;
    if (toZeroOffset) {
      src[k] = (bistaticTime(t, layers, separationM) + timeZeroNs) / dtNs;
    } else if (t > tMin) {
      // bistatic time grows with tau and tau <= t: bisection
      let lo = 0;
      let hi = t;
      for (let it = 0; it < 50; it++) {
        const mid = 0.5 * (lo + hi);
        if (bistaticTime(mid, layers, separationM) < t) lo = mid;
        else hi = mid;
      }
      src[k] = (0.5 * (lo + hi) + timeZeroNs) / dtNs;
    }
  }
  // the four Keys weights of every output sample whose taps all lie inside the trace, shared by all
  // traces (`cubicAt` for the others: exact positions, the ends)
  const tap = new Int32Array(nSamples).fill(-1);
  const wt = new Float64Array(4 * nSamples);
  for (let k = 0; k < nSamples; k++) {
    const u = src[k] as number;
    const i0 = Math.floor(u);
    if (u < 0 || u === i0 || i0 - 1 < 0 || i0 + 2 >= nSamples) continue;
    tap[k] = i0 - 1;
    for (let j = 0; j < 4; j++) wt[4 * k + j] = keys(u - (i0 - 1 + j));
  }
  if (resampleMaps.size >= 8) resampleMaps.delete(resampleMaps.keys().next().value as string);
  const map = { src, tap, wt };
  resampleMaps.set(key, map);
  return map;
}

/** Layers sorted from the surface, checked (velocity > 0, the first at 0 m). */
export function checkLayers(layers: readonly MigrationLayer[]): MigrationLayer[] {
  if (layers.length === 0) throw new Error('migration: no velocity layer given');
  const sorted = [...layers].sort((a, b) => a.topM - b.topM);
  for (const l of sorted) {
    if (!(l.velocityMPerNs > 0)) throw new Error(`migration: velocity must be > 0 m/ns, found ${l.velocityMPerNs}`);
  }
  return sorted.map((l, i) => ({ topM: i === 0 ? 0 : l.topM, velocityMPerNs: l.velocityMPerNs }));
}

/**
 * Multiplies bins [lo, hi] of every row by the half-derivative (|omega|^{1/2} e^{-i pi/4}, `order` 0.5) or
 * the half-integral (|omega|^{-1/2} e^{+i pi/4}, `order` -0.5), omega in rad/ns, zero at omega = 0: the
 * filter `halfDerivative` (kirchhoff.ts) applies per trace, here on a spectrum. 2D migration of a
 * diffraction made of the source wavelet at ray times (a 3D point seen along a line, and ray-based
 * synthetics) focuses zero-phase after the half-integral; a reflector keeps its wavelet without it.
 */
export function halfOrderFilter(spec: Float64Array, nx: number, nt: number, dtNs: number, order: 0.5 | -0.5, lo = 0, hi = nt / 2): void {
  const { c, s } = halfOrderFactors(nt, dtNs, order);
  rotateBins(spec, nx, nt / 2 + 1, Math.max(0, lo), Math.min(nt / 2, hi), c, s);
}

/** `halfOrderFilter`'s factor of each bin m < nt / 2 + 1 as (c[m], s[m]). */
export function halfOrderFactors(nt: number, dtNs: number, order: 0.5 | -0.5): { c: Float64Array; s: Float64Array } {
  const nw = nt / 2 + 1;
  const dw = (2 * Math.PI) / (nt * dtNs);
  const c = new Float64Array(nw);
  const s = new Float64Array(nw);
  for (let m = 0; m < nw; m++) {
    const a = m === 0 ? 0 : Math.pow(m * dw, order) * Math.SQRT1_2;
    c[m] = a;
    // e^{-i pi/4} for the derivative, e^{+i pi/4} for the integral
    s[m] = order > 0 ? -a : a;
  }
  return { c, s };
}

/**
 * Period (ns) of the power-weighted mean frequency of a line (the mean power spectrum of at most 64 traces
 * spread along it), or 0 when the line is silent.
 */
export function dominantPeriodNs(data: ArrayLike<number>, nTraces: number, nSamples: number, dtNs: number): number {
  const n = nextPow2(nSamples);
  const ft = fftOfSize(n);
  const real = new Float64Array(n);
  const cplx = new Float64Array(2 * n);
  const step = Math.max(1, Math.floor(nTraces / 64));
  let sp = 0;
  let sfp = 0;
  for (let i = 0; i < nTraces; i += step) {
    real.fill(0);
    for (let k = 0; k < nSamples; k++) real[k] = data[i * nSamples + k] as number;
    ft.realTransform(cplx, real);
    for (let m = 1; m <= n / 2; m++) {
      const p = (cplx[2 * m] as number) ** 2 + (cplx[2 * m + 1] as number) ** 2;
      sp += p;
      sfp += p * (m / (n * dtNs));
    }
  }
  return sp > 0 && sfp > 0 ? sp / sfp : 0;
}

/**
 * Half-cosine taper over the last `lengthNs` of every trace, in place. The record ends where the signal
 * does not: without it the cut is a step whose energy spreads over every frequency (and the f-k band,
 * see `band`, is the whole spectrum) and migrates into smiles. One dominant period is common practice
 * (no source).
 */
export function taperTraceEnds(data: Float64Array | Float32Array, nTraces: number, nSamples: number, dtNs: number, lengthNs: number): void {
  const n = Math.min(nSamples, Math.round(lengthNs / dtNs));
  if (n < 2) return;
  for (let q = 0; q < n; q++) {
    const w = 0.5 * (1 - Math.cos((Math.PI * q) / n)); // 0 at the last sample
    const k = nSamples - 1 - q;
    for (let i = 0; i < nTraces; i++) data[i * nSamples + k] = (data[i * nSamples + k] as number) * w;
  }
}

/** What the two frequency-domain migrations of a whole line share (stolt.ts, phase-shift.ts). */
export interface FkLineOptions {
  /** Antenna separation along the line, m: bistatic times are mapped to zero offset and back (see `bistaticTime`). @default 0 */
  separationM?: number;
  /** Dip limit: components steeper than this (at the local velocity) are dropped. @default 60 */
  maxAngleDeg?: number;
  /**
   * Kirchhoff's half-aperture, m, as a dip limit: at depth z the angle is limited to min(maxAngleDeg,
   * atan(apertureM / z)), the angle Kirchhoff's summation reaches there. @default Infinity
   */
  apertureM?: number;
  /** Fraction of the angle range below maxAngleDeg tapered by a cosine. @default 0.2 */
  taper?: number;
  /**
   * As Kirchhoff's option: false runs the half-integral with the migration (`halfOrderFilter`), so that a
   * diffraction made of the source wavelet at ray times focuses zero-phase and the output matches
   * Kirchhoff's default; true gives the plain wave-equation result (Kirchhoff with the half-derivative).
   * @default false
   */
  halfDerivative?: boolean;
  /**
   * Band kept: see `band`. The tails dropped hold this share of the energy, a change of about its square
   * root (0.3 %) of the result's RMS. On the process bench's lines (400 MHz, 0.1 ns, band-passed) 1e-5
   * keeps the bins up to about 1.2 GHz, three times the centre frequency, where 1e-6 kept a noise floor up to
   * 2.5-3.2 GHz: the band falls from about 400 to 160 of 641 bins and Stolt's time from 100 to 75 %
   * (bench/line-work.ts, CPU time). @default 1e-5
   */
  energyTolerance?: number;
  /** Metres per CRS unit of `line.x/y`. @default 1 */
  metresPerUnit?: number;
}

/** The kernel options `fkLine` resolves from `FkLineOptions` (defaults written once, here). */
export interface FkKernelSettings {
  maxAngleDeg: number;
  apertureM: number;
  taper: number;
  energyTolerance: number;
  inverse: boolean;
  halfIntegral: boolean;
}

/**
 * A whole line through a frequency-domain kernel: bistatic times to zero offset, the record's end
 * tapered over one dominant period, the kernel on the regular trace slots, and back to bistatic time
 * (samples before the ground wave passed through: `passThroughBack`).
 */
export function fkLine(
  line: RadarLine,
  layers: readonly MigrationLayer[],
  options: FkLineOptions,
  inverse: boolean,
  kernel: (zo: Float64Array, nTraces: number, nSamples: number, dtNs: number, spacingM: number, timeZeroNs: number, settings: FkKernelSettings) => Float32Array,
  out?: Float32Array,
): RadarLine {
  const sep = options.separationM ?? 0;
  const { nSamples: ns, nTraces: nt, dtNs: dt, timeZeroNs: tz } = line;
  const { src, dst } = outputFor(line, out);
  const zo = scratch('fk zero-offset', src.length);
  bistaticResample(src, nt, ns, dt, tz, layers, sep, true, zo);
  taperTraceEnds(zo, nt, ns, dt, dominantPeriodNs(zo, nt, ns, dt));
  const { spacingM } = traceSlots(line, options.metresPerUnit ?? 1);
  const img = kernel(zo, nt, ns, dt, spacingM, tz, {
    maxAngleDeg: options.maxAngleDeg ?? 60,
    apertureM: options.apertureM ?? Infinity,
    taper: options.taper ?? 0.2,
    energyTolerance: options.energyTolerance ?? 1e-5,
    inverse,
    halfIntegral: !(options.halfDerivative ?? false),
  });
  passThroughBack(img, src, dst, nt, ns, dt, tz, layers, sep);
  return withData(line, dst);
}

/** Back to bistatic time into `dst`; samples before the ground wave (t <= s / v1 after time-zero) from `src`. */
export function passThroughBack(
  img: Float32Array,
  src: Float32Array,
  dst: Float32Array,
  nTraces: number,
  nSamples: number,
  dtNs: number,
  timeZeroNs: number,
  layers: readonly { topM: number; velocityMPerNs: number }[],
  separationM: number,
): void {
  // the samples kept from `src` are the first ones (time grows with k); the others are resampled
  // straight into `dst`, each value rounded to float32 once
  const tMin = separationM / (layers[0] as { velocityMPerNs: number }).velocityMPerNs;
  let kept = 0;
  while (kept < nSamples && kept * dtNs - timeZeroNs <= tMin) kept++;
  if (kept > 0) for (let i = 0; i < nTraces; i++) for (let k = 0; k < kept; k++) dst[i * nSamples + k] = src[i * nSamples + k] as number;
  resampleFrom(img, nTraces, nSamples, resampleMap(nSamples, dtNs, timeZeroNs, layers, separationM, false), kept, dst);
}

const scratchPool = new Map<string, Float64Array>();

/**
 * A work array of at least `length` numbers kept between calls under `name` (its content is whatever the
 * last user left): the migrations of a run's lines take arrays of a few MB of the same sizes, and fresh
 * ones cost page faults and garbage collection each line. Only for arrays that do not outlive the call
 * that takes them (JavaScript is single-threaded here; each worker has its own pool).
 */
export function scratch(name: string, length: number): Float64Array {
  let a = scratchPool.get(name);
  if (!a || a.length < length) {
    a = new Float64Array(length);
    scratchPool.set(name, a);
  }
  return a.length === length ? a : a.subarray(0, length);
}
