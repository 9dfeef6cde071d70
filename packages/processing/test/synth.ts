// Synthetic common-offset lines for the tests: Ricker wavelets at known times (no simulator dependency).
import type { RadarLine } from '@lamina/radar-data';

/** Ricker wavelet (1 - 2a) e^-a, a = (pi f t)^2, f in MHz, t in ns: the standard zero-phase form. */
export function ricker(tNs: number, fMHz: number): number {
  const a = (Math.PI * fMHz * 1e-3 * tNs) ** 2;
  return (1 - 2 * a) * Math.exp(-a);
}

/** Seeded generator (mulberry32) and a normal deviate. */
export function rng(seed: number): { next: () => number; normal: () => number } {
  let s = seed >>> 0;
  const next = () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const normal = () => Math.sqrt(-2 * Math.log(next() + 1e-300)) * Math.cos(2 * Math.PI * next());
  return { next, normal };
}

export function makeLine(nTraces: number, nSamples: number, dtNs: number, spacingM: number, timeZeroNs = 0): RadarLine {
  const x = new Float64Array(nTraces);
  for (let i = 0; i < nTraces; i++) x[i] = i * spacingM;
  return { id: 'synthetic', nTraces, nSamples, dtNs, data: new Float32Array(nTraces * nSamples), x, y: new Float64Array(nTraces), timeZeroNs };
}

export function addRicker(line: RadarLine, trace: number, timeNs: number, amp: number, fMHz: number): void {
  const { nSamples: ns, dtNs } = line;
  const half = 3000 / fMHz;
  const i0 = Math.max(0, Math.floor((timeNs - half) / dtNs));
  const i1 = Math.min(ns - 1, Math.ceil((timeNs + half) / dtNs));
  for (let i = i0; i <= i1; i++) line.data[trace * ns + i] = (line.data[trace * ns + i] as number) + amp * ricker(i * dtNs - timeNs, fMHz);
}

/** Bistatic two-way time (ns) to a point at horizontal offset dx and depth z, antennas 2h apart along the line. */
export function bistaticTime(dx: number, z: number, h: number, v: number): number {
  return (Math.hypot(dx - h, z) + Math.hypot(dx + h, z)) / v;
}

/** A point diffractor at along-line position x0 (m), depth z (m), velocity v, separation s; amplitude ~ 1/r. */
export function addDiffraction(line: RadarLine, x0: number, z: number, v: number, s: number, fMHz: number, amp = 1): void {
  for (let t = 0; t < line.nTraces; t++) {
    const dx = (line.x[t] as number) - x0;
    const tt = bistaticTime(dx, z, s / 2, v);
    addRicker(line, t, line.timeZeroNs + tt, (amp * z) / Math.hypot(dx, z), fMHz);
  }
}

export function addNoise(line: RadarLine, sigma: number, seed: number): void {
  const r = rng(seed);
  for (let i = 0; i < line.data.length; i++) line.data[i] = (line.data[i] as number) + sigma * r.normal();
}

export function trace(line: RadarLine, t: number): Float32Array {
  return line.data.subarray(t * line.nSamples, (t + 1) * line.nSamples);
}

export function argmaxAbs(a: ArrayLike<number>): { index: number; value: number } {
  let k = 0;
  for (let i = 1; i < a.length; i++) if (Math.abs(a[i] as number) > Math.abs(a[k] as number)) k = i;
  return { index: k, value: a[k] as number };
}

export function rms(a: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += (a[i] as number) ** 2;
  return Math.sqrt(s / Math.max(1, a.length));
}
