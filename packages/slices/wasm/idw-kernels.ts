// AssemblyScript source of the inverse-distance gridding kernel of `idwRows` (../src/idw.ts): a grid
// gridded once per run on the main thread, where its JavaScript ran cold. The same operations in the same
// order in float64 (the float32 roundings where the JavaScript stores into a Float32Array), so the same
// bits; Math.pow is JavaScript's (imported), for a power other than 2. Built by scripts/build-wasm.mjs
// into ../src/idw-wasm-binary.ts; rebuild after a change here. Pointers are byte offsets into the
// module's memory, which ../src/idw-wasm.ts lays out per call.

@external("Math", "pow")
declare function jsPow(x: f64, y: f64): f64;

/** `insert` of ../src/idw.ts: (id, d) into the k nearest so far (equal distances keep arrival order). */
@inline function insert(id: i32, d: f64, ids: usize, d2: usize, count: i32, k: i32): i32 {
  let j = count < k ? count : k - 1;
  if (count == k && d >= load<f64>(d2 + (<usize>(k - 1) << 3))) return count;
  while (j > 0 && load<f64>(d2 + (<usize>(j - 1) << 3)) > d) {
    store<f64>(d2 + (<usize>j << 3), load<f64>(d2 + (<usize>(j - 1) << 3)));
    store<i32>(ids + (<usize>j << 2), load<i32>(ids + (<usize>(j - 1) << 2)));
    j--;
  }
  store<f64>(d2 + (<usize>j << 3), d);
  store<i32>(ids + (<usize>j << 2), id);
  return count < k ? count + 1 : count;
}

/** (left, right, axis) onto the stack at sp; returns the new sp. */
@inline function push(stack: usize, sp: i32, left: i32, right: i32, axis: i32): i32 {
  const at = stack + (<usize>sp << 2);
  store<i32>(at, left);
  store<i32>(at, right, 4);
  store<i32>(at, axis, 8);
  return sp + 3;
}

/**
 * `nearestWithin` of ../src/idw.ts on a kdbush tree (its ids as int32 at tIds, its coords as float64 at
 * coords, nSlots entries, leaves of nodeSize): the k nearest within r of (qx, qy) into ids/d2, nearest
 * first; returns how many. `stack`: 384 int32.
 */
function nearestWithin(tIds: usize, coords: usize, nSlots: i32, nodeSize: i32, qx: f64, qy: f64, r: f64, k: i32, ids: usize, d2: usize, stack: usize): i32 {
  let count = 0;
  let r2 = r * r;
  let sp = push(stack, 0, 0, nSlots - 1, 0);
  while (sp > 0) {
    sp -= 3;
    const left = load<i32>(stack + (<usize>sp << 2));
    const right = load<i32>(stack + (<usize>(sp + 1) << 2));
    const axis = load<i32>(stack + (<usize>(sp + 2) << 2));
    if (right - left <= nodeSize) {
      for (let i = left; i <= right; i++) {
        const dx = load<f64>(coords + (<usize>(2 * i) << 3)) - qx;
        const dy = load<f64>(coords + (<usize>(2 * i + 1) << 3)) - qy;
        const d = dx * dx + dy * dy;
        if (d <= r2) {
          count = insert(load<i32>(tIds + (<usize>i << 2)), d, ids, d2, count, k);
          if (count == k) r2 = load<f64>(d2 + (<usize>(k - 1) << 3));
        }
      }
      continue;
    }
    const m = (left + right) >> 1;
    const x = load<f64>(coords + (<usize>(2 * m) << 3));
    const y = load<f64>(coords + (<usize>(2 * m + 1) << 3));
    const dx = x - qx;
    const dy = y - qy;
    const d = dx * dx + dy * dy;
    if (d <= r2) {
      count = insert(load<i32>(tIds + (<usize>m << 2)), d, ids, d2, count, k);
      if (count == k) r2 = load<f64>(d2 + (<usize>(k - 1) << 3));
    }
    const delta = axis == 0 ? qx - x : qy - y;
    const nextAxis = 1 - axis;
    // the far side first, so that the near side is searched first
    if (delta <= 0) {
      if (delta * delta <= r2) sp = push(stack, sp, m + 1, right, nextAxis);
      sp = push(stack, sp, left, m - 1, nextAxis);
    } else {
      if (delta * delta <= r2) sp = push(stack, sp, left, m - 1, nextAxis);
      sp = push(stack, sp, m + 1, right, nextAxis);
    }
  }
  return count;
}

