import { quantileInPlace } from '@lamina/stats';
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
  return { min, max, mean, std: Math.sqrt(ss / n), p2: quantileInPlace(a, 0.02), p98: quantileInPlace(a, 0.98), validCount: n };
}
