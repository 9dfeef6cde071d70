// The Stolt maps of ../src/stolt.ts and the f-k transforms they need (../src/fk.ts) as line kernels: the
// JavaScript's operations in the same order on float64, the transforms through `runPlan`, so the same
// numbers. Complex numbers interleaved (re, im); spectra row-major, row i of nw bins at 2 i nw.
import { runPlan } from './fft-run';

/** Math.cos of JavaScript (the taper of `weighBin`): an import, so the same bits as the JavaScript path. */
@external("Math", "cos")
declare function jsCos(x: f64): f64;

@inline function f64At(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}

@inline function setF64(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}

/**
 * The first part of `fk2d`: the nTraces float64 traces at `data` (nSamples each) transformed in time two
 * at a time (a + ib, zero padded to nt in `a`, a plan of size nt), split into rows of `spec` (bins 0..nw - 1),
 * the padding rows nTraces..nx - 1 zero, the power of each bin summed into `power`.
 */
export function fkTraces(data: usize, nTraces: i32, nSamples: i32, nt: i32, nx: i32, spec: usize, plan: usize, a: usize, b: usize, c: usize, power: usize): void {
  const nw = nt / 2 + 1;
  memory.fill(spec + (<usize>(2 * nTraces * nw) << 3), 0, <usize>(2 * (nx - nTraces) * nw) << 3);
  memory.fill(a, 0, <usize>(2 * nt) << 3);
  memory.fill(power, 0, <usize>nw << 3);
  for (let i = 0; i < nTraces; i += 2) {
    const two = i + 1 < nTraces;
    const oa = i * nSamples;
    const ob = oa + nSamples;
    for (let k = 0; k < nSamples; k++) {
      setF64(a, 2 * k, f64At(data, oa + k));
      setF64(a, 2 * k + 1, two ? f64At(data, ob + k) : 0);
    }
    const z = runPlan(plan, a, b, c, false);
    const sa = 2 * i * nw;
    const sb = sa + 2 * nw;
    for (let m = 0; m < nw; m++) {
      const cm = 2 * ((nt - m) % nt);
      const zr = f64At(z, 2 * m), zi = f64At(z, 2 * m + 1);
      const cr = f64At(z, cm), ci = f64At(z, cm + 1);
      const ar = 0.5 * (zr + cr), ai = 0.5 * (zi - ci);
      setF64(spec, sa + 2 * m, ar);
      setF64(spec, sa + 2 * m + 1, ai);
      let p = ar * ar + ai * ai;
      if (two) {
        const br = 0.5 * (zi + ci), bi = -0.5 * (zr - cr);
        setF64(spec, sb + 2 * m, br);
        setF64(spec, sb + 2 * m + 1, bi);
        p += br * br + bi * bi;
      }
      setF64(power, m, f64At(power, m) + p);
    }
  }
}

/**
 * The rest of `fk2d` once the band [lo, hi] is known: bins outside it zeroed in rows 0..nTraces - 1, then
 * the band's columns (nx numbers, a plan of size nx) transformed across traces in place.
 */
export function fkColumns(spec: usize, nTraces: i32, nx: i32, nw: i32, lo: i32, hi: i32, plan: usize, a: usize, b: usize, c: usize): void {
  for (let i = 0; i < nTraces; i++) {
    const row = spec + (<usize>(2 * i * nw) << 3);
    if (hi < lo) memory.fill(row, 0, <usize>(2 * nw) << 3);
    else {
      memory.fill(row, 0, <usize>(2 * lo) << 3);
      memory.fill(row + (<usize>(2 * (hi + 1)) << 3), 0, <usize>(2 * (nw - hi - 1)) << 3);
    }
  }
  for (let m = max(0, lo); m <= min(hi, nw - 1); m++) {
    for (let i = 0; i < nx; i++) v128.store(a + (<usize>i << 4), v128.load(spec + (<usize>(i * nw + m) << 4)));
    const r = runPlan(plan, a, b, c, false);
    for (let i = 0; i < nx; i++) v128.store(spec + (<usize>(i * nw + m) << 4), v128.load(r + (<usize>i << 4)));
  }
}

