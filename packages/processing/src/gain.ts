import type { RadarLine } from '@lamina/radar-data';
import { withData } from './line-util';

export interface DivergenceGainOptions {
  /** Exponent p of the spherical-divergence term (amplitude of a spherical wave falls as 1/r, so p = 1). @default 1 */
  power?: number;
  /**
   * Exponential term alpha, nepers per ns of two-way time. From an attenuation A in dB/m at velocity v:
   * alpha = A * v / 8.686. @default 0
   */
  alphaPerNs?: number;
  /** Time after time-zero where the gain starts (gain 1 before it), ns. Recipe default: one period 1000/f. */
  startNs?: number;
  /** Ceiling of the gain, dB (20 log10). @default 60 */
  maxGainDb?: number;
}

/**
 * Gain curve g(t) for t ns after time-zero: 1 for t <= t1, else
 * min(10^(maxGainDb/20), (t / t1)^p * exp(alpha (t - t1))), t1 = startNs.
 * Continuous at t1, so the direct wave keeps its amplitude.
 */
export function divergenceGainCurve(
  nSamples: number,
  dtNs: number,
  timeZeroNs: number,
  options: DivergenceGainOptions & { startNs: number },
  out?: Float64Array,
): Float64Array {
  const p = options.power ?? 1;
  const alpha = options.alphaPerNs ?? 0;
  const t1 = options.startNs;
  if (!(t1 > 0)) throw new Error(`gain: startNs must be > 0, found ${t1}`);
  const cap = 10 ** ((options.maxGainDb ?? 60) / 20);
  const g = out ?? new Float64Array(nSamples);
  for (let i = 0; i < nSamples; i++) {
    const t = i * dtNs - timeZeroNs;
    g[i] = t <= t1 ? 1 : Math.min(cap, (t / t1) ** p * Math.exp(alpha * (t - t1)));
  }
  return g;
}

/** Spherical-divergence and exponential compensation, the same curve on every trace. `out` may be `line.data`. */
export function divergenceGain(
  line: RadarLine,
  options: DivergenceGainOptions & { startNs: number },
  out?: Float32Array,
): RadarLine {
  const { nSamples: ns, nTraces: nt } = line;
  const g = divergenceGainCurve(ns, line.dtNs, line.timeZeroNs, options);
  const res = out ?? new Float32Array(line.data.length);
  for (let t = 0; t < nt; t++) for (let i = 0; i < ns; i++) res[t * ns + i] = (line.data[t * ns + i] as number) * (g[i] as number);
  return withData(line, res);
}

export interface AgcOptions {
  /** Window length, ns (centred, shrinking at the trace ends). */
  windowNs: number;
  /**
   * Floor of the window RMS as a fraction of the whole line's RMS, so silent stretches are not blown up
   * into noise. @default 1e-3
   */
  floor?: number;
}

/**
 * Automatic gain control: each sample divided by the RMS of its trace in a window of `windowNs` around
 * it, so the output has about unit RMS everywhere. Destroys relative amplitudes. `out` may be `line.data`.
 */
export function agc(line: RadarLine, options: AgcOptions, out?: Float32Array): RadarLine {
  const { nSamples: ns, nTraces: nt, data } = line;
  const h = Math.max(1, Math.round(options.windowNs / line.dtNs / 2));
  let total = 0;
  for (let i = 0; i < data.length; i++) total += (data[i] as number) ** 2;
  const floor = (options.floor ?? 1e-3) * Math.sqrt(total / Math.max(1, data.length));
  const res = out ?? new Float32Array(data.length);
  const cum = new Float64Array(ns + 1);
  for (let t = 0; t < nt; t++) {
    const o = t * ns;
    for (let i = 0; i < ns; i++) cum[i + 1] = (cum[i] as number) + (data[o + i] as number) ** 2;
    for (let i = 0; i < ns; i++) {
      const a = Math.max(0, i - h);
      const b = Math.min(ns, i + h + 1);
      const rms = Math.sqrt(Math.max(0, (cum[b] as number) - (cum[a] as number)) / (b - a));
      res[o + i] = (data[o + i] as number) / Math.max(rms, floor || Number.MIN_VALUE);
    }
  }
  return withData(line, res);
}
