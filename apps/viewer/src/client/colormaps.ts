import { quantileSorted } from '@lamina/stats';

/** Colour maps for slice amplitudes (our own names and control points), as 256-entry RGB tables. */

type Stop = [position: number, r: number, g: number, b: number];

const STOPS: Record<string, { label: string; stops: Stop[] }> = {
  // dark to hot: weak returns recede, strong ones glow
  ember: { label: 'Ember (dark to hot)', stops: [[0, 10, 8, 30], [0.35, 120, 28, 90], [0.65, 235, 90, 40], [1, 255, 245, 160]] },
  // cool to warm through pale: for signed amplitudes
  tide: { label: 'Tide (cool to warm)', stops: [[0, 33, 64, 154], [0.5, 240, 240, 235], [1, 178, 24, 43]] },
  // plain grey ramp
  slate: { label: 'Slate (grey)', stops: [[0, 0, 0, 0], [1, 255, 255, 255]] },
  // green-blue to yellow, for colour-blind readers
  lichen: { label: 'Lichen (blue-green to yellow)', stops: [[0, 40, 30, 90], [0.5, 30, 140, 130], [1, 250, 230, 60]] },
};

export const COLOUR_MAP_NAMES = Object.keys(STOPS);

export function colourMapLabel(name: string): string {
  return STOPS[name]?.label ?? name;
}

const cache = new Map<string, Uint8Array>();

/** 256 x RGB table of a colour map by name (piecewise linear between its stops). */
export function colourTable(name: string): Uint8Array {
  const hit = cache.get(name);
  if (hit) return hit;
  const def = STOPS[name];
  if (!def) throw new Error(`unknown colour map "${name}"; expected one of ${COLOUR_MAP_NAMES.join(', ')}`);
  const lut = new Uint8Array(256 * 3);
  const s = def.stops;
  for (let i = 0; i < 256; i++) {
    const t = i / 255;
    let k = 0;
    while (k < s.length - 2 && t > s[k + 1]![0]) k++;
    const a = s[k]!;
    const b = s[k + 1]!;
    const f = b[0] === a[0] ? 0 : Math.min(1, Math.max(0, (t - a[0]) / (b[0] - a[0])));
    for (let c = 1; c <= 3; c++) lut[i * 3 + c - 1] = Math.round(a[c]! + (b[c]! - a[c]!) * f);
  }
  cache.set(name, lut);
  return lut;
}

/**
 * Colour-map `values` into RGBA: values clipped to [lo, hi] and spread over the table; nodata, NaN and
 * infinite cells transparent. `alpha` 0..255 for every drawn cell.
 */
export function colourise(
  values: ArrayLike<number>,
  nodata: number | null,
  lo: number,
  hi: number,
  lut: Uint8Array,
  alpha = 255,
  out: Uint8ClampedArray = new Uint8ClampedArray(values.length * 4),
): Uint8ClampedArray {
  const span = hi > lo ? hi - lo : 1;
  const k = 255 / span;
  for (let i = 0, j = 0; i < values.length; i++, j += 4) {
    const v = values[i]!;
    if (!Number.isFinite(v) || (nodata !== null && v === nodata)) {
      out[j + 3] = 0;
      continue;
    }
    let idx = Math.round((v - lo) * k);
    idx = idx < 0 ? 0 : idx > 255 ? 255 : idx;
    out[j] = lut[idx * 3]!;
    out[j + 1] = lut[idx * 3 + 1]!;
    out[j + 2] = lut[idx * 3 + 2]!;
    out[j + 3] = alpha;
  }
  return out;
}

/**
 * Percentiles (0..100) of the valid cells by linear interpolation between order statistics (the
 * default "linear" method of numpy.percentile). At most `maxSamples` cells, evenly strided, are used.
 */
export function percentiles(values: ArrayLike<number>, nodata: number | null, ps: number[], maxSamples = 200_000): number[] {
  const step = Math.max(1, Math.floor(values.length / maxSamples));
  const buf: number[] = [];
  for (let i = 0; i < values.length; i += step) {
    const v = values[i]!;
    if (Number.isFinite(v) && (nodata === null || v !== nodata)) buf.push(v);
  }
  if (buf.length === 0) return ps.map(() => NaN);
  const sorted = Float64Array.from(buf).sort();
  return ps.map((p) => quantileSorted(sorted, Math.min(100, Math.max(0, p)) / 100));
}
