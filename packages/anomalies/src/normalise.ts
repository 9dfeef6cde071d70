import { medianInPlace } from '@lamina/stats';
import { validMedianMad } from './select-wasm';

/** Median and median absolute deviation of the finite, non-nodata values (one slice). */
export interface RobustStats {
  median: number;
  /** Raw MAD (not scaled by 1.4826). */
  mad: number;
  count: number;
}

export function robustStats(values: Float32Array, nodata: number): RobustStats {
  return validMedianMad(values, nodata) ?? robustStatsInJs(values, nodata);
}

/** `robustStats` in JavaScript: where WebAssembly does not run, and the kernels' reference in the tests. */
export function robustStatsInJs(values: Float32Array, nodata: number): RobustStats {
  let n = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== nodata && Number.isFinite(v)) n++;
  }
  const buf = new Float64Array(n);
  n = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== nodata && Number.isFinite(v)) buf[n++] = v;
  }
  const med = medianInPlace(buf);
  for (let i = 0; i < buf.length; i++) buf[i] = Math.abs(buf[i]! - med);
  return { median: med, mad: medianInPlace(buf), count: n };
}

/**
 * Robust z-score per cell: (v - median) / (1.4826 MAD), the MAD scaled to a normal sigma
 * (Rousseeuw & Croux 1993). Nodata and non-finite cells get NaN. When the MAD is zero
 * (more than half the cells equal) the mean absolute deviation stands in; a constant slice scores 0.
 */
export function robustScores(values: Float32Array, nodata: number, out?: Float32Array): Float32Array {
  const res = out ?? new Float32Array(values.length);
  const { median: med, mad } = robustStats(values, nodata);
  let scale = 1.4826 * mad;
  if (!(scale > 0)) {
    let s = 0;
    let n = 0;
    for (let i = 0; i < values.length; i++) {
      const v = values[i]!;
      if (v !== nodata && Number.isFinite(v)) {
        s += Math.abs(v - med);
        n++;
      }
    }
    scale = n > 0 ? (1.2533 * s) / n : 0; // mean abs deviation * sqrt(pi/2) = sigma for a normal
  }
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v === nodata || !Number.isFinite(v)) res[i] = NaN;
    else res[i] = scale > 0 ? (v - med) / scale : 0;
  }
  return res;
}
