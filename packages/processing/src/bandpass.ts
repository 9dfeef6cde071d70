import type { RadarLine } from '@lamina/radar-data';
import { butterworthSos, filtfiltWorkspace, sosfiltfilt, sosfiltfiltPair, type FilterKind } from './butterworth';
import { withData } from './line-util';
import { lineKernels, type LineKernels } from './line-wasm';

export interface ZeroPhaseOptions {
  /** Butterworth order N (scipy's `N`; a band-pass has 2N poles). @default 4 */
  order?: number;
}

/** Nyquist fraction of a frequency in MHz for a sample interval in ns. */
export function nyquistFraction(frequencyMHz: number, dtNs: number): number {
  return 2 * frequencyMHz * dtNs * 1e-3;
}

/**
 * Zero-phase Butterworth filter of every trace (forward-backward, scipy.signal.sosfiltfilt semantics).
 * Corners in MHz; each must lie below the Nyquist frequency 500 / dtNs MHz. `out` may be `line.data`.
 */
export function zeroPhaseFilter(
  line: RadarLine,
  kind: FilterKind,
  cornersMHz: number | readonly [number, number],
  options: ZeroPhaseOptions = {},
  out?: Float32Array,
): RadarLine {
  const order = options.order ?? 4;
  const wn =
    typeof cornersMHz === 'number'
      ? nyquistFraction(cornersMHz, line.dtNs)
      : ([nyquistFraction(cornersMHz[0], line.dtNs), nyquistFraction(cornersMHz[1], line.dtNs)] as const);
  const sos = butterworthSos(order, wn, kind);
  const { nSamples, nTraces } = line;
  const res = out ?? new Float32Array(line.data.length);
  const kernels = lineKernels();
  return withData(line, kernels ? zeroPhaseWasm(kernels, sos, line.data, nTraces, nSamples, res) : zeroPhaseJs(sos, line.data, nTraces, nSamples, res));
}

/** `zeroPhaseFilter`'s loop over the traces in JavaScript. `res` may be `data`. */
export function zeroPhaseJs(sos: Float64Array, data: Float32Array, nTraces: number, nSamples: number, res: Float32Array): Float32Array {
  const ws = filtfiltWorkspace(sos, nSamples);
  const wsB = filtfiltWorkspace(sos, nSamples);
  const y = new Float64Array(nSamples);
  const yB = new Float64Array(nSamples);
  // two traces at a time (`sosfiltfiltPair`, the same numbers as one at a time); `res` may be `data`:
  // both are read before either is written
  let t = 0;
  for (; t + 1 < nTraces; t += 2) {
    const a = data.subarray(t * nSamples, (t + 1) * nSamples);
    const b = data.subarray((t + 1) * nSamples, (t + 2) * nSamples);
    sosfiltfiltPair(sos, a, b, ws, wsB, y, yB);
    res.set(y, t * nSamples);
    res.set(yB, (t + 1) * nSamples);
  }
  for (; t < nTraces; t++) {
    const tr = data.subarray(t * nSamples, (t + 1) * nSamples);
    sosfiltfilt(sos, tr, { workspace: ws }, y);
    res.set(y, t * nSamples);
  }
  return res;
}

/**
 * `zeroPhaseFilter`'s loop in the line kernels (`filtfiltLine`): the same operations, two traces at a time
 * in the lanes of a SIMD vector, so the same numbers. `res` may be `data`.
 */
export function zeroPhaseWasm(kernels: LineKernels, sos: Float64Array, data: Float32Array, nTraces: number, nSamples: number, res: Float32Array): Float32Array {
  const { zi, edge } = filtfiltWorkspace(sos, nSamples);
  const nSec = sos.length / 6;
  const n = nTraces * nSamples;
  const [d, o, s, z0, e, z] = kernels.layout(4 * n, 4 * n, 8 * sos.length, 8 * zi.length, 16 * (nSamples + 2 * edge), 32 * nSec);
  kernels.f32(d, n).set(data);
  kernels.f64(s, sos.length).set(sos);
  kernels.f64(z0, zi.length).set(zi);
  kernels.k.filtfiltLine(d, o, nTraces, nSamples, s, nSec, z0, edge, e, z);
  res.set(kernels.f32(o, n));
  return res;
}

export interface BandpassOptions extends ZeroPhaseOptions {
  /** Low corner, MHz. */
  lowMHz: number;
  /** High corner, MHz. */
  highMHz: number;
}

/** Zero-phase Butterworth band-pass between `lowMHz` and `highMHz`. */
export function bandpass(line: RadarLine, options: BandpassOptions, out?: Float32Array): RadarLine {
  return zeroPhaseFilter(line, 'bandpass', [options.lowMHz, options.highMHz], options, out);
}
