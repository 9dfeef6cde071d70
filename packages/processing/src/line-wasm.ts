import { twiddleImage } from './fft-wasm';
import { LINE_WASM_BASE64 } from './line-wasm-binary';
import { kernelsOf, type Kernels } from './wasm-kernels';

/** The exports of wasm/line-kernels.ts (pointers are byte offsets into `memory`). */
export interface LineKernelExports {
  memory: WebAssembly.Memory;
  filtfiltLine(data: number, out: number, nTraces: number, n: number, sos: number, nSec: number, zi: number, edge: number, ext: number, z: number): void;
  transposeLine(data: number, out: number, nTraces: number, nSamples: number): void;
  windowMedians(bySample: number, nTraces: number, a: number, m: number, nSamples: number, first: boolean, spread: number, lo: number, hi: number, mid: number, side: number, bg: number, kth: number, flags: number): void;
  subtractBackground(data: number, out: number, nTraces: number, nSamples: number, bg: number, centres: number, which: number, nC: number): void;
  fkTraces(data: number, nTraces: number, nSamples: number, nt: number, nx: number, spec: number, plan: number, a: number, b: number, c: number, power: number): void;
  fkColumns(spec: number, nTraces: number, nx: number, nw: number, lo: number, hi: number, plan: number, a: number, b: number, c: number): void;
  rotateBins(spec: number, nx: number, nw: number, m0: number, m1: number, c: number, s: number): void;
  stoltInterpolate(spec: number, nx: number, nw: number, nb: number, lo: number, hi: number, tu: number, tjac: number, tsin: number, tth: number, tskip: number, taps: number, fRe: number, fIm: number, val: number, sinT: number, thT: number): number;
  stoltAcross(val: number, sinT: number, thT: number, nx: number, nTraces: number, m0: number, m1: number, s1: number, sMax: number, th1: number, thMax: number, scale: number, plan: number, a: number, b: number, c: number, hc: number): void;
  envelopeLine(data: number, out: number, nTraces: number, nSamples: number, n: number, plan: number, a: number, b: number, c: number, d: number): void;
  dewowLine(data: number, out: number, nTraces: number, n: number, h: number, cum: number): void;
  subtractMeanTrace(data: number, out: number, nTraces: number, n: number, sum: number): void;
  resampleLine(data: number, out: number, nTraces: number, nSamples: number, src: number, tap: number, wt: number, k0: number): void;
  pickLine(env: number, data: number, nTraces: number, n: number, from: number, to: number, pick: number, threshold: number, span: number, h: number, out: number): void;
  shiftLine(src: number, dst: number, nTraces: number, n: number, whole: number, w: number, exact: number): void;
  stoltTime(plain: number, plainFrom: number, nm: number, nt: number, nTraces: number, nSamples: number, nodes: number, nNodes: number, plan: number, full: number, b: number, c: number, acc: number, out: number): void;
}

/** Bytes of an FFT plan of size n in the kernels' memory (`writeFftPlan`): the plan, then its twiddles. */
export function fftPlanBytes(n: number): number {
  const t = twiddleImage(n);
  return 16 * Math.ceil((8 + 12 * t.radices.length) / 16) + 8 * t.image.length;
}

/** The line kernels (wasm/line-kernels.ts). */
export type LineKernels = Kernels<LineKernelExports>;

/** This thread's line kernels; null where WebAssembly SIMD is not available (callers run their JavaScript). */
// the dip taper's cosine is JavaScript's, so that the kernels' numbers are the JavaScript path's
export const lineKernels = kernelsOf<LineKernelExports>(LINE_WASM_BASE64, { Math: { cos: Math.cos } });

/** Writes the plan of an FFT of size n for the kernels' `runPlan` at `at` (`fftPlanBytes(n)` bytes). */
export function writeFftPlan(kernels: LineKernels, n: number, at: number): void {
  const t = twiddleImage(n);
  const tw = at + 16 * Math.ceil((8 + 12 * t.radices.length) / 16);
  const plan = kernels.i32(at, 2 + 3 * t.radices.length);
  plan[0] = n;
  plan[1] = t.radices.length;
  t.radices.forEach((p, st) => plan.set([p, tw + (t.fwd[st] as number), tw + (t.inv[st] as number)], 2 + 3 * st));
  kernels.f64(tw, t.image.length).set(t.image);
}
