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

export function sliceStats(values: Float32Array, nodata: number): SliceStats {
  const valid = new Float32Array(values.length);
  let n = 0;
  let sum = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== v || v === nodata) continue;
    valid[n++] = v;
    sum += v;
  }
  if (n === 0) return { min: Number.NaN, max: Number.NaN, mean: Number.NaN, std: Number.NaN, p2: Number.NaN, p98: Number.NaN, validCount: 0 };
  const mean = sum / n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (valid[i]! - mean) ** 2;
  const sorted = valid.subarray(0, n).sort();
  const q = (p: number) => {
    const h = (n - 1) * p;
    const lo = Math.floor(h);
    const hi = Math.min(lo + 1, n - 1);
    return sorted[lo]! + (h - lo) * (sorted[hi]! - sorted[lo]!);
  };
  return { min: sorted[0]!, max: sorted[n - 1]!, mean, std: Math.sqrt(ss / n), p2: q(0.02), p98: q(0.98), validCount: n };
}
