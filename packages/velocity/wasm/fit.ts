// `irls` of ../src/fit.ts in WebAssembly: Levenberg-Marquardt on the picks' times with the specular
// path of a circle (or a point), reweighted by Tukey's biweight or Huber. The same operations in the same
// order in float64; sin, cos, atan2 and pow are JavaScript's (imports), so the same numbers.

import { selectRank } from '../../processing/wasm/select';

@external("Math", "sin")
declare function jsSin(x: f64): f64;
@external("Math", "cos")
declare function jsCos(x: f64): f64;
@external("Math", "atan2")
declare function jsAtan2(y: f64, x: f64): f64;
@external("Math", "pow")
declare function jsPow(x: f64, y: f64): f64;

const TUKEY_C = 4.685;
const HUBER_C = 1.345;

@inline function at(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}

@inline function set(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}

// the picks of the fit (`irls`): offsets, times, and the kept specular points (sin, cos, have) of the
// parameters in `key` (the cache of ../src/fit.ts: solved once per parameter set, the same values)
let gX: usize = 0;
let gT: usize = 0;
let gN: i32 = 0;
let gSin: usize = 0;
let gCos: usize = 0;
let gHave: usize = 0;
let key0: f64 = NaN;
let key1: f64 = NaN;
let key2: f64 = NaN;
let key3: f64 = NaN;
let keyS: f64 = NaN;
let known = false;

/** `specularPoints`: the cache for parameters p (0 = x0, t0, v, R), emptied when they changed; `known` false for a point. */
function specularPoints(p: usize, s: f64): void {
  known = at(p, 3) > 0;
  if (!known) return;
  if (key0 != at(p, 0) || key1 != at(p, 1) || key2 != at(p, 2) || key3 != at(p, 3) || keyS != s) {
    key0 = at(p, 0);
    key1 = at(p, 1);
    key2 = at(p, 2);
    key3 = at(p, 3);
    keyS = s;
    memory.fill(gHave, 0, <usize>gN);
  }
}

// `specularPath`'s gradient
let grad0: f64 = 0;
let grad1: f64 = 0;
let grad2: f64 = 0;

/** `specularPath` of ../src/fit.ts (pick i, with the cache when `known`); the gradient into grad0..2 with `withGrad`. */
function specularPath(dx: f64, zc: f64, R: f64, h: f64, withGrad: bool, i: i32, radiusGrad: bool): f64 {
  let sin: f64 = 0;
  let cos: f64 = 1;
  if (R > 0 && known && load<u8>(gHave + <usize>i)) {
    sin = at(gSin, i);
    cos = at(gCos, i);
  } else if (R > 0) {
    let phi = jsAtan2(dx, zc);
    for (let it = 0; it < 3 && h > 0; it++) {
      sin = jsSin(phi);
      cos = jsCos(phi);
      const px = R * sin - dx;
      const pz = zc - R * cos;
      const ax = px + h;
      const bx = px - h;
      const d1 = Math.sqrt(ax * ax + pz * pz);
      const d2 = Math.sqrt(bx * bx + pz * pz);
      const g1 = (ax * R * cos + pz * R * sin) / d1;
      const g2 = (bx * R * cos + pz * R * sin) / d2;
      const gp = g1 + g2;
      const h1 = (R * R - g1 * g1) / d1 + (-ax * R * sin + pz * R * cos) / d1;
      const h2 = (R * R - g2 * g2) / d2 + (-bx * R * sin + pz * R * cos) / d2;
      const step = h1 + h2 > 0 ? gp / (h1 + h2) : 0;
      phi -= step;
      if (Math.abs(step) < 1e-12) break;
    }
    sin = jsSin(phi);
    cos = jsCos(phi);
    if (known) {
      set(gSin, i, sin);
      set(gCos, i, cos);
      store<u8>(gHave + <usize>i, 1);
    }
  } else if (withGrad && radiusGrad) {
    const e1x = dx + h;
    const e2x = dx - h;
    let n1 = Math.sqrt(e1x * e1x + zc * zc);
    if (!(n1 != 0 && n1 == n1)) n1 = 1;
    let n2 = Math.sqrt(e2x * e2x + zc * zc);
    if (!(n2 != 0 && n2 == n2)) n2 = 1;
    const bx = e1x / n1 + e2x / n2;
    const bz = zc / n1 + zc / n2;
    let nb = Math.sqrt(bx * bx + bz * bz);
    if (!(nb != 0 && nb == nb)) nb = 1;
    sin = bx / nb;
    cos = bz / nb;
  }
  const px = R * sin - dx;
  const pz = zc - R * cos;
  const ax = px + h;
  const bx = px - h;
  const d1 = max(Math.sqrt(ax * ax + pz * pz), 1e-12);
  const d2 = max(Math.sqrt(bx * bx + pz * pz), 1e-12);
  if (withGrad) {
    grad0 = ax / d1 + bx / d2;
    grad1 = pz / d1 + pz / d2;
    grad2 = (ax / d1 + bx / d2) * sin - (pz / d1 + pz / d2) * cos;
  }
  return d1 + d2;
}

