/**
 * Digital Butterworth design as second-order sections, by the same steps as `scipy.signal.butter(N, Wn,
 * btype, output='sos')`: analog prototype poles, lp2lp/lp2hp/lp2bp with pre-warped corners, bilinear
 * transform (fs = 2), then sections. Section layout is scipy's: [b0, b1, b2, a0, a1, a2] per row, a0 = 1.
 * Sections are paired differently from scipy's 'nearest' pairing; the cascade is the same filter.
 */
export type FilterKind = 'lowpass' | 'highpass' | 'bandpass';

type Cx = { re: number; im: number };
const cx = (re: number, im = 0): Cx => ({ re, im });
const add = (a: Cx, b: Cx): Cx => cx(a.re + b.re, a.im + b.im);
const sub = (a: Cx, b: Cx): Cx => cx(a.re - b.re, a.im - b.im);
const mul = (a: Cx, b: Cx): Cx => cx(a.re * b.re - a.im * b.im, a.re * b.im + a.im * b.re);
const div = (a: Cx, b: Cx): Cx => {
  const d = b.re * b.re + b.im * b.im;
  return cx((a.re * b.re + a.im * b.im) / d, (a.im * b.re - a.re * b.im) / d);
};
const scale = (a: Cx, s: number): Cx => cx(a.re * s, a.im * s);
function sqrtC(a: Cx): Cx {
  const r = Math.hypot(a.re, a.im);
  const re = Math.sqrt((r + a.re) / 2);
  const im = Math.sign(a.im || 1) * Math.sqrt(Math.max(0, (r - a.re) / 2));
  return a.im === 0 && a.re < 0 ? cx(0, Math.sqrt(-a.re)) : cx(re, im);
}

/**
 * @param order filter order N (bandpass: 2N poles, N sections)
 * @param wn corner(s) as a fraction of the Nyquist frequency, 0 < wn < 1 (scipy's `Wn` with fs unset)
 */
export function butterworthSos(order: number, wn: number | readonly [number, number], kind: FilterKind): Float64Array {
  if (!Number.isInteger(order) || order < 1) throw new Error(`butterworth: order must be an integer >= 1, found ${order}`);
  const corners = typeof wn === 'number' ? [wn] : [...wn];
  for (const w of corners) {
    if (!(w > 0 && w < 1)) throw new Error(`butterworth: corners must be in (0, 1) of Nyquist, found ${w}`);
  }
  if ((kind === 'bandpass') !== (corners.length === 2)) {
    throw new Error(`butterworth: ${kind} takes ${kind === 'bandpass' ? 'two corners' : 'one corner'}, found ${corners.length}`);
  }
  // buttap: poles on the unit circle in the left half plane.
  let p: Cx[] = [];
  for (let m = -order + 1; m < order; m += 2) {
    const a = (Math.PI * m) / (2 * order);
    p.push(cx(-Math.cos(a), -Math.sin(a)));
  }
  let z: Cx[] = [];
  let k = 1;
  const fs = 2;
  const warped = corners.map((w) => 2 * fs * Math.tan((Math.PI * w) / fs));
  if (kind === 'lowpass') {
    const wo = warped[0] as number;
    p = p.map((q) => scale(q, wo));
    k *= wo ** order;
  } else if (kind === 'highpass') {
    const wo = warped[0] as number;
    let prod = cx(1);
    for (const q of p) prod = mul(prod, scale(q, -1));
    k *= div(cx(1), prod).re;
    p = p.map((q) => div(cx(wo), q));
    z = Array.from({ length: order }, () => cx(0));
  } else {
    const w1 = warped[0] as number;
    const w2 = warped[1] as number;
    if (!(w2 > w1)) throw new Error(`butterworth: band corners must increase, found ${corners.join(', ')}`);
    const bw = w2 - w1;
    const wo = Math.sqrt(w1 * w2);
    const lp = p.map((q) => scale(q, bw / 2));
    const pb: Cx[] = [];
    for (const q of lp) pb.push(add(q, sqrtC(sub(mul(q, q), cx(wo * wo)))));
    for (const q of lp) pb.push(sub(q, sqrtC(sub(mul(q, q), cx(wo * wo)))));
    p = pb;
    z = Array.from({ length: order }, () => cx(0));
    k *= bw ** order;
  }
  // bilinear_zpk
  const fs2 = cx(2 * fs);
  const degree = p.length - z.length;
  let num = cx(1);
  for (const q of z) num = mul(num, sub(fs2, q));
  let den = cx(1);
  for (const q of p) den = mul(den, sub(fs2, q));
  k *= div(num, den).re;
  const zz = z.map((q) => div(add(fs2, q), sub(fs2, q)));
  for (let i = 0; i < degree; i++) zz.push(cx(-1));
  const pz = p.map((q) => div(add(fs2, q), sub(fs2, q)));
  return toSos(zz, pz, k);
}

