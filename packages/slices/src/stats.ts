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

/** Count, sum, min and max of the valid cells seen so far (`addValid`). */
interface ValidSums {
  n: number;
  sum: number;
  min: number;
  max: number;
}

const NO_STATS: SliceStats = { min: Number.NaN, max: Number.NaN, mean: Number.NaN, std: Number.NaN, p2: Number.NaN, p98: Number.NaN, validCount: 0 };

/** Adds the valid cells of `values` to `acc`; with `keep`, also copies them to `keep` from index acc.n on. */
function addValid(values: Float32Array, nodata: number, acc: ValidSums, keep?: Float32Array): void {
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== v || v === nodata) continue;
    if (keep) keep[acc.n] = v;
    acc.n++;
    acc.sum += v;
    if (v < acc.min) acc.min = v;
    if (v > acc.max) acc.max = v;
  }
}

/** `from` plus the squared deviations from `mean` of the valid cells of `values`, added in cell order. */
function squaredDeviations(values: Float32Array, nodata: number, mean: number, from = 0): number {
  let ss = from;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== v || v === nodata) continue;
    ss += (v - mean) ** 2;
  }
  return ss;
}

export function sliceStats(values: Float32Array, nodata: number, scratch?: Float32Array): SliceStats {
  const valid = scratch && scratch.length >= values.length ? scratch : new Float32Array(values.length);
  const acc: ValidSums = { n: 0, sum: 0, min: Infinity, max: -Infinity };
  addValid(values, nodata, acc, valid);
  const { n, sum, min, max } = acc;
  if (n === 0) return { ...NO_STATS };
  const mean = sum / n;
  const a = valid.subarray(0, n);
  const ss = squaredDeviations(a, nodata, mean);
  return { min, max, mean, std: Math.sqrt(ss / n), p2: quantileInPlace(a, 0.02), p98: quantileInPlace(a, 0.98), validCount: n };
}

/** Rows of one slice read a strip at a time (a RowSource of @lamina/cog fits). */
export interface SliceRows {
  width: number;
  height: number;
  readRows(band: number, r0: number, r1: number): Float32Array | Promise<Float32Array>;
}

/**
 * `sliceStats` of band `band` of a raster read a strip of `stripRows` rows at a time, so that no whole
 * slice is held: the same numbers (sums in the same cell order; the quantiles are the same order
 * statistics, found by a radix selection on the float bits in two more passes). @default stripRows 256
 */
export async function sliceStatsOfRows(source: SliceRows, band: number, nodata: number, stripRows = 256): Promise<SliceStats> {
  const { height } = source;
  const strips = async (each: (v: Float32Array) => void): Promise<void> => {
    for (let r0 = 0; r0 < height; r0 += stripRows) each(await source.readRows(band, r0, Math.min(height, r0 + stripRows)));
  };
  const acc: ValidSums = { n: 0, sum: 0, min: Infinity, max: -Infinity };
  await strips((v) => addValid(v, nodata, acc));
  const { n, sum, min, max } = acc;
  if (n === 0) return { ...NO_STATS };
  const mean = sum / n;
  let ss = 0;
  await strips((v) => {
    ss = squaredDeviations(v, nodata, mean, ss);
  });
  const ranks = [0.02, 0.98].flatMap((q) => {
    const h = (n - 1) * q;
    const lo = Math.floor(h);
    return [lo, Math.min(n - 1, lo + 1)];
  });
  const ordered = await orderStatistics(strips, nodata, ranks);
  const quantile = (j: number, q: number): number => {
    const h = (n - 1) * q;
    const lo = Math.floor(h);
    const v = ordered[2 * j]!;
    if (lo + 1 >= n || h === lo) return v;
    return v + (h - lo) * (ordered[2 * j + 1]! - v);
  };
  return { min, max, mean, std: Math.sqrt(ss / n), p2: quantile(0, 0.02), p98: quantile(1, 0.98), validCount: n };
}

// Float32 bits in an order that sorts as the numbers do (negatives flipped, positives' sign bit set).
const sortable = (bits: number): number => (bits & 0x80000000 ? ~bits : bits | 0x80000000) >>> 0;
const unsortable = (key: number): number => (key & 0x80000000 ? key & 0x7fffffff : ~key) >>> 0;

/** The k-th smallest valid values (0-based ranks) by two histogram passes over the 16 high, then 16 low bits. */
async function orderStatistics(strips: (each: (v: Float32Array) => void) => Promise<void>, nodata: number, ranks: number[]): Promise<number[]> {
  const high = new Float64Array(65536);
  const bitsOf = (v: Float32Array): Uint32Array => new Uint32Array(v.buffer, v.byteOffset, v.length);
  await strips((v) => {
    const b = bitsOf(v);
    for (let i = 0; i < v.length; i++) {
      const x = v[i]!;
      if (x !== x || x === nodata) continue;
      const h = sortable(b[i]!) >>> 16;
      high[h] = high[h]! + 1;
    }
  });
  // the high bin of each rank and the rank within it
  const bins = ranks.map((k) => {
    let below = 0;
    for (let h = 0; h < 65536; h++) {
      if (below + high[h]! > k) return { bin: h, rest: k - below };
      below += high[h]!;
    }
    throw new Error(`rank ${k} beyond the valid cells`);
  });
  const wanted = [...new Set(bins.map((b) => b.bin))];
  const low = new Map(wanted.map((h) => [h, new Float64Array(65536)]));
  await strips((v) => {
    const b = bitsOf(v);
    for (let i = 0; i < v.length; i++) {
      const x = v[i]!;
      if (x !== x || x === nodata) continue;
      const key = sortable(b[i]!);
      const hist = low.get(key >>> 16);
      if (hist) hist[key & 0xffff] = hist[key & 0xffff]! + 1;
    }
  });
  const f = new Float32Array(1);
  const u = new Uint32Array(f.buffer);
  return bins.map(({ bin, rest }) => {
    const hist = low.get(bin)!;
    let below = 0;
    for (let l = 0; l < 65536; l++) {
      if (below + hist[l]! > rest) {
        u[0] = unsortable(((bin << 16) | l) >>> 0);
        return f[0]!;
      }
      below += hist[l]!;
    }
    throw new Error(`rank ${rest} beyond bin ${bin}`);
  });
}