/** Bins m0..m1 of every row (nx rows) times (c[m] + i s[m]): `shiftSpectrum` and `halfOrderFilter` (`rotateBins`, ../src/fk.ts). */
export function rotateBins(spec: usize, nx: i32, nw: i32, m0: i32, m1: i32, c: usize, s: usize): void {
  for (let i = 0; i < nx; i++) {
    for (let m = m0; m <= m1; m++) {
      const o = 2 * (i * nw + m);
      const re = f64At(spec, o);
      const im = f64At(spec, o + 1);
      setF64(spec, o, re * f64At(c, m) - im * f64At(s, m));
      setF64(spec, o + 1, re * f64At(s, m) + im * f64At(c, m));
    }
  }
}

const HALF_TAPS = 4;
const TAP_STRIDE = 2 * HALF_TAPS + 3;

// `interpolate`'s results: row A, row B
let ipRe: f64 = 0;
let ipIm: f64 = 0;
let ipReB: f64 = 0;
let ipImB: f64 = 0;

/** `rotate` of ../src/stolt.ts into ipRe, ipIm (B: ipReB, ipImB). */
@inline function rotate(re: f64, im: f64, c2: f64, s2: f64, i0: i32, toB: bool): void {
  const r = re * c2 + im * s2;
  const i = im * c2 - re * s2;
  let x: f64, y: f64;
  switch (i0 & 3) {
    case 0: {
      x = r;
      y = i;
      break;
    }
    case 1: {
      x = i;
      y = -r;
      break;
    }
    case 2: {
      x = -r;
      y = -i;
      break;
    }
    default: {
      x = -i;
      y = r;
    }
  }
  if (toB) {
    ipReB = x;
    ipImB = y;
  } else {
    ipRe = x;
    ipIm = y;
  }
}

/** `interpolate` of ../src/stolt.ts: rows are byte pointers; `two` interpolates rowB (conjugate row rowcB) too. */
function interpolate(row: usize, rowc: usize, nw: i32, u: f64, taps: usize, o: i32, two: bool, rowB: usize, rowcB: usize): void {
  const i0f = Math.floor(u);
  const i0 = <i32>i0f;
  const f = u - i0f;
  let re: f64 = 0;
  let im: f64 = 0;
  let reB: f64 = 0;
  let imB: f64 = 0;
  let c2: f64 = 1;
  let s2: f64 = 0;
  if (f == 0) {
    if (i0 < nw) {
      re = f64At(row, 2 * i0);
      im = f64At(row, 2 * i0 + 1);
      if (two) {
        reB = f64At(rowB, 2 * i0);
        imB = f64At(rowB, 2 * i0 + 1);
      }
    }
  } else {
    for (let q = -HALF_TAPS; q < HALF_TAPS; q++) {
      const w = f64At(taps, o + q + HALF_TAPS);
      const n = i0 - q;
      if (n >= nw) continue;
      if (n >= 0) {
        re += w * f64At(row, 2 * n);
        im += w * f64At(row, 2 * n + 1);
        if (two) {
          reB += w * f64At(rowB, 2 * n);
          imB += w * f64At(rowB, 2 * n + 1);
        }
      } else {
        re += w * f64At(rowc, -2 * n);
        im -= w * f64At(rowc, -2 * n + 1);
        if (two) {
          reB += w * f64At(rowcB, -2 * n);
          imB -= w * f64At(rowcB, -2 * n + 1);
        }
      }
    }
    const ws = f64At(taps, o + 2 * HALF_TAPS);
    re /= ws;
    im /= ws;
    reB /= ws;
    imB /= ws;
    c2 = f64At(taps, o + 2 * HALF_TAPS + 1);
    s2 = f64At(taps, o + 2 * HALF_TAPS + 2);
  }
  rotate(re, im, c2, s2, i0, false);
  if (two) rotate(reB, imB, c2, s2, i0, true);
}

