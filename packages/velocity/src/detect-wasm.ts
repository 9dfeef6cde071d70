import { kernelsOf } from '@lamina/processing';
import { DETECT_WASM_BASE64 } from './detect-wasm-binary';
import type { ScanLine } from './scan';

/** The exports of wasm/detect-kernels.ts (pointers are byte offsets into `memory`). */
export interface DetectExports {
  memory: WebAssembly.Memory;
  anyNaN(p: number, n: number): number;
  scanLine(N: number, along: number, nTraces: number, nSamples: number, sep: number, spacing: number, tanA: number, maxAp: number, dtNs: number, timeZeroNs: number, left: number, right: number): void;
  scanCandidate(ct: number, t0: number, apexShift: number, velocities: number, nV: number, floor: number, scoreV: number, xV: number): void;
  irls(x: number, t: number, w: number, prior: number, n: number, p: number, s: number, np: number, robust: number, minScale: number, rounds: number, rMax: number, work: number): number;
  irlsWorkBytes(n: number): number;
  apexMaxima(N: number, nTraces: number, nSamples: number, sStart: number, sEnd: number, threshold: number, nbT: number, halfS: number, out: number): number;
  normalisedEnvelope(env: number, nTraces: number, nSamples: number, smooth: number, floorFraction: number, cols: number, raw: number, level: number, N: number): void;
}

/** This thread's detection kernels; null where WebAssembly SIMD is not available. */
// the fits' sines, cosines, arc tangents and powers are JavaScript's, so that their numbers are the JavaScript path's
export const detectKernels = kernelsOf<DetectExports>(DETECT_WASM_BASE64, { Math: { sin: Math.sin, cos: Math.cos, atan2: Math.atan2, pow: Math.pow } });

/**
 * The velocity scan of `detectHyperbolas` in the detection kernels (`scanCandidate`): `curveTools`' `scan`
 * (./scan.ts) with the same numbers. Null where the kernels do not run or
 * the envelope holds NaN (whose medians the JavaScript selection decides).
 */
export function kernelScan(line: ScanLine): ((ct: number, t0: number, floor: number, scoreV: Float64Array, xV: Float64Array) => void) | null {
  const K = detectKernels();
  if (!K) return null;
  const { nTraces, nSamples, velocities } = line;
  const nV = velocities.length;
  const n = nTraces * nSamples;
  // in the kept region: the fits (`irls`) lay out their arrays between the candidates' scans
  const sizes = [4 * n, 8 * nTraces, 4 * nTraces, 4 * nTraces, 8 * nV, 8 * nV, 8 * nV].map((b) => Math.ceil(b / 16) * 16);
  const base = K.keep(sizes.reduce((a, b) => a + b, 0));
  const [N, along, left, right, vel, sv, xv] = sizes.map((_, i) => base + sizes.slice(0, i).reduce((a, b) => a + b, 0)) as [number, number, number, number, number, number, number];
  K.f32(N, n).set(line.N.subarray(0, n));
  if (K.k.anyNaN(N, n)) return null;
  K.f64(along, nTraces).set(line.along.subarray(0, nTraces));
  K.f64(vel, nV).set(velocities);
  K.k.scanLine(N, along, nTraces, nSamples, line.separationM, line.spacing, line.tanA, line.maxApertureM, line.dtNs, line.timeZeroNs, left, right);
  return (ct, t0, floor, scoreV, xV) => {
    // offsets are written where a score improves: the others stay the caller's
    K.f64(xv, nV).set(xV);
    K.k.scanCandidate(ct, t0, line.apexShift, vel, nV, floor, sv, xv);
    scoreV.set(K.f64(sv, nV));
    xV.set(K.f64(xv, nV));
  };
}

/**
 * `normalised(E, envelopeLevel(E, ...))` of detect.ts in the detection kernels (`normalisedEnvelope`), the
 * same numbers, into `out`; null where the kernels do not run or E holds NaN.
 */
export function kernelNormalised(E: Float32Array, nTraces: number, nSamples: number, smooth: number, floorFraction: number, out: Float32Array): Float32Array | null {
  const K = detectKernels();
  if (!K) return null;
  const n = nTraces * nSamples;
  const m = Math.ceil(nTraces / Math.max(1, Math.ceil(nTraces / 128)));
  const [env, cols, raw, level, N] = K.layout(4 * n, 4 * m * nSamples, 8 * nSamples, 8 * nSamples, 4 * n);
  K.f32(env, n).set(E.subarray(0, n));
  if (K.k.anyNaN(env, n)) return null;
  K.k.normalisedEnvelope(env, nTraces, nSamples, smooth, floorFraction, cols, raw, level, N);
  out.set(K.f32(N, n));
  return out;
}

/**
 * `apexCandidates` of detect.ts in the detection kernels (`apexMaxima`), the same candidates in the same
 * order; null where the kernels do not run.
 */
export function kernelApexCandidates(N: Float32Array, nTraces: number, nSamples: number, sStart: number, sEnd: number, threshold: number, nbT: number, halfS: number): { t: number; s: number; v: number }[] | null {
  const K = detectKernels();
  if (!K) return null;
  const n = nTraces * nSamples;
  const [a, out] = K.layout(4 * n, 8 * nTraces * Math.max(0, sEnd - sStart));
  K.f32(a, n).set(N.subarray(0, n));
  const count = K.k.apexMaxima(a, nTraces, nSamples, sStart, sEnd, threshold, nbT, halfS, out);
  const ts = K.i32(out, 2 * count);
  return Array.from({ length: count }, (_, i) => {
    const t = ts[2 * i]!;
    const s = ts[2 * i + 1]!;
    return { t, s, v: N[t * nSamples + s]! };
  });
}
