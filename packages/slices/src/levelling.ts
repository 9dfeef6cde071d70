import { quantile as quantileOf } from '@lamina/stats';
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
  const factors = levelFactors(nSlices, lineStarts, (l) => values.subarray(lineStarts[l]! * nSlices, lineStarts[l + 1]! * nSlices), quantile);
  for (let l = 0; l < lineStarts.length - 1; l++) {
    for (let t = lineStarts[l]!; t < lineStarts[l + 1]!; t++) {
      for (let k = 0; k < nSlices; k++) values[t * nSlices + k] = values[t * nSlices + k]! * factors[l * nSlices + k]!;
    }
  }
  return factors;
}

/**
 * The factors of `levelLines` (line-major `nLines * nSlices`) from each line's trace-major values,
 * read one line at a time by `lineValues(l)`.
 */
export function levelFactors(nSlices: number, lineStarts: Int32Array, lineValues: (l: number) => Float32Array, quantile = 0.5): Float64Array {
  const nLines = lineStarts.length - 1;
  const factors = new Float64Array(nLines * nSlices).fill(1);
  const q = new Float64Array(nLines * nSlices);
  for (let l = 0; l < nLines; l++) {
    const v = lineValues(l);
    const m = lineStarts[l + 1]! - lineStarts[l]!;
    for (let k = 0; k < nSlices; k++) {
      const vs: number[] = [];
      for (let t = 0; t < m; t++) {
        const x = v[t * nSlices + k]!;
        if (x === x) vs.push(x);
      }
      q[l * nSlices + k] = quantileOf(vs, quantile);
    }
  }
  for (let k = 0; k < nSlices; k++) {
    const good: number[] = [];
    for (let l = 0; l < nLines; l++) if (q[l * nSlices + k]! > 0) good.push(q[l * nSlices + k]!);
    if (good.length < 2) continue;
    const target = quantileOf(good, 0.5);
    for (let l = 0; l < nLines; l++) {
      const ql = q[l * nSlices + k]!;
      if (ql > 0) factors[l * nSlices + k] = target / ql;
    }
  }
  return factors;
}