function toSos(z: Cx[], p: Cx[], k: number): Float64Array {
  const tol = 1e-12;
  // Poles: each complex pole with its conjugate, real poles two by two.
  const pairsP: [Cx, Cx | null][] = [];
  const reals: Cx[] = [];
  for (const q of p) {
    if (Math.abs(q.im) <= tol * Math.max(1, Math.abs(q.re))) reals.push(cx(q.re));
    else if (q.im > 0) pairsP.push([q, cx(q.re, -q.im)]);
  }
  reals.sort((a, b) => a.re - b.re);
  for (let i = 0; i < reals.length; i += 2) pairsP.push([reals[i] as Cx, reals[i + 1] ?? null]);
  // Butterworth digital zeros are all real (+1 or -1): pair lowest with highest so a band-pass section gets (+1, -1).
  const zs = z.map((q) => q.re).sort((a, b) => a - b);
  const nSec = pairsP.length;
  const sos = new Float64Array(nSec * 6);
  const nz = zs.length;
  const zPairs: [number, number | null][] = [];
  const half = Math.ceil(nz / 2);
  for (let i = 0; i < half; i++) zPairs.push([zs[i] as number, i + half < nz ? (zs[i + half] as number) : null]);
  for (let s = 0; s < nSec; s++) {
    const [p1, p2] = pairsP[s] as [Cx, Cx | null];
    const zp = zPairs[s] ?? [null, null];
    const b = poly(zp[0], zp[1]);
    const a = p2 ? [1, -(p1.re + p2.re), mul(p1, p2).re] : [1, -p1.re, 0];
    const g = s === 0 ? k : 1;
    sos.set([b[0] * g, b[1] * g, b[2] * g, a[0] as number, a[1] as number, a[2] as number], s * 6);
  }
  return sos;
}

function poly(r1: number | null, r2: number | null): [number, number, number] {
  if (r1 === null) return [1, 0, 0];
  if (r2 === null) return [1, -r1, 0];
  return [1, -(r1 + r2), r1 * r2];
}

/** Steady-state section states for a unit step (scipy.signal.sosfilt_zi), 2 per section. */
export function sosfiltZi(sos: Float64Array): Float64Array {
  const n = sos.length / 6;
  const zi = new Float64Array(2 * n);
  let gain = 1;
  for (let s = 0; s < n; s++) {
    const [b0, b1, b2, , a1, a2] = sos.subarray(s * 6, s * 6 + 6) as unknown as number[];
    const y = ((b0 as number) + (b1 as number) + (b2 as number)) / (1 + (a1 as number) + (a2 as number));
    const z1 = (b2 as number) - (a2 as number) * y;
    const z0 = (b1 as number) - (a1 as number) * y + z1;
    zi[2 * s] = z0 * gain;
    zi[2 * s + 1] = z1 * gain;
    gain *= y;
  }
  return zi;
}

