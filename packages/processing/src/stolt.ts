import type { RadarLine } from '@lamina/radar-data';
import { band, dipWeigher, fk2d, fkLine, halfOrderFactors, halfOrderFilter, kxOf, packTracePair, paddedSizes, scratch, shiftFactors, shiftSpectrum, type FkLineOptions } from './fk';
import { fftOfSize, stagedTransform } from './fft';
import { fftPlanBytes, lineKernels, writeFftPlan, type LineKernels } from './line-wasm';

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
  /** Kirchhoff's half-aperture as a depth-dependent dip limit (see `apertureNodes`). @default Infinity */
  apertureM?: number;
  /** Half-integral of the input before migration (half-derivative of the output after modelling). @default false */
  halfIntegral?: boolean;
  /** Frequencies holding this fraction of the energy are dropped from the ends of the band (`band`, fk.ts). @default 0 */
  energyTolerance?: number;
}

const HALF_TAPS = 4;

/**
 * The weights of `interpolate` at fraction f (0 < f < 1) of a bin into `taps` at `o`: the 8 windowed-sinc
 * weights for the taps n = i0 - q, q = -4..3, their sum, and e^{-i pi f / 2} as (c2, s2). They depend on
 * the map's geometry only, so `stoltTable` keeps them.
 */
function tapWeights(f: number, taps: Float64Array, o: number): void {
  // sinc(d) for the taps n = i0 - q, d = f + q, is (-1)^q sin(pi f) / (pi d): the common factor cancels
  // in the normalisation; the Hann term by angle addition
  const cf4 = Math.cos((Math.PI * f) / HALF_TAPS);
  const sf4 = Math.sin((Math.PI * f) / HALF_TAPS);
  let ws = 0;
  for (let q = -HALF_TAPS; q < HALF_TAPS; q++) {
    const hann = 0.5 * (1 + cf4 * (COS_Q[q + HALF_TAPS] as number) - sf4 * (SIN_Q[q + HALF_TAPS] as number));
    const w = (q & 1 ? -hann : hann) / (f + q);
    ws += w;
    taps[o + q + HALF_TAPS] = w;
  }
  taps[o + 2 * HALF_TAPS] = ws;
  // e^{-i pi f / 2} from the quarter angle
  taps[o + 2 * HALF_TAPS + 1] = cf4 * cf4 - sf4 * sf4;
  taps[o + 2 * HALF_TAPS + 2] = 2 * sf4 * cf4;
}

/** Numbers per entry of `StoltTable.taps`: `tapWeights`' weights, their sum, c2 and s2. */
const TAP_STRIDE = 2 * HALF_TAPS + 3;

/**
 * Windowed-sinc interpolation along omega of row `row` of a centred spectrum at fractional bin `u`: 8 taps,
 * Hann window, weights normalised to sum 1 (`tapWeights`, at `o` in `taps`). Negative bins are conjugates
 * of the row of -kx (`rowc`), bins past Nyquist zero. The spectrum was centred (traces shifted so their
 * support is [-T/4, T/4] of the padded length T), so along omega it is oversampled twice (round trips in
 * the tests: below 1 % RMS).
 * The value is returned in `ip` times e^{-i pi u / 2}, the shift back by T/4 at bin u (Stolt's e^{-i w T/4}).
 * A second row (`rowB` >= 0, e.g. +kx's partner -kx, which has the same u) is interpolated with the same
 * weights into ip[2], ip[3], each row's sums in the same order as alone.
 */