/**
 * The loop of `stoltMaps` over wavenumbers and output bins j < nb: the spectrum (nx rows of nw bins)
 * interpolated at the table's bins u (`StoltTable` entry ix nw + j: u, jac, sin, theta float64, skip
 * uint8, taps TAP_STRIDE float64), times (fRe[j] + i fIm[j]) and the Jacobian, into the bin-major `val`
 * (2 nb nx), with sin(theta) and theta into sinT, thT (nb nx; sinT zero where nothing is written).
 * Returns the last bin written (-1: none).
 */
export function stoltInterpolate(
  spec: usize, nx: i32, nw: i32, nb: i32, lo: i32, hi: i32,
  tu: usize, tjac: usize, tsin: usize, tth: usize, tskip: usize, taps: usize,
  fRe: usize, fIm: usize, val: usize, sinT: usize, thT: usize,
): i32 {
  memory.fill(val, 0, <usize>(2 * nb * nx) << 3);
  memory.fill(sinT, 0, <usize>(nb * nx) << 3);
  const fhi = <f64>hi;
  const flo = <f64>lo;
  let jHi = -1;
  for (let ix = 0; ix <= nx >> 1; ix++) {
    const ixB = (nx - ix) % nx;
    const two = ixB != ix;
    const row = spec + (<usize>(2 * ix * nw) << 3);
    const rowc = spec + (<usize>(2 * ixB * nw) << 3);
    for (let j = 0; j < nb; j++) {
      const e = ix * nw + j;
      const u = f64At(tu, e);
      if (u != u) continue;
      if (u - HALF_TAPS > fhi) break;
      if (load<u8>(tskip + <usize>e) || !(u - HALF_TAPS <= fhi && (u + HALF_TAPS >= flo || HALF_TAPS - u >= flo))) continue;
      const jac = f64At(tjac, e);
      // the partner's row is this one's conjugate row and the other way round
      interpolate(row, rowc, nw, u, taps, e * TAP_STRIDE, two, rowc, row);
      const cr = f64At(fRe, j);
      const ci = f64At(fIm, j);
      const q = j * nx + ix;
      setF64(val, 2 * q, (ipRe * cr - ipIm * ci) * jac);
      setF64(val, 2 * q + 1, (ipRe * ci + ipIm * cr) * jac);
      setF64(sinT, q, f64At(tsin, e));
      setF64(thT, q, f64At(tth, e));
      if (two) {
        const qB = j * nx + ixB;
        setF64(val, 2 * qB, (ipReB * cr - ipImB * ci) * jac);
        setF64(val, 2 * qB + 1, (ipReB * ci + ipImB * cr) * jac);
        setF64(sinT, qB, f64At(tsin, e));
        setF64(thT, qB, f64At(tth, e));
      }
      if (j > jHi) jHi = j;
    }
  }
  return jHi;
}

/**
 * `across` of `blendNodes`: bins m0..m1 - 1 of the interpolated spectrum times a node's dip weight
 * (`weighBin`: 1 up to th1, 0 past sMax or thMax, the cosine taper between, times `scale`), each back
 * across traces (a plan of size nx, unscaled inverse), the first nTraces numbers of bin j to hc at
 * 2 nTraces j.
 */
export function stoltAcross(
  val: usize, sinT: usize, thT: usize, nx: i32, nTraces: i32, m0: i32, m1: i32,
  s1: f64, sMax: f64, th1: f64, thMax: f64, scale: f64, plan: usize, a: usize, b: usize, c: usize, hc: usize,
): void {
  for (let j = m0; j < m1; j++) {
    const base = j * nx;
    for (let ix = 0; ix < nx; ix++) {
      const sin = f64At(sinT, base + ix);
      let g = scale;
      if (sin > s1) {
        const th = f64At(thT, base + ix);
        g = sin >= sMax || th >= thMax ? 0 : th <= th1 ? scale : 0.5 * (1 + jsCos((Math.PI * (th - th1)) / (thMax - th1))) * scale;
      }
      setF64(a, 2 * ix, f64At(val, 2 * (base + ix)) * g);
      setF64(a, 2 * ix + 1, f64At(val, 2 * (base + ix) + 1) * g);
    }
    const r = runPlan(plan, a, b, c, true);
    memory.copy(hc + (<usize>(2 * nTraces * j) << 3), r, <usize>(2 * nTraces) << 3);
  }
}