/**
 * `idwRows` of ../src/idw.ts for `rows` rows of `width` cells, cell centres at xs (width) and ys (rows)
 * (float64), into out (float32, band-major: band b's cells at b * rows * width): the tree (see
 * `nearestWithin`; `empty`: it holds no point), nBands float32 values per point at `values`, the search
 * frame (ex, ey, nx, ny, r), at most k points, at least minPoints, weights 1 / d2^halfPower. Work arrays:
 * kIds (k int32), kD2 and w (k float64), stack (384 int32), acc and wsum (nBands float64).
 */
export function idwRows(
  tIds: usize, coords: usize, nSlots: i32, nodeSize: i32, empty: bool, values: usize, nBands: i32, anyNaN: bool,
  xs: usize, width: i32, ys: usize, rows: i32, ex: f64, ey: f64, nx: f64, ny: f64, r: f64, k: i32, minPoints: f64,
  halfPower: f64, nodata: f64, kIds: usize, kD2: usize, w: usize, stack: usize, acc: usize, wsum: usize, out: usize,
): void {
  const cells = <usize>rows * <usize>width;
  const nd = <f32>nodata;
  for (let row = 0; row < rows; row++) {
    const y = load<f64>(ys + (<usize>row << 3));
    for (let col = 0; col < width; col++) {
      const x = load<f64>(xs + (<usize>col << 3));
      const qx = x * ex + y * ey;
      const qy = x * nx + y * ny;
      const cell = <usize>row * <usize>width + <usize>col;
      const found = empty ? 0 : nearestWithin(tIds, coords, nSlots, nodeSize, qx, qy, r, k, kIds, kD2, stack);
      if (<f64>found < minPoints || found == 0) {
        for (let b = 0; b < nBands; b++) store<f32>(out + ((<usize>b * cells + cell) << 2), nd);
        continue;
      }
      if (load<f64>(kD2) < 1e-13) {
        const base = <usize>load<i32>(kIds) * <usize>nBands;
        for (let b = 0; b < nBands; b++) {
          const v = load<f32>(values + ((base + <usize>b) << 2));
          store<f32>(out + ((<usize>b * cells + cell) << 2), v == v ? v : nd);
        }
        continue;
      }
      let total: f64 = 0;
      for (let j = 0; j < found; j++) {
        const dj = load<f64>(kD2 + (<usize>j << 3));
        const wj = halfPower == 1 ? 1 / dj : 1 / jsPow(dj, halfPower);
        store<f64>(w + (<usize>j << 3), wj);
        total += wj;
      }
      memory.fill(acc, 0, <usize>nBands << 3);
      if (!anyNaN) {
        for (let j = 0; j < found; j++) {
          const wj = load<f64>(w + (<usize>j << 3));
          const base = <usize>load<i32>(kIds + (<usize>j << 2)) * <usize>nBands;
          for (let b = 0; b < nBands; b++) {
            const a = acc + (<usize>b << 3);
            store<f64>(a, load<f64>(a) + wj * <f64>load<f32>(values + ((base + <usize>b) << 2)));
          }
        }
        const inv = 1 / total;
        for (let b = 0; b < nBands; b++) store<f32>(out + ((<usize>b * cells + cell) << 2), <f32>(load<f64>(acc + (<usize>b << 3)) * inv));
      } else {
        memory.fill(wsum, 0, <usize>nBands << 3);
        for (let j = 0; j < found; j++) {
          const wj = load<f64>(w + (<usize>j << 3));
          const base = <usize>load<i32>(kIds + (<usize>j << 2)) * <usize>nBands;
          for (let b = 0; b < nBands; b++) {
            const v = <f64>load<f32>(values + ((base + <usize>b) << 2));
            if (v == v) {
              const a = acc + (<usize>b << 3);
              const s = wsum + (<usize>b << 3);
              store<f64>(a, load<f64>(a) + wj * v);
              store<f64>(s, load<f64>(s) + wj);
            }
          }
        }
        for (let b = 0; b < nBands; b++) {
          const s = load<f64>(wsum + (<usize>b << 3));
          store<f32>(out + ((<usize>b * cells + cell) << 2), s > 0 ? <f32>(load<f64>(acc + (<usize>b << 3)) / s) : nd);
        }
      }
    }
  }
}

/** Where the module's own static data ends: arrays laid out from JavaScript start at or after it. */
export function heapBase(): usize {
  return __heap_base;
}
