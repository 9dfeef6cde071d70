/** Statistics of one slice's valid (not nodata, not NaN) cells. */
export interface SliceStats {
  min: number;
  max: number;
  mean: number;
  /** Population standard deviation, as GDAL reports it. */
  std: number;
  /** 2nd and 98th percentiles (linear interpolation between order statistics, numpy's default). */
  p2: number;
  p98: number;
  validCount: number;
}

export function sliceStats(values: Float32Array, nodata: number, scratch?: Float32Array): SliceStats {
  const valid = scratch && scratch.length >= values.length ? scratch : new Float32Array(values.length);
  let n = 0;
  let sum = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== v || v === nodata) continue;
    valid[n++] = v;
    sum += v;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (n === 0) return { min: Number.NaN, max: Number.NaN, mean: Number.NaN, std: Number.NaN, p2: Number.NaN, p98: Number.NaN, validCount: 0 };
  const mean = sum / n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (valid[i]! - mean) ** 2;
  const a = valid.subarray(0, n);
  return { min, max, mean, std: Math.sqrt(ss / n), p2: percentile(a, 0.02), p98: percentile(a, 0.98), validCount: n };
}

/** Percentile p (0..1) with linear interpolation, by selection (reorders `a`; O(n), no sort). */
export function percentile(a: Float32Array, p: number): number {
  const n = a.length;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  select(a, lo, 0, n - 1);
  const v = a[lo]!;
  if (lo + 1 >= n || h === lo) return v;
  // The next order statistic is the smallest value right of the selected one.
  let next = Infinity;
  for (let i = lo + 1; i < n; i++) if (a[i]! < next) next = a[i]!;
  return v + (h - lo) * (next - v);
}

/** Floyd-Rivest style selection (Hoare partition with median-of-three): a[k] becomes the k-th smallest. */
function select(a: Float32Array, k: number, left: number, right: number): void {
  while (right > left) {
    const mid = (left + right) >> 1;
    // median of three as pivot
    if (a[mid]! < a[left]!) swap(a, mid, left);
    if (a[right]! < a[left]!) swap(a, right, left);
    if (a[right]! < a[mid]!) swap(a, right, mid);
    const pivot = a[mid]!;
    let i = left;
    let j = right;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) {
        swap(a, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else return;
  }
}

function swap(a: Float32Array, i: number, j: number): void {
  const t = a[i]!;
  a[i] = a[j]!;
  a[j] = t;
}