/** Cascade filter in place, transposed direct form II (as scipy's sosfilt), states in `z` (updated). */
export function sosfiltInPlace(sos: Float64Array, x: Float64Array, z: Float64Array, reverse = false): void {
  const nSec = sos.length / 6;
  const n = x.length;
  for (let s = 0; s < nSec; s++) {
    const o = s * 6;
    const b0 = sos[o] as number, b1 = sos[o + 1] as number, b2 = sos[o + 2] as number;
    const a1 = sos[o + 4] as number, a2 = sos[o + 5] as number;
    let z0 = z[2 * s] as number;
    let z1 = z[2 * s + 1] as number;
    if (!reverse) {
      for (let i = 0; i < n; i++) {
        const xi = x[i] as number;
        const y = b0 * xi + z0;
        z0 = b1 * xi - a1 * y + z1;
        z1 = b2 * xi - a2 * y;
        x[i] = y;
      }
    } else {
      for (let i = n - 1; i >= 0; i--) {
        const xi = x[i] as number;
        const y = b0 * xi + z0;
        z0 = b1 * xi - a1 * y + z1;
        z1 = b2 * xi - a2 * y;
        x[i] = y;
      }
    }
    z[2 * s] = z0;
    z[2 * s + 1] = z1;
  }
}

/**
 * `sosfiltInPlace` on two signals of one length at once, each with its own state: the same operations
 * per signal, so the same numbers; the two recurrences, each a chain of dependent multiply-adds,
 * overlap in the processor (about twice the throughput of one).
 */
export function sosfiltInPlacePair(sos: Float64Array, x: Float64Array, z: Float64Array, u: Float64Array, w: Float64Array, reverse = false): void {
  const nSec = sos.length / 6;
  const n = x.length;
  for (let s = 0; s < nSec; s++) {
    const o = s * 6;
    const b0 = sos[o] as number, b1 = sos[o + 1] as number, b2 = sos[o + 2] as number;
    const a1 = sos[o + 4] as number, a2 = sos[o + 5] as number;
    let z0 = z[2 * s] as number;
    let z1 = z[2 * s + 1] as number;
    let w0 = w[2 * s] as number;
    let w1 = w[2 * s + 1] as number;
    const step = reverse ? -1 : 1;
    for (let k = 0, i = reverse ? n - 1 : 0; k < n; k++, i += step) {
      const xi = x[i] as number;
      const ui = u[i] as number;
      const y = b0 * xi + z0;
      const v = b0 * ui + w0;
      z0 = b1 * xi - a1 * y + z1;
      w0 = b1 * ui - a1 * v + w1;
      z1 = b2 * xi - a2 * y;
      w1 = b2 * ui - a2 * v;
      x[i] = y;
      u[i] = v;
    }
    z[2 * s] = z0;
    z[2 * s + 1] = z1;
    w[2 * s] = w0;
    w[2 * s + 1] = w1;
  }
}

/** Default pad length of scipy.signal.sosfiltfilt for these sections. */
export function sosfiltfiltPadlen(sos: Float64Array): number {
  const n = sos.length / 6;
  let zb = 0;
  let za = 0;
  for (let s = 0; s < n; s++) {
    if (sos[s * 6 + 2] === 0) zb++;
    if (sos[s * 6 + 5] === 0) za++;
  }
  return 3 * (2 * n + 1 - Math.min(zb, za));
}

export interface FiltfiltWorkspace {
  sos: Float64Array;
  zi: Float64Array;
  z: Float64Array;
  ext: Float64Array;
  edge: number;
}

export function filtfiltWorkspace(sos: Float64Array, n: number, padlen?: number): FiltfiltWorkspace {
  // scipy refuses n <= padlen; shorter traces here get a shorter pad (n - 1) instead.
  const edge = Math.max(0, Math.min(padlen ?? sosfiltfiltPadlen(sos), n - 1));
  return { sos, zi: sosfiltZi(sos), z: new Float64Array(sos.length / 3), ext: new Float64Array(n + 2 * edge), edge };
}

