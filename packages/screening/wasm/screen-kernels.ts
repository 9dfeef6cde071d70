// AssemblyScript source of the WebAssembly kernels of the screening checks (../src/screen-wasm.ts):
// `distanceField` (for every cell centre, `distanceTo` of ../src/reflectors.ts: the least squared
// distance over the reflector's segments and points, then Math.hypot of those within 1e-9 of it, the
// least, times metres per unit), the locus residuals of ../src/locus-residual.ts, the locus band's
// scores of the before-background test (../src/checks/before-background.ts), the strips of
// along-line.ts and the point model of the unsurveyed-obstruction test (../src/checks/unsurveyed.ts),
// the same operations in the same order. Built by
// scripts/build-wasm.mjs into ../src/screen-wasm-binary.ts (the module as base64); rebuild after
// a change here.
// Pointers are byte offsets into the module's memory. The selection is that of ../../anomalies/wasm/select-kernels.ts.

import { select } from '../../anomalies/wasm/select-kernels';

/**
 * Math.hypot of two numbers as V8 works it out (its builtin: each magnitude divided by the
 * larger, the squares summed with Kahan's compensation, the square root times the larger), so the same
 * number bit for bit.
 */
@inline function hypot(a: f64, b: f64): f64 {
  const x = Math.abs(a), y = Math.abs(b);
  if (isNaN(a) || isNaN(b)) return x == Infinity || y == Infinity ? Infinity : NaN;
  const max = x > y ? x : y;
  if (max == Infinity) return Infinity;
  if (max == 0) return 0;
  let sum: f64 = 0, comp: f64 = 0;
  let n = x / max;
  let summand = n * n - comp;
  let pre = sum + summand;
  comp = pre - sum - summand;
  sum = pre;
  n = y / max;
  summand = n * n - comp;
  pre = sum + summand;
  sum = pre;
  return Math.sqrt(sum) * max;
}

@inline function f64At(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}

/** Offset of (x, y) from its foot on segment i of `seg` (ax, ay, bx, by), as reflectors.ts `segmentOffset`. */
let ox: f64 = 0, oy: f64 = 0;
@inline function segmentOffset(seg: usize, i: i32, x: f64, y: f64): void {
  const ax = f64At(seg, 4 * i), ay = f64At(seg, 4 * i + 1), bx = f64At(seg, 4 * i + 2), by = f64At(seg, 4 * i + 3);
  const dx = bx - ax, dy = by - ay;
  const l2 = dx * dx + dy * dy;
  let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  ox = x - ax - t * dx;
  oy = y - ay - t * dy;
}

/**
 * out[row * width + col] (float32) = distance from (xs[col], ys[row]) to the nSeg segments at `seg`
 * (ax, ay, bx, by each) and the nPts points at `pts` (x, y each), times mpu.
 */
export function distanceField(seg: usize, nSeg: i32, pts: usize, nPts: i32, xs: usize, width: i32, ys: usize, height: i32, mpu: f64, out: usize): void {
  for (let row = 0; row < height; row++) {
    const y = f64At(ys, row);
    for (let col = 0; col < width; col++) {
      const x = f64At(xs, col);
      let near2: f64 = Infinity;
      for (let i = 0; i < nSeg; i++) {
        segmentOffset(seg, i, x, y);
        near2 = Math.min(near2, ox * ox + oy * oy);
      }
      for (let i = 0; i < nPts; i++) {
        const ex = x - f64At(pts, 2 * i), ey = y - f64At(pts, 2 * i + 1);
        near2 = Math.min(near2, ex * ex + ey * ey);
      }
      const within = near2 * (1 + 1e-9) + 1e-300;
      let best: f64 = Infinity;
      for (let i = 0; i < nSeg; i++) {
        segmentOffset(seg, i, x, y);
        if (!(ox * ox + oy * oy <= within)) continue;
        const d = hypot(ox, oy);
        if (d < best) best = d;
      }
      for (let i = 0; i < nPts; i++) {
        const ex = x - f64At(pts, 2 * i), ey = y - f64At(pts, 2 * i + 1);
        if (!(ex * ex + ey * ey <= within)) continue;
        const d = hypot(ex, ey);
        if (d < best) best = d;
      }
      store<f32>(out + (<usize>(row * width + col) << 2), <f32>(best * mpu));
    }
  }
}

