import { selectInPlace, selectNear, type NumericArray } from './select';

/**
 * Median of `a`, reordering it in place (selection, no sort): the middle value, or the mean of the two
 * middle values for an even count (numpy.median). NaN for an empty array; `a` must hold no NaN.
 * `guess`: a value near the median (e.g. that of a neighbouring window), where the selection starts
 * (`selectNear`): the same median, found sooner. @default none
 */
export function medianInPlace(a: NumericArray, guess?: number): number {
  const n = a.length;
  if (n === 0) return Number.NaN;
  const k = n >> 1;
  const hi = guess !== undefined && Number.isFinite(guess) ? selectNear(a, k, 0, n - 1, guess) : selectInPlace(a, k);
  if (n % 2) return hi;
  // the lower middle value is the largest one left of k
  let lo = -Infinity;
  for (let i = 0; i < k; i++) if (a[i]! > lo) lo = a[i]!;
  return 0.5 * (lo + hi);
}

/** Median of the values that are not NaN (numpy.nanmedian), NaN when none; `values` is left as it is. */
export function median(values: ArrayLike<number>): number {
  return medianInPlace(withoutNaN(values));
}

/**
 * The lower of the two middle values for an even count, the middle one for an odd count (Python's
 * statistics.median_low): always one of the data. NaN ignored; NaN when none.
 */
export function medianLow(values: ArrayLike<number>): number {
  const a = withoutNaN(values);
  return a.length === 0 ? Number.NaN : selectInPlace(a, (a.length - 1) >> 1);
}

/** The upper of the two middle values for an even count (Python's statistics.median_high); as `medianLow`. */
export function medianHigh(values: ArrayLike<number>): number {
  const a = withoutNaN(values);
  return a.length === 0 ? Number.NaN : selectInPlace(a, a.length >> 1);
}

/**
 * Median of |x - centre| over the values that are not NaN: the raw median absolute deviation (times
 * 1.4826 it estimates a normal sigma, Rousseeuw & Croux 1993). @default centre the median of `values`
 */
export function medianAbsDeviation(values: ArrayLike<number>, centre = median(values)): number {
  const a = withoutNaN(values);
  for (let i = 0; i < a.length; i++) a[i] = Math.abs(a[i]! - centre);
  return medianInPlace(a);
}

/** Weighted median: the smallest value whose cumulative weight reaches half the total; NaN when no weight. */
export function weightedMedian(values: ArrayLike<number>, weights: ArrayLike<number>): number {
  const idx = Array.from({ length: values.length }, (_, i) => i).sort((a, b) => values[a]! - values[b]!);
  let total = 0;
  for (let i = 0; i < weights.length; i++) total += weights[i]!;
  if (!(total > 0)) return Number.NaN;
  let acc = 0;
  for (const i of idx) {
    acc += weights[i]!;
    if (acc >= total / 2) return values[i]!;
  }
  return values[idx[idx.length - 1]!]!;
}

function withoutNaN(values: ArrayLike<number>): Float64Array {
  let n = 0;
  for (let i = 0; i < values.length; i++) if (!Number.isNaN(values[i])) n++;
  const a = new Float64Array(n);
  n = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (!Number.isNaN(v)) a[n++] = v;
  }
  return a;
}