/** `axisDepth`: the circle's axis depth for the parameters, NaN when v t0 < s. */
function axisDepth(p: usize, s: f64): f64 {
  const A = (at(p, 2) * at(p, 1)) / 2;
  const h = s / 2;
  const z2 = A * A - h * h;
  if (!(z2 >= 0)) return NaN;
  return Math.sqrt(z2) + at(p, 3);
}

@inline function modelTime(xi: f64, p: usize, s: f64, zc: f64, i: i32): f64 {
  return specularPath(xi - at(p, 0), zc, at(p, 3), s / 2, false, i, true) / at(p, 2);
}

// `jacobian`'s row
let jac0: f64 = 0;
let jac1: f64 = 0;
let jac2: f64 = 0;
let jac3: f64 = 0;

/** `jacobian`: the row into jac0..3, returns the model time. */
function jacobian(xi: f64, p: usize, s: f64, zc: f64, i: i32, np: i32): f64 {
  const t0 = at(p, 1);
  const v = at(p, 2);
  const R = at(p, 3);
  const L = specularPath(xi - at(p, 0), zc, R, s / 2, true, i, np == 4);
  const tt = L / v;
  const ztop = max(zc - R, 1e-12);
  const A = (v * t0) / 2;
  const tz = grad1 / v;
  jac0 = grad0 / v;
  jac1 = (tz * A * v) / (2 * ztop);
  jac2 = -tt / v + (tz * A * t0) / (2 * ztop);
  jac3 = (grad2 + grad1) / v;
  return tt;
}

/** `normalEquations`: A (np x np) and g (np) at A, g; returns the cost. */
function normalEquations(w: usize, p: usize, s: f64, np: i32, A: usize, g: usize): f64 {
  memory.fill(A, 0, <usize>(np * np) << 3);
  memory.fill(g, 0, <usize>np << 3);
  const zc = axisDepth(p, s);
  specularPoints(p, s);
  let cost: f64 = 0;
  for (let i = 0; i < gN; i++) {
    const wi = at(w, i);
    if (wi == 0) continue;
    const ri = at(gT, i) - jacobian(at(gX, i), p, s, zc, i, np);
    cost += wi * ri * ri;
    for (let a = 0, o = 0; a < np; a++, o += np) {
      const ja = a == 0 ? jac0 : a == 1 ? jac1 : a == 2 ? jac2 : jac3;
      const wa = wi * ja;
      set(g, a, at(g, a) + wa * ri);
      set(A, o, at(A, o) + wa * jac0);
      set(A, o + 1, at(A, o + 1) + wa * jac1);
      set(A, o + 2, at(A, o + 2) + wa * jac2);
      if (np == 4) set(A, o + 3, at(A, o + 3) + wa * jac3);
    }
  }
  return cost;
}

/** `weightedCost`: sum of w r^2 at parameters p (Infinity where the axis has no depth). */
function weightedCost(w: usize, p: usize, s: f64): f64 {
  const zc = axisDepth(p, s);
  if (isNaN(zc)) return Infinity;
  specularPoints(p, s);
  let c: f64 = 0;
  for (let i = 0; i < gN; i++) {
    const wi = at(w, i);
    if (wi == 0) continue;
    const ri = at(gT, i) - modelTime(at(gX, i), p, s, zc, i);
    c += wi * ri * ri;
  }
  return c;
}