/**
 * before-background.ts: the scores `sc` (float32) of the cells in rows r0..r1 and columns c0..c1 of a
 * grid `width` wide whose distance `field` (float32) lies within bandHalf of radius, and that are
 * finite, gathered as float64 in row order into `vals`; their count. `bandMedianHigh` then selects.
 */
export function locusBandScores(field: usize, sc: usize, width: i32, r0: i32, r1: i32, c0: i32, c1: i32, radius: f64, bandHalf: f64, vals: usize): i32 {
  let n = 0;
  for (let r = r0; r <= r1; r++)
    for (let c = c0; c <= c1; c++) {
      const k = r * width + c;
      const f = <f64>load<f32>(field + (<usize>k << 2));
      const s = <f64>load<f32>(sc + (<usize>k << 2));
      if (Math.abs(f - radius) <= bandHalf && s - s == 0) {
        store<f64>(vals + (<usize>n << 3), s);
        n++;
      }
    }
  return n;
}

/** `medianHigh` of @lamina/stats of n float64 values at `vals` (none NaN): `selectInPlace` at n >> 1; NaN when n is 0. */
export function medianHigh(vals: usize, n: i32): f64 {
  return n == 0 ? NaN : select(vals, n >> 1, 0, n - 1);
}

/**
 * along-line.ts `lineStrips`: per cell in order, not `seen`, of a line (`labels` >= 0) and scoring at
 * least `low` (float32 `z`), the 8-connected cells of the same line label scoring at least `low`,
 * breadth first from it (`queue`), marked seen; those of at least minCells cells holding a score of at
 * least `threshold` written one after another into `out` (breadth-first order), each as (offset, count,
 * line) into `found` (i32). Returns how many.
 */
export function lineStrips(z: usize, labels: usize, seen: usize, queue: usize, width: i32, height: i32, low: f64, threshold: f64, minCells: i32, out: usize, found: usize): i32 {
  let nOut = 0, nFound = 0;
  const n = width * height;
  for (let start = 0; start < n; start++) {
    const li = load<i32>(labels + (<usize>start << 2));
    if (load<u8>(seen + <usize>start) != 0 || li < 0 || !(<f64>load<f32>(z + (<usize>start << 2)) >= low)) continue;
    let head = 0, tail = 0;
    let peak: f64 = -Infinity;
    store<i32>(queue + (<usize>tail << 2), start);
    tail++;
    store<u8>(seen + <usize>start, 1);
    while (head < tail) {
      const k = load<i32>(queue + (<usize>head << 2));
      head++;
      peak = Math.max(peak, <f64>load<f32>(z + (<usize>k << 2)));
      const r = k / width, c = k - r * width;
      for (let dr = -1; dr <= 1; dr++)
        for (let dc = -1; dc <= 1; dc++) {
          const rr = r + dr, cc = c + dc;
          if (rr < 0 || cc < 0 || rr >= height || cc >= width) continue;
          const q = rr * width + cc;
          if (load<u8>(seen + <usize>q) != 0 || load<i32>(labels + (<usize>q << 2)) != li || !(<f64>load<f32>(z + (<usize>q << 2)) >= low)) continue;
          store<u8>(seen + <usize>q, 1);
          store<i32>(queue + (<usize>tail << 2), q);
          tail++;
        }
    }
    if (tail < minCells || peak < threshold) continue;
    memory.copy(out + (<usize>nOut << 2), queue, <usize>tail << 2);
    store<i32>(found + (<usize>(3 * nFound) << 2), nOut);
    store<i32>(found + (<usize>(3 * nFound + 1) << 2), tail);
    store<i32>(found + (<usize>(3 * nFound + 2) << 2), li);
    nFound++;
    nOut += tail;
  }
  return nFound;
}