/**
 * Zero-phase forward-backward filtering as scipy.signal.sosfiltfilt(sos, x) with padtype 'odd' and its
 * default padlen: odd extension of `edge` samples at both ends, forward pass from the steady state scaled
 * by the first extended sample, backward pass likewise, extension removed.
 */
export function sosfiltfilt(
  sos: Float64Array,
  x: ArrayLike<number>,
  options: { workspace?: FiltfiltWorkspace; padlen?: number } = {},
  out?: Float32Array | Float64Array,
): Float32Array | Float64Array {
  const n = x.length;
  const ws = options.workspace ?? filtfiltWorkspace(sos, n, options.padlen);
  const { ext, edge, zi, z } = ws;
  if (ext.length !== n + 2 * edge) throw new Error(`sosfiltfilt: workspace for ${ext.length - 2 * edge} samples used on ${n}`);
  const res = out ?? new Float64Array(n);
  if (n === 0) return res;
  const x0 = x[0] as number;
  const xn = x[n - 1] as number;
  for (let i = 0; i < edge; i++) {
    ext[i] = 2 * x0 - (x[edge - i] as number);
    ext[edge + n + i] = 2 * xn - (x[n - 2 - i] as number);
  }
  for (let i = 0; i < n; i++) ext[edge + i] = x[i] as number;
  const e0 = ext[0] as number;
  for (let i = 0; i < z.length; i++) z[i] = (zi[i] as number) * e0;
  sosfiltInPlace(sos, ext, z);
  const y0 = ext[ext.length - 1] as number;
  for (let i = 0; i < z.length; i++) z[i] = (zi[i] as number) * y0;
  sosfiltInPlace(sos, ext, z, true);
  for (let i = 0; i < n; i++) res[i] = ext[edge + i] as number;
  return res;
}

/**
 * `sosfiltfilt` of two signals of one length at once (`sosfiltInPlacePair`): the same numbers as two
 * calls. `wa` and `wb` are two workspaces of `filtfiltWorkspace(sos, n)`.
 */
export function sosfiltfiltPair(
  sos: Float64Array,
  xa: ArrayLike<number>,
  xb: ArrayLike<number>,
  wa: FiltfiltWorkspace,
  wb: FiltfiltWorkspace,
  outA: Float32Array | Float64Array,
  outB: Float32Array | Float64Array,
): void {
  const n = xa.length;
  if (xb.length !== n || wa.ext.length !== n + 2 * wa.edge || wb.ext.length !== wa.ext.length) throw new Error('sosfiltfiltPair: two signals of the workspaces\' length expected');
  if (n === 0) return;
  const { edge, zi } = wa;
  const ea = wa.ext;
  const eb = wb.ext;
  for (const [x, ext] of [[xa, ea], [xb, eb]] as const) {
    const x0 = x[0] as number;
    const xn = x[n - 1] as number;
    for (let i = 0; i < edge; i++) {
      ext[i] = 2 * x0 - (x[edge - i] as number);
      ext[edge + n + i] = 2 * xn - (x[n - 2 - i] as number);
    }
    for (let i = 0; i < n; i++) ext[edge + i] = x[i] as number;
  }
  const za = wa.z;
  const zb = wb.z;
  const a0 = ea[0] as number;
  const b0 = eb[0] as number;
  for (let i = 0; i < za.length; i++) {
    za[i] = (zi[i] as number) * a0;
    zb[i] = (zi[i] as number) * b0;
  }
  sosfiltInPlacePair(sos, ea, za, eb, zb);
  const ya = ea[ea.length - 1] as number;
  const yb = eb[eb.length - 1] as number;
  for (let i = 0; i < za.length; i++) {
    za[i] = (zi[i] as number) * ya;
    zb[i] = (zi[i] as number) * yb;
  }
  sosfiltInPlacePair(sos, ea, za, eb, zb, true);
  for (let i = 0; i < n; i++) {
    outA[i] = ea[edge + i] as number;
    outB[i] = eb[edge + i] as number;
  }
}
