// AssemblyScript source of the WebAssembly kernels of `straightBands` (../src/band-wasm.ts): its
// `fullestBand` (branch and bound over the directions, four interleaved histograms per direction) and
// the taking out of a band, the same operations in the same order as ../src/split.ts, with Math.cos,
// Math.sin and Math.hypot imported from JavaScript (so the same numbers). Built by
// scripts/build-wasm.mjs into ../src/band-wasm-binary.ts (the module as base64); rebuild after a
// change here. Pointers are byte offsets into the module's memory; f64 arrays `col`, `row`, `eRow`,
// `eFirst`, `eLast`, i32 arrays `left`, `eCells`, `colCells`, `bins`, `cum`, `wide`, `band`.

@external("env", "cos") declare function cos(x: f64): f64;
@external("env", "sin") declare function sin(x: f64): f64;
@external("env", "hypot") declare function hypot(x: f64, y: f64): f64;

@inline function f(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}
@inline function setF(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}
@inline function n32(p: usize, i: i32): i32 {
  return load<i32>(p + (<usize>i << 2));
}
@inline function set32(p: usize, i: i32, v: i32): void {
  store<i32>(p + (<usize>i << 2), v);
}

const COARSE: i32 = 16;
const MIN_STEP: f64 = 1e-3;

/** The column and row of each of the n cells at `left` (grid indices, `width` columns). */
export function prepare(left: usize, col: usize, row: usize, n: i32, width: i32): void {
  for (let i = 0; i < n; i++) {
    const k = n32(left, i);
    setF(col, i, <f64>(k % width));
    setF(row, i, <f64>(k / width));
  }
}

@inline function perLine(w: f64, step: f64): f64 {
  return step < MIN_STEP ? Infinity : Math.floor((w / step) * (1 + 1e-6)) + 2;
}

function cappedSum(counts: usize, n: i32, k: f64): f64 {
  let t: f64 = 0;
  for (let i = 0; i < n; i++) t += Math.min(<f64>n32(counts, i), k);
  return t;
}

// the search's state (fullestBand's closure variables)
let bestCount: i32 = 0, bestA: i32 = -1, bestC: f64 = 1, bestS: f64 = 0, bestLo: f64 = 0;
let hNb: i32 = 0, hR0: f64 = 0;

/** split.ts `histogram`: bins of the offsets col c + row s from the least one, in the first hNb places of `bins`. */
function histogram(col: usize, row: usize, n: i32, c: f64, s: f64, eRow: usize, eFirst: usize, eLast: usize, nRows: i32, bins: usize): void {
  const lo = c >= 0 ? eFirst : eLast, hi = c >= 0 ? eLast : eFirst;
  let r0: f64 = Infinity, r1: f64 = -Infinity;
  for (let k = 0; k < nRows; k++) {
    const q0 = f(lo, k) * c + f(eRow, k) * s, q1 = f(hi, k) * c + f(eRow, k) * s;
    if (q0 < r0) r0 = q0;
    if (q1 > r1) r1 = q1;
  }
  const nb = <i32>Math.floor(r1 - r0) + 2;
  memory.fill(bins, 0, <usize>(4 * nb) << 2);
  let i = 0;
  for (; i + 3 < n; i += 4) {
    const b0 = 4 * <i32>(f(col, i) * c + f(row, i) * s - r0);
    set32(bins, b0, n32(bins, b0) + 1);
    const b1 = 4 * <i32>(f(col, i + 1) * c + f(row, i + 1) * s - r0) + 1;
    set32(bins, b1, n32(bins, b1) + 1);
    const b2 = 4 * <i32>(f(col, i + 2) * c + f(row, i + 2) * s - r0) + 2;
    set32(bins, b2, n32(bins, b2) + 1);
    const b3 = 4 * <i32>(f(col, i + 3) * c + f(row, i + 3) * s - r0) + 3;
    set32(bins, b3, n32(bins, b3) + 1);
  }
  for (; i < n; i++) {
    const b = 4 * <i32>(f(col, i) * c + f(row, i) * s - r0);
    set32(bins, b, n32(bins, b) + 1);
  }
  for (let b = 0; b < nb; b++) set32(bins, b, n32(bins, 4 * b) + n32(bins, 4 * b + 1) + n32(bins, 4 * b + 2) + n32(bins, 4 * b + 3));
  hNb = nb;
  hR0 = r0;
}

/**
 * split.ts `fullestBand` of the first n cells, window `w` bins wide; the result in `res` (f64: count,
 * c, s, lo).
 */