/** locus-residual.ts `mayBeat`: whether an element at squared distance d2 (site units) may have a residual smaller in magnitude than `best`. */
@inline function mayBeat(d2: f64, rho: f64, best: f64, mpu: f64): bool {
  const b = Math.abs(best), slack = 1e-9 * (rho + b);
  const far = (rho + b + slack) / mpu;
  if (d2 > far * far * (1 + 1e-9)) return false;
  const near = (rho - b - slack) / mpu;
  return !(near > 0 && d2 < near * near * (1 - 1e-9));
}

/**
 * locus-residual.ts `locusResidual` of the cells cells[0], cells[step], ... (n cells at `cells`, i32,
 * grid `width` wide from (originX, originY) by `cellSize`), into `out` (f64); how many. Points at `pts`
 * have locus radius `radius`, segments at `seg` their own (`rhos`, f64).
 */
export function locusResiduals(cells: usize, n: i32, step: i32, pts: usize, nPts: i32, seg: usize, nSeg: i32, rhos: usize, width: i32, originX: f64, originY: f64, cellSize: f64, mpu: f64, radius: f64, out: usize): i32 {
  let m = 0;
  for (let i = 0; i < n; i += step) {
    const c = load<i32>(cells + (<usize>i << 2));
    const row = c / width;
    const x = originX + (<f64>(c - row * width) + 0.5) * cellSize, y = originY - (<f64>row + 0.5) * cellSize;
    let best: f64 = Infinity;
    for (let k = 0; k < nPts; k++) {
      const ex = x - f64At(pts, 2 * k), ey = y - f64At(pts, 2 * k + 1);
      if (!mayBeat(ex * ex + ey * ey, radius, best, mpu)) continue;
      const r = hypot(ex, ey) * mpu - radius;
      if (Math.abs(r) < Math.abs(best)) best = r;
    }
    for (let k = 0; k < nSeg; k++) {
      segmentOffset(seg, k, x, y);
      const rho = f64At(rhos, k);
      if (!mayBeat(ox * ox + oy * oy, rho, best, mpu)) continue;
      const r = hypot(ox, oy) * mpu - rho;
      if (Math.abs(r) < Math.abs(best)) best = r;
    }
    store<f64>(out + (<usize>m << 3), best);
    m++;
  }
  return m;
}

/**
 * checks/unsurveyed.ts, the point model: Gauss-Newton from (px, py) (at `res`, f64) for the point whose
 * distances to the n cell centres (xs, ys, f64) best match their locus radii `rs` (site units), at most
 * 30 steps, stopping at a singular system or a step under 1e-6 cellSize; the point back into `res`.
 */
export function pointModel(xs: usize, ys: usize, rs: usize, n: i32, cellSize: f64, res: usize): void {
  let px = f64At(res, 0), py = f64At(res, 1);
  for (let it = 0; it < 30; it++) {
    let a11: f64 = 0, a12: f64 = 0, a22: f64 = 0, b1: f64 = 0, b2: f64 = 0;
    for (let i = 0; i < n; i++) {
      const dx = px - f64At(xs, i), dy = py - f64At(ys, i);
      let d = hypot(dx, dy);
      if (d == 0 || isNaN(d)) d = 1e-9;
      const jx = dx / d, jy = dy / d, r = d - f64At(rs, i);
      a11 += jx * jx;
      a12 += jx * jy;
      a22 += jy * jy;
      b1 += jx * r;
      b2 += jy * r;
    }
    const det = a11 * a22 - a12 * a12;
    if (!(Math.abs(det) > 1e-12)) break;
    const sx = (a22 * b1 - a12 * b2) / det, sy = (a11 * b2 - a12 * b1) / det;
    px -= sx;
    py -= sy;
    if (hypot(sx, sy) < 1e-6 * cellSize) break;
  }
  store<f64>(res, px);
  store<f64>(res + 8, py);
}
