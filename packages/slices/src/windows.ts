/** A depth window of one slice, metres below the ground surface. */
export interface SliceWindow {
  index: number;
  topM: number;
  bottomM: number;
}

/**
 * Default slice thickness: half the wavelength in the soil, v / f / 2 (f in MHz, v in m/ns, so
 * lambda = 1000 v / f m). Common practice, no source: thinner slices than the vertical resolution
 * (about a quarter to half a wavelength) add no information, much thicker ones blur targets at
 * different depths together.
 */
export function defaultThicknessM(velocityMPerNs: number, frequencyMHz: number): number {
  if (!(velocityMPerNs > 0) || !(frequencyMHz > 0)) {
    throw new Error(`expected a positive velocity and frequency, found ${velocityMPerNs} m/ns and ${frequencyMHz} MHz`);
  }
  return (1000 * velocityMPerNs) / frequencyMHz / 2;
}

export interface WindowOptions {
  /** Slice thickness in metres. */
  thicknessM: number;
  /** Fraction (0 <= overlap < 1) of a slice shared with the next one. @default 0 */
  overlap?: number;
}

/**
 * Cut [topM, bottomM] into slices of `thicknessM`, each starting `thicknessM * (1 - overlap)` below the
 * previous. The last slice is the last one that ends at or above `bottomM` (plus a millimetre of
 * rounding slack), so no slice reaches below the data.
 */
export function sliceWindows(topM: number, bottomM: number, options: WindowOptions): SliceWindow[] {
  const t = options.thicknessM;
  const overlap = options.overlap ?? 0;
  if (!(t > 0)) throw new Error(`slice thickness must be positive, found ${t} m`);
  if (!(overlap >= 0 && overlap < 1)) throw new Error(`slice overlap must be in [0, 1), found ${overlap}`);
  if (!(bottomM > topM)) throw new Error(`slice depth range must have bottom below top, found ${topM}..${bottomM} m`);
  const step = t * (1 - overlap);
  const out: SliceWindow[] = [];
  for (let k = 0; ; k++) {
    const top = topM + k * step;
    const bottom = top + t;
    if (bottom > bottomM + 1e-3) break;
    out.push({ index: k, topM: round6(top), bottomM: round6(bottom) });
  }
  if (out.length === 0) out.push({ index: 0, topM, bottomM });
  return out;
}

function round6(v: number): number {
  return Math.round(v * 1e6) / 1e6;
}

export type SliceMode = 'mean-square' | 'mean-abs';

/**
 * Slice value of each trace: the mean over each window of value^2 (`mean-square`: the mean squared
 * envelope when given the envelope, i.e. the mean energy) or of |value| (`mean-abs`).
 *
 * Each sample stands for the depth interval halfway to its neighbours; a window's mean weights each
 * sample by how much of its interval falls inside the window, so windows thinner than a sample still get
 * a value and results do not jump as a window edge crosses a sample. Samples with NaN depth (before the
 * ground wave) are left out. A window wholly outside the trace's depths gives NaN.
 *
 * `data` is trace-major (`nTraces * nSamples`); `depths` the depth of each sample (m, increasing);
 * output is trace-major `nTraces * windows.length`.
 */
export function traceSliceValues(
  data: Float32Array,
  nTraces: number,
  nSamples: number,
  depths: Float64Array,
  windows: SliceWindow[],
  mode: SliceMode = 'mean-square',
  out: Float32Array = new Float32Array(nTraces * windows.length),
): Float32Array {
  if (data.length < nTraces * nSamples) throw new Error(`expected ${nTraces * nSamples} samples, found ${data.length}`);
  const nw = windows.length;
  // Sample weights per window are the same for every trace: build them once as sparse (first, weights).
  const first = new Int32Array(nw);
  const weights: Float64Array[] = [];
  const lo = new Float64Array(nSamples);
  const hi = new Float64Array(nSamples);
  for (let i = 0; i < nSamples; i++) {
    const z = depths[i]!;
    if (Number.isNaN(z)) {
      lo[i] = hi[i] = Number.NaN;
      continue;
    }
    const prev = i > 0 ? depths[i - 1]! : Number.NaN;
    const next = i + 1 < nSamples ? depths[i + 1]! : Number.NaN;
    lo[i] = Number.isNaN(prev) ? z : 0.5 * (prev + z);
    hi[i] = Number.isNaN(next) ? z : 0.5 * (z + next);
  }
  for (let k = 0; k < nw; k++) {
    const w = windows[k]!;
    const ws: number[] = [];
    let f = -1;
    for (let i = 0; i < nSamples; i++) {
      const a = lo[i]!;
      const b = hi[i]!;
      if (Number.isNaN(a)) continue;
      const o = Math.min(b, w.bottomM) - Math.max(a, w.topM);
      if (o > 0) {
        if (f < 0) f = i;
        while (f + ws.length < i) ws.push(0);
        ws.push(o);
      }
    }
    first[k] = f;
    const arr = new Float64Array(ws);
    let sum = 0;
    for (const v of arr) sum += v;
    for (let j = 0; j < arr.length; j++) arr[j] = arr[j]! / sum;
    weights.push(arr);
  }
  const square = mode === 'mean-square';
  for (let t = 0; t < nTraces; t++) {
    const base = t * nSamples;
    for (let k = 0; k < nw; k++) {
      const f = first[k]!;
      const ws = weights[k]!;
      if (f < 0) {
        out[t * nw + k] = Number.NaN;
        continue;
      }
      let acc = 0;
      for (let j = 0; j < ws.length; j++) {
        const v = data[base + f + j]!;
        acc += ws[j]! * (square ? v * v : Math.abs(v));
      }
      out[t * nw + k] = acc;
    }
  }
  return out;
}
