import type { RadarLine } from '@lamina/radar-data';
import { zeroPhaseFilter } from './bandpass';
import { withData } from './line-util';
import { lineKernels } from './line-wasm';

export interface DewowOptions {
  /**
   * `runningMean`: subtract a centred running mean of `windowNs`; `lowCut`: zero-phase Butterworth
   * high-pass at `lowCutMHz`. @default 'runningMean'
   */
  method?: 'runningMean' | 'lowCut';
  /** Running-mean window, ns (rounded to an odd sample count >= 3). Recipe default: one period 1000/f. */
  windowNs?: number;
  /** High-pass corner, MHz (method `lowCut`). Recipe default: f / 4. */
  lowCutMHz?: number;
  /** Butterworth order for `lowCut`. @default 2 */
  order?: number;
}

/** Odd sample count nearest to `ns / dt`, at least 3. */
export function oddWindow(ns: number, dtNs: number): number {
  let w = Math.max(3, Math.round(ns / dtNs));
  if (w % 2 === 0) w += 1;
  return w;
}

/**
 * Dewow: remove the slowly varying "wow" (DC and inductive low-frequency drift) from each trace.
 * The running mean shrinks to the samples available near the ends of the trace. `out` may be `line.data`.
 */
export function dewow(line: RadarLine, options: DewowOptions & { windowNs: number } | DewowOptions, out?: Float32Array): RadarLine {
  const method = options.method ?? 'runningMean';
  if (method === 'lowCut') {
    if (options.lowCutMHz === undefined) throw new Error('dewow: lowCut needs lowCutMHz');
    return zeroPhaseFilter(line, 'highpass', options.lowCutMHz, { order: options.order ?? 2 }, out);
  }
  if (options.windowNs === undefined) throw new Error('dewow: runningMean needs windowNs');
  const { nSamples, nTraces } = line;
  const w = oddWindow(options.windowNs, line.dtNs);
  const h = (w - 1) >> 1;
  const res = out ?? new Float32Array(line.data.length);
  const data = line.data;
  const kernels = lineKernels();
  if (kernels) {
    // the same sums and divisions in the line kernels (`dewowLine`)
    const n = nTraces * nSamples;
    const [d, o, c] = kernels.layout(4 * n, 4 * n, 8 * (nSamples + 1));
    kernels.f32(d, n).set(data.subarray(0, n));
    kernels.k.dewowLine(d, o, nTraces, nSamples, h, c);
    res.set(kernels.f32(o, n));
    return withData(line, res);
  }
  const cum = new Float64Array(nSamples + 1);
  // the window is clamped to the trace on the first and last h samples only: three loops, so that the
  // full windows between (most samples) divide by w without clamping each end (the same numbers)
  const i0 = Math.min(nSamples, h);
  const i1 = Math.max(i0, nSamples - h);
  for (let t = 0; t < nTraces; t++) {
    const o = t * nSamples;
    let acc = 0;
    for (let i = 0; i < nSamples; i++) cum[i + 1] = acc += data[o + i] as number;
    for (let i = 0; i < i0; i++) {
      const b = Math.min(nSamples, i + h + 1);
      res[o + i] = (data[o + i] as number) - ((cum[b] as number) - (cum[0] as number)) / b;
    }
    for (let i = i0; i < i1; i++) res[o + i] = (data[o + i] as number) - ((cum[i + h + 1] as number) - (cum[i - h] as number)) / w;
    for (let i = i1; i < nSamples; i++) {
      const a = Math.max(0, i - h);
      res[o + i] = (data[o + i] as number) - ((cum[nSamples] as number) - (cum[a] as number)) / (nSamples - a);
    }
  }
  return withData(line, res);
}