/** `residuals`: t - model time of every pick into out. */
function residuals(p: usize, s: f64, out: usize): void {
  const zc = axisDepth(p, s);
  specularPoints(p, s);
  for (let i = 0; i < gN; i++) set(out, i, at(gT, i) - modelTime(at(gX, i), p, s, zc, i));
}

// small arrays of the solves, in the work memory `irls` is given (after its 7 n numbers)
let SOLVE_A: usize = 0;
let SOLVE_Y: usize = 0;
let LM_A: usize = 0;
let LM_G: usize = 0;
let LM_M: usize = 0;
let LM_M3: usize = 0;
let LM_D: usize = 0;
let LM_Q: usize = 0;

/** `solveN`: M y = b by Gaussian elimination with partial pivoting into out; false when singular. */
function solveN(M: usize, b: usize, n: i32, out: usize): bool {
  const a = SOLVE_A;
  const y = SOLVE_Y;
  for (let i = 0; i < n * n; i++) set(a, i, at(M, i));
  for (let i = 0; i < n; i++) set(y, i, at(b, i));
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(at(a, r * n + c)) > Math.abs(at(a, piv * n + c))) piv = r;
    if (Math.abs(at(a, piv * n + c)) < 1e-300) return false;
    if (piv != c) {
      for (let k = 0; k < n; k++) {
        const tmp = at(a, c * n + k);
        set(a, c * n + k, at(a, piv * n + k));
        set(a, piv * n + k, tmp);
      }
      const tmp = at(y, c);
      set(y, c, at(y, piv));
      set(y, piv, tmp);
    }
    for (let r = c + 1; r < n; r++) {
      const f = at(a, r * n + c) / at(a, c * n + c);
      for (let k = c; k < n; k++) set(a, r * n + k, at(a, r * n + k) - f * at(a, c * n + k));
      set(y, r, at(y, r) - f * at(y, c));
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let v = at(y, r);
    for (let k = r + 1; k < n; k++) v -= at(a, r * n + k) * at(out, k);
    set(out, r, v / at(a, r * n + r));
  }
  return true;
}


/** `levenbergMarquardt` from the parameters at p (updated in place); false where it returns null. */
function levenbergMarquardt(w: usize, p: usize, s: f64, np: i32, rMax: f64): bool {
  let active = 0;
  for (let i = 0; i < gN; i++) if (at(w, i) > 0) active++;
  if (active < np) return false;
  if (isNaN(axisDepth(p, s))) return false;
  let lambda = 1e-3;
  const M = LM_M;
  const q = LM_Q;
  const d = LM_D;
  for (let it = 0; it < 200; it++) {
    const cost = normalEquations(w, p, s, np, LM_A, LM_G);
    let improved = false;
    for (let k = 0; k < 12; k++) {
      memory.copy(M, LM_A, <usize>(np * np) << 3);
      for (let a = 0; a < np; a++) set(M, a * (np + 1), at(LM_A, a * (np + 1)) * (1 + lambda) + 1e-15);
      let ok = solveN(M, LM_G, np, d);
      if (ok && np == 4 && ((at(p, 3) == 0 && at(d, 3) < 0) || (at(p, 3) == rMax && at(d, 3) > 0))) {
        const M3 = LM_M3;
        set(M3, 0, at(M, 0));
        set(M3, 1, at(M, 1));
        set(M3, 2, at(M, 2));
        set(M3, 3, at(M, 4));
        set(M3, 4, at(M, 5));
        set(M3, 5, at(M, 6));
        set(M3, 6, at(M, 8));
        set(M3, 7, at(M, 9));
        set(M3, 8, at(M, 10));
        ok = solveN(M3, LM_G, 3, d);
        if (ok) set(d, 3, 0);
      }
      if (!ok) {
        lambda *= 10;
        continue;
      }
      memory.copy(q, p, 32);
      set(q, 0, at(p, 0) + at(d, 0));
      set(q, 1, at(p, 1) + at(d, 1));
      set(q, 2, at(p, 2) + at(d, 2));
      if (np == 4) set(q, 3, min(rMax, max(0, at(p, 3) + at(d, 3))));
      if (!(at(q, 2) > 0) || !isFinite(at(q, 0)) || isNaN(axisDepth(q, s))) {
        lambda *= 10;
        continue;
      }
      const c = weightedCost(w, q, s);
      if (c <= cost) {
        const step = Math.abs(at(q, 0) - at(p, 0)) + Math.abs(at(q, 1) - at(p, 1)) / at(q, 1) + Math.abs(at(q, 2) - at(p, 2)) / at(q, 2) + Math.abs(at(q, 3) - at(p, 3));
        memory.copy(p, q, 32);
        lambda = max(lambda / 10, 1e-12);
        improved = true;
        if (step < 1e-10 || cost - c <= 1e-12 * max(cost, 1e-300)) return true;
        break;
      }
      lambda *= 10;
    }
    if (!improved) return true;
  }
  return true;
}