function interpolate(spec: Float64Array, row: number, rowc: number, nw: number, u: number, taps: Float64Array, o: number, ip: Float64Array, rowB = -1, rowcB = -1): void {
  const two = rowB >= 0;
  const i0 = Math.floor(u);
  const f = u - i0;
  let re = 0;
  let im = 0;
  let reB = 0;
  let imB = 0;
  let c2 = 1;
  let s2 = 0;
  if (f === 0) {
    if (i0 < nw) {
      re = spec[row + 2 * i0] as number;
      im = spec[row + 2 * i0 + 1] as number;
      if (two) {
        reB = spec[rowB + 2 * i0] as number;
        imB = spec[rowB + 2 * i0 + 1] as number;
      }
    }
  } else {
    for (let q = -HALF_TAPS; q < HALF_TAPS; q++) {
      const w = taps[o + q + HALF_TAPS] as number;
      const n = i0 - q;
      if (n >= nw) continue;
      if (n >= 0) {
        re += w * (spec[row + 2 * n] as number);
        im += w * (spec[row + 2 * n + 1] as number);
        if (two) {
          reB += w * (spec[rowB + 2 * n] as number);
          imB += w * (spec[rowB + 2 * n + 1] as number);
        }
      } else {
        re += w * (spec[rowc - 2 * n] as number);
        im -= w * (spec[rowc - 2 * n + 1] as number);
        if (two) {
          reB += w * (spec[rowcB - 2 * n] as number);
          imB -= w * (spec[rowcB - 2 * n + 1] as number);
        }
      }
    }
    const ws = taps[o + 2 * HALF_TAPS] as number;
    re /= ws;
    im /= ws;
    reB /= ws;
    imB /= ws;
    c2 = taps[o + 2 * HALF_TAPS + 1] as number;
    s2 = taps[o + 2 * HALF_TAPS + 2] as number;
  }
  rotate(re, im, c2, s2, i0, ip, 0);
  if (two) rotate(reB, imB, c2, s2, i0, ip, 2);
}

