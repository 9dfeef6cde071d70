// AssemblyScript source of the selection kernels of ../src/select-wasm.ts: `selectInPlace`,
// `medianInPlace` and `quantileInPlace` of @lamina/stats (the same Hoare partition with a median-of-three
// pivot, so the same element moves and the same value, bit for bit) on float64 arrays in the module's
// memory, and the gathering of a slice's valid values. Built by scripts/build-wasm.mjs into
// ../src/select-wasm-binary.ts (the module as base64); rebuild after a change here.
// Pointers are byte offsets into the module's memory.

@inline function at(a: usize, i: i32): f64 {
  return load<f64>(a + (<usize>i << 3));
}

@inline function put(a: usize, i: i32, v: f64): void {
  store<f64>(a + (<usize>i << 3), v);
}

@inline function swap(a: usize, i: i32, j: i32): void {
  const t = at(a, i);
  put(a, i, at(a, j));
  put(a, j, t);
}

/** The values of float32 `src` (n of them) that are neither `nodata` nor infinite nor NaN, as float64 into `dst`, in order; their count. */
export function gatherValid(src: usize, n: i32, nodata: f64, dst: usize): i32 {
  let m = 0;
  for (let i = 0; i < n; i++) {
    const v = <f64>load<f32>(src + (<usize>i << 2));
    if (v != nodata && v - v == 0) put(dst, m++, v);
  }
  return m;
}

/** `selectInPlace(a, k, left, right)` of @lamina/stats. */
export function select(a: usize, k: i32, left: i32, right: i32): f64 {
  while (right > left) {
    const mid = (left + right) >> 1;
    if (at(a, mid) < at(a, left)) swap(a, mid, left);
    if (at(a, right) < at(a, left)) swap(a, right, left);
    if (at(a, right) < at(a, mid)) swap(a, right, mid);
    const pivot = at(a, mid);
    let i = left;
    let j = right;
    while (i <= j) {
      while (at(a, i) < pivot) i++;
      while (at(a, j) > pivot) j--;
      if (i <= j) {
        swap(a, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else break;
  }
  return at(a, k);
}

/** `medianInPlace(a)` of @lamina/stats (no guess) on the first n values; NaN when n is 0. */
export function median(a: usize, n: i32): f64 {
  if (n == 0) return NaN;
  const k = n >> 1;
  const hi = select(a, k, 0, n - 1);
  if (n & 1) return hi;
  let lo = -Infinity;
  for (let i = 0; i < k; i++) if (at(a, i) > lo) lo = at(a, i);
  return 0.5 * (lo + hi);
}

/** `quantileInPlace(a, q)` of @lamina/stats on the first n values; NaN when n is 0. */
export function quantile(a: usize, n: i32, q: f64): f64 {
  if (n == 0) return NaN;
  const h = <f64>(n - 1) * q;
  const lo = <i32>Math.floor(h);
  const v = select(a, lo, 0, n - 1);
  if (lo + 1 >= n || h == <f64>lo) return v;
  let next = Infinity;
  for (let i = lo + 1; i < n; i++) if (at(a, i) < next) next = at(a, i);
  return v + (h - <f64>lo) * (next - v);
}

/** a[i] = |a[i] - centre| for the first n values. */
export function absDeviations(a: usize, n: i32, centre: f64): void {
  for (let i = 0; i < n; i++) put(a, i, Math.abs(at(a, i) - centre));
}