/** `updateWeights` (robust 1: Tukey, 2: Huber) with u and sel work arrays of n. */
function updateWeights(r: usize, prior: usize, w: usize, robust: i32, minScale: f64, u: usize, sel: usize): void {
  let m = 0;
  for (let i = 0; i < gN; i++) {
    const ui = Math.abs(at(r, i)) * Math.sqrt(at(prior, i));
    set(u, i, ui);
    // medianLow: the values that are not NaN
    if (!isNaN(ui)) set(sel, m++, ui);
  }
  const low = m == 0 ? NaN : selectRank<f64>(sel, 0, m - 1, (m - 1) >> 1);
  const scale = max(1.4826 * low, minScale);
  for (let i = 0; i < gN; i++) {
    const v = at(u, i) / scale;
    let robustW: f64;
    if (robust == 1) {
      const q = v / TUKEY_C;
      robustW = q < 1 ? jsPow(1 - q * q, 2) : 0;
    } else robustW = v <= HUBER_C ? 1 : HUBER_C / v;
    set(w, i, at(prior, i) * robustW);
  }
}

/** Bytes of `irls`' work memory for n picks. */
export function irlsWorkBytes(n: i32): i32 {
  return 48 * n + ((n + 15) & ~15) + 584;
}

/**
 * `irls` of ../src/fit.ts on the n picks (x, t float64) from the parameters at p (4 float64: x0, t0, v,
 * R; updated), weights w (updated) and prior weights; robust 0 none, 1 Tukey, 2 Huber. `work` holds
 * `irlsWorkBytes(n)` bytes. Returns false where the JavaScript returns null.
 */
export function irls(x: usize, t: usize, w: usize, prior: usize, n: i32, p: usize, s: f64, np: i32, robust: i32, minScale: f64, rounds: i32, rMax: f64, work: usize): bool {
  gX = x;
  gT = t;
  gN = n;
  const r = work;
  const prev = work + (<usize>n << 3);
  const u = work + (<usize>(2 * n) << 3);
  const sel = work + (<usize>(3 * n) << 3);
  gSin = work + (<usize>(4 * n) << 3);
  gCos = work + (<usize>(5 * n) << 3);
  gHave = work + (<usize>(6 * n) << 3);
  const small = gHave + ((<usize>n + 15) & ~15);
  SOLVE_A = small;
  SOLVE_Y = small + 128;
  LM_A = small + 160;
  LM_G = small + 288;
  LM_M = small + 320;
  LM_M3 = small + 448;
  LM_D = small + 520;
  LM_Q = small + 552;
  // a new set of picks: nothing kept
  key0 = NaN;
  memory.fill(gHave, 0, <usize>n);
  if (!levenbergMarquardt(w, p, s, np, rMax)) return false;
  if (robust == 0) return true;
  for (let it = 0; it < rounds; it++) {
    residuals(p, s, r);
    memory.copy(prev, w, <usize>n << 3);
    updateWeights(r, prior, w, robust, minScale, u, sel);
    const p0 = at(p, 0);
    const p2 = at(p, 2);
    const p3 = at(p, 3);
    if (!levenbergMarquardt(w, p, s, np, rMax)) return false;
    const moved = Math.abs(at(p, 2) - p2) / p2 + Math.abs(at(p, 0) - p0) / max(1, Math.abs(p0)) + Math.abs(at(p, 3) - p3);
    let dw: f64 = 0;
    for (let i = 0; i < n; i++) dw = max(dw, Math.abs(at(w, i) - at(prev, i)));
    if (dw < 1e-4 && moved < 1e-9) break;
  }
  return true;
}