/** (re + i im) times (c2 - i s2), then (-i)^i0, into ip[o], ip[o + 1]. */
function rotate(re: number, im: number, c2: number, s2: number, i0: number, ip: Float64Array, o: number): void {
  const r = re * c2 + im * s2;
  const i = im * c2 - re * s2;
  switch (i0 & 3) {
    case 0:
      ip[o] = r;
      ip[o + 1] = i;
      break;
    case 1:
      ip[o] = i;
      ip[o + 1] = -r;
      break;
    case 2:
      ip[o] = -r;
      ip[o + 1] = -i;
      break;
    default:
      ip[o] = -i;
      ip[o + 1] = r;
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
  const maxAngleDeg = options.maxAngleDeg ?? 60;
  const nodes = apertureNodes(nSamples, dtNs, timeZeroNs, v / 2, maxAngleDeg, options.apertureM ?? Infinity);
  if (!options.inverse) return stoltMaps(data, nTraces, nSamples, dtNs, dxM, timeZeroNs, v, options, nodes.angles, nodes.blend, out);
  // modelling: each depth range of the image through the dip limit of its node, summed
  if (nodes.angles.length === 1) return stoltMaps(data, nTraces, nSamples, dtNs, dxM, timeZeroNs, v, options, nodes.angles, nodes.blend, out);
  const ones = [new Float64Array(nSamples).fill(1)];
  const sum = new Float64Array(nTraces * nSamples);
  const part = new Float64Array(nTraces * nSamples);
  const img = new Float32Array(nTraces * nSamples);
  for (let w = 0; w < nodes.angles.length; w++) {
    const b = nodes.blend[w] as Float64Array;
    for (let i = 0; i < nTraces; i++) for (let k = 0; k < nSamples; k++) part[i * nSamples + k] = (b[k] as number) * (data[i * nSamples + k] as number);
    stoltMaps(part, nTraces, nSamples, dtNs, dxM, timeZeroNs, v, options, [nodes.angles[w] as number], ones, img);
    for (let q = 0; q < sum.length; q++) sum[q] = (sum[q] as number) + (img[q] as number);
  }
  for (let q = 0; q < sum.length; q++) out[q] = sum[q] as number;
  return out;
}

/**
 * Kirchhoff's aperture as a dip limit for Stolt, whose operator cannot vary with depth: the limit at
 * vertical time tau is min(maxAngle, atan(apertureM / z)), z = v tau / 2 (the angle Kirchhoff's summation
 * reaches there). Images are made for a few limits (nodes no more than 0.1 apart in sin(theta), below the
 * width of the default taper) and blended along tau, linearly in sin(theta). One node when the aperture
 * never binds.
 */
function apertureNodes(nSamples: number, dtNs: number, timeZeroNs: number, ve: number, maxAngleDeg: number, apertureM: number): { angles: number[]; blend: Float64Array[] } {
  const thMax = (maxAngleDeg * Math.PI) / 180;
  const sinAt = (k: number) => {
    const z = ve * (k * dtNs - timeZeroNs);
    return Math.sin(z > 0 ? Math.min(thMax, Math.atan(apertureM / z)) : thMax);
  };
  const sMax = Math.sin(thMax);
  const sMin = sinAt(nSamples - 1);
  if (!(sMax - sMin > 1e-6)) return { angles: [maxAngleDeg], blend: [new Float64Array(nSamples).fill(1)] };
  const n = Math.ceil((sMax - sMin) / 0.1) + 1;
  const sins = Array.from({ length: n }, (_, w) => sMax - ((sMax - sMin) * w) / (n - 1));
  const blend = sins.map(() => new Float64Array(nSamples));
  for (let k = 0; k < nSamples; k++) {
    const s = sinAt(k);
    const f = Math.min(n - 1, Math.max(0, ((sMax - s) / (sMax - sMin)) * (n - 1)));
    const w0 = Math.min(n - 2, Math.floor(f));
    (blend[w0] as Float64Array)[k] = 1 - (f - w0);
    (blend[w0 + 1] as Float64Array)[k] = f - w0;
  }
  return { angles: sins.map((x) => (Math.asin(x) * 180) / Math.PI), blend };
}

/**
 * What the map of `stoltMaps` takes from the geometry alone (sizes, sample interval, trace spacing,
 * velocity, widest dip limit and taper), entry ix * nw + j for ix <= nx / 2: the input bin u, the
 * Jacobian, sin(theta), theta (for `weighBin`'s taper) and the interpolation weights (`tapWeights`).
 * u is NaN where modelling has no real w_tau; `skip` marks entries no dip limit passes or past Nyquist.
 * Filled as lines reach the entries (`fillTable`): row ix holds j < rowLen[ix]. The lines of a survey
 * mostly share one (kept per worker, see `stoltTable`). With the line kernels its arrays live in their
 * kept region (`LineKernels.keep`), views made again after each layout (`tableArrays`).
 */
interface StoltTable {
  key: string;
  /** Its arrays are views of the kernels' kept region. */
  inKernels: boolean;
  nw: number;
  rowLen: Int32Array;
  u: Float64Array;
  jac: Float64Array;
  sin: Float64Array;
  theta: Float64Array;
  skip: Uint8Array;
  taps: Float64Array;
}

let lastTable: StoltTable | undefined;

/** Byte offsets of the table's arrays (n entries) in a kept region at `at`, and its size. */
function tableLayout(n: number, at = 0): { u: number; jac: number; sin: number; theta: number; taps: number; skip: number; bytes: number } {
  const taps = 32 * n;
  const skip = taps + 8 * TAP_STRIDE * n;
  return { u: at, jac: at + 8 * n, sin: at + 16 * n, theta: at + 24 * n, taps: at + taps, skip: at + skip, bytes: skip + n };
}

/** The table's arrays: its own, or views of the kernels' kept region (valid until their next layout). */
function tableArrays(t: StoltTable, kernels: LineKernels | null): StoltTable {
  if (!kernels || t.u.buffer === kernels.k.memory.buffer) return t;
  const n = t.rowLen.length * t.nw;
  const at = tableLayout(n, kernels.base);
  return Object.assign(t, {
    u: kernels.f64(at.u, n),
    jac: kernels.f64(at.jac, n),
    sin: kernels.f64(at.sin, n),
    theta: kernels.f64(at.theta, n),
    skip: kernels.u8(at.skip, n),
    taps: kernels.f64(at.taps, n * TAP_STRIDE),
  });
}

/**
 * The `StoltTable` of a geometry, the last one kept (the weights' sines, cosines and divisions were most
 * of the map's own time); another geometry empties it (its arrays are reused when the sizes agree).
 */
function stoltTable(kernels: LineKernels | null, nx: number, nt: number, dtNs: number, dxM: number, ve: number, inverse: boolean, aMax: number, taper: number): StoltTable {
  const key = JSON.stringify([nx, nt, dtNs, dxM, ve, inverse, aMax, taper]);
  const kept = lastTable;
  const nw = nt / 2 + 1;
  const rows = (nx >> 1) + 1;
  const n = rows * nw;
  if (kernels) kernels.keep(tableLayout(n).bytes);
  // a table of the other path (the tests switch the kernels off and on) is not reused
  const same = kept && kept.inKernels === (kernels !== null);
  if (same && kept.key === key) return kept;
  if (same && kept.nw === nw && kept.rowLen.length === rows) {
    kept.key = key;
    kept.rowLen.fill(0);
    return kept;
  }
  lastTable = undefined;
  // with the kernels, empty arrays until `tableArrays` makes the views
  const size = kernels ? 0 : n;
  const t: StoltTable = {
    key,
    inKernels: kernels !== null,
    nw,
    rowLen: new Int32Array(rows),
    u: new Float64Array(size),
    jac: new Float64Array(size),
    sin: new Float64Array(size),
    theta: new Float64Array(size),
    skip: new Uint8Array(size),
    taps: new Float64Array(size * TAP_STRIDE),
  };
  lastTable = t;
  return t;
}

/** Fills entry e = ix * nw + j of `t` (a = v_e |kx| of row ix). */
function tableEntry(t: StoltTable, e: number, j: number, a: number, dw: number, inverse: boolean, outer: (sin: number) => number): void {
  const nw = t.nw;
  const wj = j * dw;
  let u: number;
  let jac: number;
  let sin: number;
  if (!inverse) {
    const w = Math.sqrt(wj * wj + a * a);
    u = w / dw;
    jac = w === 0 ? 1 : wj / w;
    sin = w === 0 ? 0 : a / w;
  } else {
    if (wj <= a && a > 0) {
      t.u[e] = NaN;
      return;
    }
    const wt = Math.sqrt(wj * wj - a * a);
    u = wt / dw;
    jac = wj === 0 ? 1 : wj / wt;
    sin = wj === 0 ? 0 : a / wj;
  }
  t.u[e] = u;
  t.jac[e] = jac;
  t.sin[e] = sin;
  // the widest limit passes what any node passes (dipWeight grows with the limit)
  t.skip[e] = jac === 0 || u > nw - 1 || outer(sin) === 0 ? 1 : 0;
  if (t.skip[e]) return;
  t.theta[e] = Math.asin(sin);
  const f = u - Math.floor(u);
  if (f !== 0) tapWeights(f, t.taps, e * TAP_STRIDE);
}

/**
 * The entries the map reads for the band's last bin `hi` and output bins j < nb: along each row until
 * u - HALF_TAPS passes hi (u grows with j), the row's first rowLen entries kept from earlier lines.
 */
function fillTable(t: StoltTable, nx: number, nb: number, hi: number, dxM: number, ve: number, dw: number, inverse: boolean, outer: (sin: number) => number): void {
  const nw = t.nw;
  for (let ix = 0; ix <= nx >> 1; ix++) {
    let j = t.rowLen[ix] as number;
    if (j > 0 && (t.u[ix * nw + j - 1] as number) - HALF_TAPS > hi) continue;
    const a = ve * Math.abs(kxOf(ix, nx, dxM));
    for (; j < nb; j++) {
      tableEntry(t, ix * nw + j, j, a, dw, inverse, outer);
      t.rowLen[ix] = j + 1;
      if ((t.u[ix * nw + j] as number) - HALF_TAPS > hi) break;
    }
  }
}

/**
 * The Stolt map with one dip limit per node, blended along tau (`blend[w][k]` the weight of node w at
 * sample k) into `out`. The blend commutes with the transforms, so the interpolation along omega (the
 * costly part) is done once and kept bin-major, times the Jacobian, with its sin(theta); each node then weights
 * it, transforms it back across traces and in time, and adds its tau range to the sum. With the line
 * kernels (`stoltMapsWasm`) every loop runs in WebAssembly, the same operations in the same order.
 */
function stoltMaps(
  data: ArrayLike<number>,
  nTraces: number,
  nSamples: number,
  dtNs: number,
  dxM: number,
  timeZeroNs: number,
  v: number,
  options: StoltKernelOptions,
  anglesDeg: readonly number[],
  blend: readonly Float64Array[],
  out: Float32Array,
): Float32Array {
  const kernels = lineKernels();
  const taper = Math.min(1, Math.max(0, options.taper ?? 0.2));
  const inverse = options.inverse ?? false;
  const ve = v / 2;
  const aMax = Math.max(...anglesDeg);
  const { nx, nt } = paddedSizes(nTraces, nSamples, dtNs, dxM, ve, aMax, 2);
  const g: StoltGeometry = { nTraces, nSamples, nx, nt, nw: nt / 2 + 1, dw: (2 * Math.PI) / (nt * dtNs), inverse, taper, anglesDeg, blend };
  const tb = stoltTable(kernels, nx, nt, dtNs, dxM, ve, inverse, aMax, taper);
  const shiftNs = timeZeroNs + (nt * dtNs) / 4;
  const tol = options.energyTolerance ?? 0;
  const halfIntegral = options.halfIntegral ?? false;
  // migration reads bin u >= j, so no output bin lies past hi + HALF_TAPS; modelling's can
  const binsTo = (hi: number) => (inverse ? g.nw : Math.min(g.nw, hi + HALF_TAPS + 1));
  const prepare = (hi: number) => {
    const nb = binsTo(hi);
    fillTable(tb, nx, nb, hi, dxM, ve, g.dw, inverse, dipWeigher(aMax, taper));
    return { nb, ...outputFactors(nb, g.dw, timeZeroNs, halfIntegral && inverse) };
  };
  if (kernels) return stoltMapsWasm(kernels, g, data, tb, tol, halfIntegral, dtNs, shiftNs, prepare, out);
  const { spec, lo, hi } = fk2d(data, nTraces, nSamples, nx, nt, tol, scratch('stolt spec', 2 * nx * g.nw));
  if (hi < lo) return out.fill(0);
  if (halfIntegral && !inverse) halfOrderFilter(spec, nx, nt, dtNs, -0.5, lo, hi);
  shiftSpectrum(spec, nx, nt, dtNs, shiftNs, lo, hi);
  const { nb, fRe, fIm } = prepare(hi);
  // the interpolated spectrum times the Jacobian, bin-major (a bin's wavenumbers contiguous for the transform across traces)
  const val = scratch('stolt val', 2 * nb * nx).fill(0);
  const sinT = scratch('stolt sin', nb * nx).fill(0);
  const thT = scratch('stolt theta', nb * nx);
  // bins the interpolation can reach from [lo, hi] (negative bins mirror positive ones)
  const reach = (u: number) => u - HALF_TAPS <= hi && (u + HALF_TAPS >= lo || HALF_TAPS - u >= lo);
  const ip = new Float64Array(4);
  const nw = g.nw;
  let jHi = -1;
  // +kx and -kx (ix and nx - ix) have the same |kx|, so the same bins u, Jacobians, sines and
  // interpolation weights: one pass over j for both rows
  for (let ix = 0; ix <= nx >> 1; ix++) {
    const ixB = (nx - ix) % nx;
    const two = ixB !== ix;
    const row = 2 * ix * nw;
    const rowc = 2 * ixB * nw;
    for (let j = 0; j < nb; j++) {
      const e = ix * nw + j;
      const u = tb.u[e] as number;
      if (u !== u) continue; // modelling: no real w_tau
      if (u - HALF_TAPS > hi) break; // u grows with j
      if (tb.skip[e] || !reach(u)) continue;
      const jac = tb.jac[e] as number;
      // the partner's row is this one's conjugate row and the other way round
      if (two) interpolate(spec, row, rowc, nw, u, tb.taps, e * TAP_STRIDE, ip, rowc, row);
      else interpolate(spec, row, rowc, nw, u, tb.taps, e * TAP_STRIDE, ip);
      for (let p = 0; p < (two ? 2 : 1); p++) {
        const re = ip[2 * p] as number;
        const im = ip[2 * p + 1] as number;
        const q = j * nx + (p === 0 ? ix : ixB);
        val[2 * q] = (re * (fRe[j] as number) - im * (fIm[j] as number)) * jac;
        val[2 * q + 1] = (re * (fIm[j] as number) + im * (fRe[j] as number)) * jac;
        sinT[q] = tb.sin[e] as number;
        thT[q] = tb.theta[e] as number;
      }
      if (j > jHi) jHi = j;
    }
  }
  return blendNodes({ val, sinT, thT, nx, nt, jHi }, g, out);
}

/** The sizes and settings of one `stoltMaps` run. */
interface StoltGeometry {
  nTraces: number;
  nSamples: number;
  nx: number;
  nt: number;
  nw: number;
  /** Bin spacing, rad/ns. */
  dw: number;
  inverse: boolean;
  taper: number;
  anglesDeg: readonly number[];
  blend: readonly Float64Array[];
}

/** Per output bin j < nb: back to the record's time axis (e^{-i omega timeZero}), and modelling's half-derivative. */
function outputFactors(nb: number, dw: number, timeZeroNs: number, halfDerivative: boolean): { fRe: Float64Array; fIm: Float64Array } {
  const fRe = new Float64Array(nb);
  const fIm = new Float64Array(nb);
  for (let j = 0; j < nb; j++) {
    const ph = -j * dw * timeZeroNs;
    let re = Math.cos(ph);
    let im = Math.sin(ph);
    if (halfDerivative) {
      // halfOrderFilter's half-derivative: |omega|^{1/2} e^{-i pi/4}, zero at omega = 0
      const a = j === 0 ? 0 : Math.pow(j * dw, 0.5) * Math.SQRT1_2;
      [re, im] = [a * re + a * im, a * im - a * re];
    }
    fRe[j] = re;
    fIm[j] = im;
  }
  return { fRe, fIm };
}

/**
 * `stoltMaps` in the line kernels: `fkTraces` and `fkColumns` (fk2d), `rotateBins` (the half-integral and
 * the shift), `stoltInterpolate`, then per node `stoltAcross` and `stoltTime` (blendNodes). Only the
 * band, the table's new entries and the nodes' settings are made here.
 */
function stoltMapsWasm(
  kernels: LineKernels,
  g: StoltGeometry,
  data: ArrayLike<number>,
  tb: StoltTable,
  tol: number,
  halfIntegral: boolean,
  dtNs: number,
  shiftNs: number,
  prepare: (hi: number) => { nb: number; fRe: Float64Array; fIm: Float64Array },
  out: Float32Array,
): Float32Array {
  const { nTraces, nSamples, nx, nt, nw } = g;
  const K = kernels.k;
  // every bin may be reached (nb <= nw); the nodes' arrays are laid out once the bins are known
  const [d, spec, planT, planX, a, b, c, power, fr, fi, val, sinT, thT, cf, sf] = kernels.layout(
    8 * nTraces * nSamples, 16 * nx * nw, fftPlanBytes(nt), fftPlanBytes(nx), 16 * Math.max(nt, nx), 16 * Math.max(nt, nx), 16 * Math.max(nt, nx),
    8 * nw, 8 * nw, 8 * nw, 16 * nw * nx, 8 * nw * nx, 8 * nw * nx, 8 * nw, 8 * nw,
  );
  kernels.f64(d, nTraces * nSamples).set(data);
  writeFftPlan(kernels, nt, planT);
  writeFftPlan(kernels, nx, planX);
  K.fkTraces(d, nTraces, nSamples, nt, nx, spec, planT, a, b, c, power);
  const [lo, hi] = band(kernels.f64(power, nw), tol);
  K.fkColumns(spec, nTraces, nx, nw, lo, hi, planX, a, b, c);
  if (hi < lo) return out.fill(0);
  const rotate = (f: { c: Float64Array; s: Float64Array }) => {
    kernels.f64(cf, nw).set(f.c);
    kernels.f64(sf, nw).set(f.s);
    K.rotateBins(spec, nx, nw, Math.max(0, lo), Math.min(nw - 1, hi), cf, sf);
  };
  if (halfIntegral && !g.inverse) rotate(halfOrderFactors(nt, dtNs, -0.5));
  rotate(shiftFactors(nt, dtNs, shiftNs));
  const t = tableArrays(tb, kernels);
  const { nb, fRe, fIm } = prepare(hi);
  kernels.f64(fr, nb).set(fRe);
  kernels.f64(fi, nb).set(fIm);
  const at = tableLayout(t.rowLen.length * nw, kernels.base);
  const jHi = K.stoltInterpolate(spec, nx, nw, nb, lo, hi, at.u, at.jac, at.sin, at.theta, at.skip, at.taps, fr, fi, val, sinT, thT);
  if (jHi < 0) return out.fill(0);
  const nm = jHi + 1;
  const { nodes, plainFrom } = blendSetup(kernels.f64(sinT, nm * nx), g, nm);
  const [hcs, plain, recs, acc, o] = kernels.append(
    8 * 2 * nTraces * nm * nodes.length + 8 * nSamples * nodes.length, 8 * 2 * nTraces * nm, 20 * nodes.length, 16 * nSamples, 4 * nTraces * nSamples,
  );
  const rec = kernels.i32(recs, 5 * nodes.length);
  nodes.forEach((n, w) => {
    const hc = hcs + 8 * (2 * nTraces * nm + nSamples) * w;
    const bs = hc + 8 * 2 * nTraces * nm;
    kernels.f64(bs, nSamples).set(n.bs);
    K.stoltAcross(val, sinT, thT, nx, nTraces, 0, n.plainFrom, n.s1, n.sMax, n.th1, n.thMax, 1 / nx, planX, a, b, c, hc);
    rec.set([n.k0, n.k1, n.plainFrom, hc, bs], 5 * w);
  });
  K.stoltAcross(val, sinT, thT, nx, nTraces, plainFrom, nm, Infinity, Infinity, 0, 0, 1 / nx, planX, a, b, c, plain);
  K.stoltTime(plain, plainFrom, nm, nt, nTraces, nSamples, recs, nodes.length, planT, a, b, c, acc, o);
  out.set(kernels.f32(o, nTraces * nSamples));
  return out;
}

/**
 * The interpolated spectrum of `stoltMaps`: bin-major values (times the Jacobian), sin(theta) and theta
 * (read only where sin(theta) is above 0), bins 0..jHi.
 */
interface StoltSpectrum {
  val: Float64Array;
  sinT: Float64Array;
  thT: Float64Array;
  nx: number;
  nt: number;
  jHi: number;
}

/**
 * One bin of the interpolated spectrum (at `base`, nx wavenumbers) times a node's dip weight (dipWeight,
 * fk.ts, from the angles `thT` computed once) and `scale`, into `col`.
 */
function weighBin(val: Float64Array, sinT: Float64Array, thT: Float64Array, base: number, nx: number, s1: number, sMax: number, th1: number, thMax: number, scale: number, col: Float64Array): void {
  for (let ix = 0; ix < nx; ix++) {
    const sin = sinT[base + ix] as number;
    let g = scale;
    if (sin > s1) {
      const th = thT[base + ix] as number;
      g = sin >= sMax || th >= thMax ? 0 : th <= th1 ? scale : 0.5 * (1 + Math.cos((Math.PI * (th - th1)) / (thMax - th1))) * scale;
    }
    col[2 * ix] = (val[2 * (base + ix)] as number) * g;
    col[2 * ix + 1] = (val[2 * (base + ix) + 1] as number) * g;
  }
}

/** A node of `blendNodes`: its samples k0..k1, blend weights bs (with 1 / nt), dip limits, and its first plain bin. */
interface BlendNode {
  k0: number;
  k1: number;
  bs: Float64Array;
  s1: number;
  sMax: number;
  th1: number;
  thMax: number;
  plainFrom: number;
}

/**
 * The nodes that weigh some sample, sorted by their first plain bin, and the first bin plain for all.
 * A node weighs a bin by 1 (`rx` with the inverse's 1 / nx) wherever no sine of the bin passes its
 * taper's start: the largest sine of each bin, and from which bin on every bin is such a plain one
 * for a node. The plain bins are transformed across traces once, for every node.
 */
function blendSetup(sinT: Float64Array, g: StoltGeometry, nm: number): { nodes: BlendNode[]; plainFrom: number } {
  const { nx, nt, nSamples, anglesDeg, blend, taper } = g;
  const rt = 1 / nt;
  const sinMax = new Float64Array(nm);
  for (let j = 0; j < nm; j++) {
    let m = 0;
    for (let ix = 0; ix < nx; ix++) m = Math.max(m, sinT[j * nx + ix] as number);
    sinMax[j] = m;
  }
  const nodes: BlendNode[] = [];
  for (let w = 0; w < anglesDeg.length; w++) {
    const b = blend[w] as Float64Array;
    let k0 = 0;
    while (k0 < nSamples && b[k0] === 0) k0++;
    let k1 = nSamples - 1;
    while (k1 >= k0 && b[k1] === 0) k1--;
    if (k1 < k0) continue;
    // the blend weights with the time inverse's 1 / nt
    const bs = new Float64Array(nSamples);
    for (let k = k0; k <= k1; k++) bs[k] = (b[k] as number) * rt;
    // dipWeight (fk.ts) from the angles computed once: 1 up to the taper, 0 past the limit, the cosine between
    const thMax = ((anglesDeg[w] as number) * Math.PI) / 180;
    const th1 = thMax * (1 - taper);
    const s1 = Math.sin(th1);
    const sMax = Math.sin(thMax);
    let plainFrom = nm;
    while (plainFrom > 0 && (sinMax[plainFrom - 1] as number) <= s1) plainFrom--;
    nodes.push({ k0, k1, bs, s1, sMax, th1, thMax, plainFrom });
  }
  // nodes by their first plain bin: each writes its own bins below it over the last one's, so the plain
  // bins from the first node's on are packed once per pair (at most two nodes blend at a sample, so
  // the order of the sum does not matter)
  const plainFrom = Math.min(nm, ...nodes.map((n) => n.plainFrom));
  nodes.sort((a, b) => a.plainFrom - b.plainFrom);
  return { nodes, plainFrom };
}

/**
 * Each node's dip weights on the spectrum, back across traces (every node first, each into its own
 * bin-major array; the bins no node's taper reaches, most of the band, once for all), then per pair of
 * traces back in time node after node, each node's tau range blended into a sum of the pair's samples
 * that goes to `out` once.
 */
function blendNodes(sp: StoltSpectrum, g: StoltGeometry, out: Float32Array): Float32Array {
  const { val, sinT, thT, nx, nt, jHi } = sp;
  const { nTraces, nSamples } = g;
  const nw = nt / 2 + 1;
  if (jHi < 0) return out.fill(0);
  const fx = stagedTransform(fftOfSize(nx));
  const ft = stagedTransform(fftOfSize(nt));
  const nm = jHi + 1;
  const col = fx.input;
  const full = ft.input;
  const rx = 1 / nx;
  // bins m0..m1 - 1 back across traces, kept bin-major (the first nTraces of each): the time loop reads
  // a pair of traces across the bins, two neighbours in each bin's cache line
  const across = (hc: Float64Array, m0: number, m1: number, s1: number, sMax: number, th1: number, thMax: number) => {
    for (let j = m0; j < m1; j++) {
      weighBin(val, sinT, thT, j * nx, nx, s1, sMax, th1, thMax, rx, col);
      const r = fx.run(true);
      hc.set(nx === nTraces ? r : r.subarray(0, 2 * nTraces), 2 * nTraces * j);
    }
  };
  const { nodes, plainFrom } = blendSetup(sinT, g, nm);
  const hcs = nodes.map((n, w) => {
    const hc = scratch(`stolt hc ${w}`, 2 * nTraces * nm);
    across(hc, 0, n.plainFrom, n.s1, n.sMax, n.th1, n.thMax);
    return hc;
  });
  // the plain bins (weighBin's weight is 1 below any taper: the same columns as each node's own)
  const plain = scratch('stolt hc plain', 2 * nTraces * nm);
  across(plain, plainFrom, nm, Infinity, Infinity, 0, 0);
  // in time, two real traces per complex inverse: ifft(A + iB) = a + ib for Hermitian A, B (bins past jHi stay 0)
  const acc = new Float64Array(2 * nSamples);
  // the bins past jHi stay 0: packing writes the others, and a run leaves its input as it was
  full.fill(0);
  for (let i = 0; i < nTraces; i += 2) {
    const pair = i + 1 < nTraces;
    const oa = 2 * i;
    const ob = pair ? 2 * (i + 1) : -1;
    const stride = 2 * nTraces;
    acc.fill(0);
    packTracePair(plain, oa, ob, plainFrom, nm - 1, nw, nt, full, stride);
    nodes.forEach(({ k0, k1, bs, plainFrom: p }, w) => {
      packTracePair(hcs[w] as Float64Array, oa, ob, 0, p - 1, nw, nt, full, stride);
      const back = ft.run(true);
      if (pair) {
        for (let k = k0; k <= k1; k++) {
          const g = bs[k] as number;
          acc[k] = (acc[k] as number) + g * (back[2 * k] as number);
          acc[nSamples + k] = (acc[nSamples + k] as number) + g * (back[2 * k + 1] as number);
        }
      } else for (let k = k0; k <= k1; k++) acc[k] = (acc[k] as number) + (bs[k] as number) * (back[2 * k] as number);
    });
    out.set(pair ? acc : acc.subarray(0, nSamples), i * nSamples);
  }
  return out;
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

