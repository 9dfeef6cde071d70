import type { RadarLine } from '@lamina/radar-data';
import { medianInPlace } from '@lamina/stats';

/** The same line (positions shared) with other samples. */
export function withData(line: RadarLine, data: Float32Array, timeZeroNs = line.timeZeroNs): RadarLine {
  if (data.length !== line.nTraces * line.nSamples) {
    throw new Error(`out has ${data.length} samples when ${line.nTraces} x ${line.nSamples} were expected`);
  }
  return { ...line, data, timeZeroNs };
}

/** A buffer for results; a copy of the input is taken first when `out` aliases it and the kernel needs the input intact. */
export function outputFor(line: RadarLine, out: Float32Array | undefined): { src: Float32Array; dst: Float32Array } {
  const dst = out ?? new Float32Array(line.data.length);
  const src = dst === line.data || sharesMemory(dst, line.data) ? line.data.slice() : line.data;
  return { src, dst };
}

function sharesMemory(a: Float32Array, b: Float32Array): boolean {
  if (a.buffer !== b.buffer) return false;
  const a0 = a.byteOffset;
  const b0 = b.byteOffset;
  return a0 < b0 + b.byteLength && b0 < a0 + a.byteLength;
}

/**
 * Cumulative distance along the line, metres, from the trace positions (CRS units times
 * `metresPerUnit`). A curved line is measured along its track.
 */
export function alongTrackM(line: RadarLine, metresPerUnit = 1): Float64Array {
  const d = new Float64Array(line.nTraces);
  for (let t = 1; t < line.nTraces; t++) {
    const dx = (line.x[t] as number) - (line.x[t - 1] as number);
    const dy = (line.y[t] as number) - (line.y[t - 1] as number);
    d[t] = (d[t - 1] as number) + Math.hypot(dx, dy) * metresPerUnit;
  }
  return d;
}

/** Median of the finite values of `v[from..to)`, NaN if none. */
export function medianOf(v: ArrayLike<number>, from = 0, to = v.length): number {
  let n = 0;
  for (let i = from; i < to; i++) if (Number.isFinite(v[i] as number)) n++;
  const a = new Float64Array(n);
  n = 0;
  for (let i = from; i < to; i++) {
    const x = v[i] as number;
    if (Number.isFinite(x)) a[n++] = x;
  }
  return medianInPlace(a);
}

/** Period of the antenna centre frequency, ns. */
export function periodNs(frequencyMHz: number): number {
  return 1000 / frequencyMHz;
}
