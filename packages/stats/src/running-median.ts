/**
 * Running median: out[t] = the median of the finite values of v[max(0, t - half) .. min(n, t + half + 1)),
 * the window clamped at the ends (NaN where it holds none). The same value as `medianInPlace` of each
 * window's finite values (the middle one, or the mean of the two middle ones), from one sorted window
 * kept by binary-search insert and delete as it slides: O(n half) moves instead of a selection per window.
 * (-0 and 0 are one value to it, as to every comparison.)
 */
export function runningMedian(v: ArrayLike<number>, half: number, out: Float64Array = new Float64Array(v.length)): Float64Array {
  const n = v.length;
  if (out.length < n) throw new Error(`runningMedian: out has ${out.length} values when ${n} were expected`);
  const h = Math.max(0, Math.floor(half));
  const sorted = new Float64Array(Math.min(n, 2 * h + 1));
  let count = 0;
  // index of the first sorted value >= x
  const lowerBound = (x: number): number => {
    let lo = 0;
    let hi = count;
    while (lo < hi) {
      const m = (lo + hi) >> 1;
      if ((sorted[m] as number) < x) lo = m + 1;
      else hi = m;
    }
    return lo;
  };
  const add = (x: number) => {
    if (!Number.isFinite(x)) return;
    const at = lowerBound(x);
    for (let i = count; i > at; i--) sorted[i] = sorted[i - 1] as number;
    sorted[at] = x;
    count++;
  };
  const remove = (x: number) => {
    if (!Number.isFinite(x)) return;
    count--;
    for (let i = lowerBound(x); i < count; i++) sorted[i] = sorted[i + 1] as number;
  };
  for (let i = 0; i < Math.min(n, h); i++) add(v[i] as number);
  for (let t = 0; t < n; t++) {
    if (t - h - 1 >= 0) remove(v[t - h - 1] as number);
    if (t + h < n) add(v[t + h] as number);
    if (count === 0) out[t] = Number.NaN;
    else {
      const k = count >> 1;
      out[t] = count % 2 ? (sorted[k] as number) : 0.5 * ((sorted[k - 1] as number) + (sorted[k] as number));
    }
  }
  return out;
}
