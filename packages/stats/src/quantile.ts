import { selectInPlace, type NumericArray } from './select';

/**
 * Quantile q (0..1) of ascending `sorted` by linear interpolation between order statistics (numpy's
 * default method, "linear"): h = (n - 1) q, x[floor h] + (h - floor h) (x[floor h + 1] - x[floor h]).
 * NaN when empty.
 */
export function quantileSorted(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0) return Number.NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  if (lo + 1 >= n) return sorted[lo]!;
  return sorted[lo]! + (h - lo) * (sorted[lo + 1]! - sorted[lo]!);
}

/** Quantile q (0..1) of `values` as `quantileSorted`, on a sorted copy (`values` is left as it is). */
export function quantile(values: ArrayLike<number>, q: number): number {
  return quantileSorted(Float64Array.from(values).sort(), q);
}

/**
 * Quantile q (0..1) as `quantileSorted`, by selection (reorders `a`; O(n), no sort). NaN when empty;
 * `a` must hold no NaN.
 */
export function quantileInPlace(a: NumericArray, q: number): number {
  const n = a.length;
  if (n === 0) return Number.NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const v = selectInPlace(a, lo);
  if (lo + 1 >= n || h === lo) return v;
  // the next order statistic is the smallest value right of the selected one
  let next = Infinity;
  for (let i = lo + 1; i < n; i++) if (a[i]! < next) next = a[i]!;
  return v + (h - lo) * (next - v);
}
