/**
 * Line-level levelling: removes stripes that line-to-line gain differences (antenna coupling, operator,
 * soil moisture along a pass) paint across a slice. For each slice, each line's values are scaled so
 * that their `quantile` (the median by default) equals the median of those line quantiles over the
 * site. Lines with a zero or undefined quantile are left alone. A multiplicative correction keeps slice
 * values (energies) positive.
 *
 * Caution: a line run along a long target has a high median for a real reason and is scaled down.
 *
 * `values` is trace-major `nTraces * nSlices`, changed in place; returns the factors, line-major
 * `nLines * nSlices`.
 */
export function levelLines(values: Float32Array, nSlices: number, lineStarts: Int32Array, quantile = 0.5): Float64Array {
  const nLines = lineStarts.length - 1;
  const factors = new Float64Array(nLines * nSlices).fill(1);
  const q = new Float64Array(nLines);
  for (let k = 0; k < nSlices; k++) {
    for (let l = 0; l < nLines; l++) {
      const a = lineStarts[l]!;
      const b = lineStarts[l + 1]!;
      const vs: number[] = [];
      for (let t = a; t < b; t++) {
        const v = values[t * nSlices + k]!;
        if (v === v) vs.push(v);
      }
      q[l] = quantileOf(vs, quantile);
    }
    const good = Array.from(q).filter((v) => v > 0);
    if (good.length < 2) continue;
    const target = quantileOf(good, 0.5);
    for (let l = 0; l < nLines; l++) {
      const ql = q[l]!;
      if (!(ql > 0)) continue;
      const f = target / ql;
      factors[l * nSlices + k] = f;
      for (let t = lineStarts[l]!; t < lineStarts[l + 1]!; t++) values[t * nSlices + k] = values[t * nSlices + k]! * f;
    }
  }
  return factors;
}

/** Quantile with linear interpolation between order statistics (numpy's default, "linear"). */
export function quantileOf(values: number[], p: number): number {
  if (values.length === 0) return Number.NaN;
  const a = Float64Array.from(values).sort();
  const h = (a.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, a.length - 1);
  return a[lo]! + (h - lo) * (a[hi]! - a[lo]!);
}