/** `packTracePair` of ../src/fk.ts: bins m0..m1 of traces at oa, ob (ob < 0: none) of a bin-major `spec` into the full spectrum `full`. */
function packTracePair(spec: usize, oa: i32, ob: i32, m0: i32, m1: i32, nw: i32, nt: i32, full: usize, stride: i32): void {
  for (let m = m0; m <= m1; m++) {
    const edge = m == 0 || m == nw - 1;
    const ar = f64At(spec, oa + stride * m);
    const ai: f64 = edge ? 0 : f64At(spec, oa + stride * m + 1);
    const br: f64 = ob < 0 ? 0 : f64At(spec, ob + stride * m);
    const bi: f64 = ob < 0 || edge ? 0 : f64At(spec, ob + stride * m + 1);
    setF64(full, 2 * m, ar - bi);
    setF64(full, 2 * m + 1, ai + br);
    if (!edge) {
      setF64(full, 2 * (nt - m), ar + bi);
      setF64(full, 2 * (nt - m) + 1, -ai + br);
    }
  }
}

/**
 * The time loop of `blendNodes`: per pair of traces, the plain bins (from `plainFrom` to nm - 1 of
 * `plain`) packed once, then each node (int32 records of `nodes`: k0, k1, its first plain bin, the
 * pointers of its hc and of its blend weights bs) its own bins below its first plain bin, back in time
 * (a plan of size nt), its samples k0..k1 times bs added to the pair's sums, which go to the float32 `out`.
 */
export function stoltTime(
  plain: usize, plainFrom: i32, nm: i32, nt: i32, nTraces: i32, nSamples: i32, nodes: usize, nNodes: i32,
  plan: usize, full: usize, b: usize, c: usize, acc: usize, out: usize,
): void {
  const nw = nt / 2 + 1;
  const stride = 2 * nTraces;
  memory.fill(full, 0, <usize>(2 * nt) << 3);
  for (let i = 0; i < nTraces; i += 2) {
    const pair = i + 1 < nTraces;
    const oa = 2 * i;
    const ob = pair ? 2 * (i + 1) : -1;
    memory.fill(acc, 0, <usize>(2 * nSamples) << 3);
    packTracePair(plain, oa, ob, plainFrom, nm - 1, nw, nt, full, stride);
    for (let w = 0; w < nNodes; w++) {
      const rec = nodes + (<usize>(20 * w));
      const k0 = load<i32>(rec);
      const k1 = load<i32>(rec, 4);
      const p = load<i32>(rec, 8);
      const hc = <usize>load<i32>(rec, 12);
      const bs = <usize>load<i32>(rec, 16);
      packTracePair(hc, oa, ob, 0, p - 1, nw, nt, full, stride);
      const back = runPlan(plan, full, b, c, true);
      if (pair) {
        for (let k = k0; k <= k1; k++) {
          const g = f64At(bs, k);
          setF64(acc, k, f64At(acc, k) + g * f64At(back, 2 * k));
          setF64(acc, nSamples + k, f64At(acc, nSamples + k) + g * f64At(back, 2 * k + 1));
        }
      } else for (let k = k0; k <= k1; k++) setF64(acc, k, f64At(acc, k) + f64At(bs, k) * f64At(back, 2 * k));
    }
    const o = out + (<usize>(i * nSamples) << 2);
    const nk = pair ? 2 * nSamples : nSamples;
    for (let k = 0; k < nk; k++) store<f32>(o + (<usize>k << 2), <f32>f64At(acc, k));
  }
}