export function fullestBand(col: usize, row: usize, n: i32, w: i32, eRow: usize, eFirst: usize, eLast: usize, eCells: usize, colCells: usize, bins: usize, cum: usize, wide: usize, res: usize): void {
  let c0: f64 = Infinity, c1: f64 = -Infinity, w0: f64 = Infinity, w1: f64 = -Infinity;
  let nRows = 0;
  for (let i = 0; i < n; i++) {
    const ci = f(col, i), ri = f(row, i);
    if (ci < c0) c0 = ci;
    if (ci > c1) c1 = ci;
    if (ri < w0) w0 = ri;
    if (ri > w1) w1 = ri;
    if (i == 0 || ri != f(row, i - 1)) {
      setF(eRow, nRows, ri);
      set32(eCells, nRows, 0);
      setF(eFirst, nRows++, ci);
    }
    setF(eLast, nRows - 1, ci);
    set32(eCells, nRows - 1, n32(eCells, nRows - 1) + 1);
  }
  const nCols = <i32>(c1 - c0) + 1;
  memory.fill(colCells, 0, <usize>nCols << 2);
  for (let i = 0; i < n; i++) {
    const k = <i32>(f(col, i) - c0);
    set32(colCells, k, n32(colCells, k) + 1);
  }
  const span = hypot(c1 - c0, w1 - w0);
  const nA = <i32>Math.min(720, Math.max(90, Math.ceil(Math.PI * span)));
  const half = COARSE >> 1;
  const wf = <f64>w;
  bestCount = 0;
  bestA = -1;
  bestC = 1;
  bestS = 0;
  bestLo = 0;
  for (let a = 0; a < nA; a += COARSE) search(a, nA, col, row, n, w, eRow, eFirst, eLast, nRows, bins, cum, wide, span, half);
  for (let a = 1; a < nA; a++) {
    if (a % COARSE == 0) continue;
    const lower = a - (a % COARSE), upper = lower + COARSE;
    const g = upper - a < a - lower ? (upper < nA ? upper / COARSE : 0) : lower / COARSE;
    const d = min(a - lower, upper - a);
    let bound = <f64>n32(wide, g * half + d - 1);
    if (beaten(bound, a)) continue;
    const th = (Math.PI * <f64>a) / <f64>nA;
    const c = cos(th), s = sin(th);
    bound = Math.min(bound, cappedSum(eCells, nRows, perLine(wf, Math.abs(c))));
    if (beaten(bound, a)) continue;
    bound = Math.min(bound, cappedSum(colCells, nCols, perLine(wf, Math.abs(s))));
    if (beaten(bound, a)) continue;
    search(a, nA, col, row, n, w, eRow, eFirst, eLast, nRows, bins, cum, wide, span, half);
  }
  setF(res, 0, <f64>bestCount);
  setF(res, 1, bestC);
  setF(res, 2, bestS);
  setF(res, 3, bestLo);
}

@inline function beaten(x: f64, a: i32): bool {
  return x < <f64>bestCount || (x == <f64>bestCount && a > bestA);
}

function search(a: i32, nA: i32, col: usize, row: usize, n: i32, w: i32, eRow: usize, eFirst: usize, eLast: usize, nRows: i32, bins: usize, cum: usize, wide: usize, span: f64, half: i32): void {
  const th = (Math.PI * <f64>a) / <f64>nA;
  const c = cos(th), s = sin(th);
  histogram(col, row, n, c, s, eRow, eFirst, eLast, nRows, bins);
  const nb = hNb, r0 = hR0;
  let run = 0, most = 0, at = 0;
  for (let b = 0; b < nb; b++) {
    run += n32(bins, b);
    if (b >= w) run -= n32(bins, b - w);
    if (run > most) {
      most = run;
      at = b;
    }
  }
  if (most > bestCount || (most == bestCount && a < bestA)) {
    bestCount = most;
    bestA = a;
    bestC = c;
    bestS = s;
    bestLo = r0 + <f64>max(0, at - w + 1);
  }
  if (a % COARSE != 0) return;
  set32(cum, 0, 0);
  for (let b = 0; b < nb; b++) set32(cum, b + 1, n32(cum, b) + n32(bins, b));
  const g = a / COARSE;
  for (let d = 1; d <= half; d++) {
    const wd = <i32>Math.floor(<f64>w + span * ((<f64>d * Math.PI) / <f64>nA) * (1 + 1e-9) + 1e-6) + 2;
    let m = 0;
    for (let b = 0; b < nb; b++) m = max(m, n32(cum, min(nb, b + wd)) - n32(cum, b));
    set32(wide, g * half + d - 1, m);
  }
}

@inline function inBand(col: usize, row: usize, i: i32, c: f64, s: f64, lo: f64, w: f64): bool {
  const r = f(col, i) * c + f(row, i) * s;
  return r >= lo && r < lo + w + 1e-9;
}

/**
 * The cells of the first n at `left` in the band [lo, lo + w + 1e-9) across (c, s), into `band`, in
 * order; how many: every cell of the range, also one on its far edge that the window's count left to the
 * next window (split.ts `straightBandsInJs` takes the same).
 */
export function takeBand(left: usize, col: usize, row: usize, n: i32, c: f64, s: f64, lo: f64, w: f64, band: usize): i32 {
  let nb = 0;
  for (let i = 0; i < n; i++) if (inBand(col, row, i, c, s, lo, w)) set32(band, nb++, n32(left, i));
  return nb;
}

/** The cells outside that band moved down (in order, with their columns and rows); how many are left. */
export function dropBand(left: usize, col: usize, row: usize, n: i32, c: f64, s: f64, lo: f64, w: f64): i32 {
  let m = 0;
  for (let i = 0; i < n; i++) {
    if (inBand(col, row, i, c, s, lo, w)) continue;
    set32(left, m, n32(left, i));
    setF(col, m, f(col, i));
    setF(row, m, f(row, i));
    m++;
  }
  return m;
}
