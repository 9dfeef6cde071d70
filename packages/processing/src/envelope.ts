import type { RadarLine } from '@lamina/radar-data';
import { fftOfSize, nextPow2, stagedTransform, type Staged } from './fft';
import { WasmFFT } from './fft-wasm';
import { withData } from './line-util';
import { fftPlanBytes, lineKernels, writeFftPlan, type LineKernels } from './line-wasm';

/** Scratch buffers for analytic signals of one padded length (reused across traces). */
export interface HilbertWorkspace {
  n: number;
  real: Float64Array;
  spec: Float64Array;
  analytic: Float64Array;
}

export function hilbertWorkspace(nSamples: number, padTo?: number): HilbertWorkspace {
  const n = padTo ?? nextPow2(nSamples);
  if (n < nSamples || (n & (n - 1)) !== 0) {
    throw new Error(`hilbert: padded length must be a power of two >= ${nSamples}, found ${n}`);
  }
  return { n, real: new Float64Array(n), spec: new Float64Array(2 * n), analytic: new Float64Array(2 * n) };
}

/**
 * Analytic signal of `x` zero-padded to `ws.n` (a power of two), left in `ws.analytic` as interleaved
 * re/im of length 2 * ws.n. Same definition as `scipy.signal.hilbert(x, N=ws.n)`: spectrum kept at 0 and
 * N/2, doubled for 0 < k < N/2, zeroed above.
 */
export function analyticSignal(x: ArrayLike<number>, ws: HilbertWorkspace): Float64Array {
  const { n, real, spec, analytic } = ws;
  const m = Math.min(x.length, n);
  for (let i = 0; i < m; i++) real[i] = x[i] as number;
  real.fill(0, m);
  fftOfSize(n).realTransform(spec, real);
  // realTransform fills bins 0..N/2; build the one-sided spectrum there and zero the rest.
  const half = n / 2;
  for (let k = 1; k < half; k++) {
    spec[2 * k] = (spec[2 * k] as number) * 2;
    spec[2 * k + 1] = (spec[2 * k + 1] as number) * 2;
  }
  spec.fill(0, 2 * half + 2);
  fftOfSize(n).inverseTransform(analytic, spec);
  return analytic;
}

/**
 * Hilbert envelope |analytic(x)| of one trace, the first `x.length` samples of
 * `abs(scipy.signal.hilbert(x, N))` with N = `options.padTo` (default: next power of two >= length).
 */
export function hilbertEnvelope(
  x: ArrayLike<number>,
  options: { padTo?: number; workspace?: HilbertWorkspace } = {},
  out?: Float32Array | Float64Array,
): Float32Array | Float64Array {
  const ws = options.workspace ?? hilbertWorkspace(x.length, options.padTo);
  const res = out ?? new Float64Array(x.length);
  const a = analyticSignal(x, ws);
  for (let i = 0; i < x.length; i++) {
    const re = a[2 * i] as number;
    const im = a[2 * i + 1] as number;
    res[i] = Math.sqrt(re * re + im * im);
  }
  return res;
}

/**
 * Hilbert envelopes of two traces at once (`b` may be undefined), equal to `hilbertEnvelope` of each to
 * float rounding: the Hilbert transforms of real a and b are real, so one complex transform of a + ib,
 * times -i sgn(k) (zero at 0 and N/2, scipy's convention), and one inverse give H(a) + i H(b); the
 * envelope is sqrt(x^2 + H(x)^2). Two complex FFTs per pair of traces instead of a real and a complex
 * one per trace. `ws` from `hilbertWorkspace`.
 */
export function hilbertEnvelopePair(
  a: ArrayLike<number>,
  b: ArrayLike<number> | undefined,
  ws: HilbertWorkspace,
  outA: Float32Array | Float64Array,
  outB?: Float32Array | Float64Array,
): void {
  const { n } = ws;
  const st = stagedOf(ws);
  const z = st.input;
  const ma = Math.min(a.length, n);
  const mb = b ? Math.min(b.length, n) : 0;
  // a + ib, zero-padded (each slot written once: the input is the module's, not ours to clear first)
  if (b && ma === mb) {
    for (let i = 0; i < ma; i++) {
      z[2 * i] = a[i] as number;
      z[2 * i + 1] = b[i] as number;
    }
  } else {
    z.fill(0, 0, 2 * Math.max(ma, mb));
    for (let i = 0; i < ma; i++) z[2 * i] = a[i] as number;
    if (b) for (let i = 0; i < mb; i++) z[2 * i + 1] = b[i] as number;
  }
  z.fill(0, 2 * Math.max(ma, mb));
  const f = fftOfSize(n);
  if (f instanceof WasmFFT && a.length <= n && (!b || b.length === a.length)) {
    // the same steps in the module (`WasmFFT.hilbertEnvelopes`)
    const env = f.hilbertEnvelopes(a.length);
    for (let i = 0; i < a.length; i++) outA[i] = env[2 * i] as number;
    if (b && outB) for (let i = 0; i < b.length; i++) outB[i] = env[2 * i + 1] as number;
    return;
  }
  const spec = st.run(false);
  // the spectrum times -i sgn(k) into the input (which may be the same array: each bin is read before it is written)
  const half = n / 2;
  z[0] = 0;
  z[1] = 0;
  for (let k = 1; k < half; k++) {
    // -i (re + i im) = im - i re
    const re = spec[2 * k] as number;
    const im = spec[2 * k + 1] as number;
    z[2 * k] = im;
    z[2 * k + 1] = -re;
  }
  z[2 * half] = 0;
  z[2 * half + 1] = 0;
  for (let k = half + 1; k < n; k++) {
    // +i (re + i im)
    const re = spec[2 * k] as number;
    const im = spec[2 * k + 1] as number;
    z[2 * k] = -im;
    z[2 * k + 1] = re;
  }
  const h2 = st.run(true);
  const s = 1 / n;
  for (let i = 0; i < a.length; i++) {
    const x = a[i] as number;
    const h = i < n ? (h2[2 * i] as number) * s : 0;
    outA[i] = Math.sqrt(x * x + h * h);
  }
  if (b && outB) {
    for (let i = 0; i < b.length; i++) {
      const x = b[i] as number;
      const h = i < n ? (h2[2 * i + 1] as number) * s : 0;
      outB[i] = Math.sqrt(x * x + h * h);
    }
  }
}

const staged = new WeakMap<HilbertWorkspace, Staged>();
/** The workspace's transform on its own input array (`stagedTransform`), made once per workspace. */
function stagedOf(ws: HilbertWorkspace): Staged {
  let st = staged.get(ws);
  if (!st) {
    st = stagedTransform(fftOfSize(ws.n));
    staged.set(ws, st);
  }
  return st;
}

/**
 * Envelope of every trace of a line. Traces are zero-padded to the next power of two of `nSamples`
 * (at least) before the FFT, two per transform (`hilbertEnvelopePair`, equal to `hilbertEnvelope` to
 * float rounding); `out` may be `line.data`.
 */
export function envelope(line: RadarLine, options: { padTo?: number } = {}, out?: Float32Array): RadarLine {
  const { nSamples, nTraces } = line;
  const res = out ?? new Float32Array(line.data.length);
  const ws = hilbertWorkspace(nSamples, options.padTo);
  const kernels = lineKernels();
  if (kernels) {
    res.set(lineEnvelopes(kernels, line.data, nTraces, nSamples, ws.n));
    return withData(line, res);
  }
  const ea = new Float64Array(nSamples);
  const eb = new Float64Array(nSamples);
  // two traces per transform pair (`hilbertEnvelopePair`); `out` may be `line.data`: each pair is read before it is written
  for (let t = 0; t < nTraces; t += 2) {
    const two = t + 1 < nTraces;
    const a = line.data.subarray(t * nSamples, (t + 1) * nSamples);
    const b = two ? line.data.subarray((t + 1) * nSamples, (t + 2) * nSamples) : undefined;
    hilbertEnvelopePair(a, b, ws, ea, eb);
    res.set(ea, t * nSamples);
    if (two) res.set(eb, (t + 1) * nSamples);
  }
  return withData(line, res);
}

/**
 * The envelopes of every trace of a line (float64, trace-major) in the line kernels (`envelopeLine`): the
 * steps of `hilbertEnvelopePair` on the traces two by two, padded to n (>= nSamples, a power of two), so
 * the same numbers. A view of the kernels' memory, valid until their next layout.
 */
export function lineEnvelopes(kernels: LineKernels, data: Float32Array, nTraces: number, nSamples: number, n: number): Float64Array {
  return kernels.f64(lineEnvelopesAt(kernels, data, nTraces, nSamples, n).env, nTraces * nSamples);
}

/**
 * `lineEnvelopes`, left in the kernels' memory for a kernel that reads them next: the offsets of the line
 * (float32, as copied in) and of its envelopes (float64), valid until the next layout (`append` keeps them).
 */
export function lineEnvelopesAt(kernels: LineKernels, data: Float32Array, nTraces: number, nSamples: number, n: number): { data: number; env: number } {
  const [d, o, plan, a, b, c, w] = kernels.layout(4 * nTraces * nSamples, 8 * nTraces * nSamples, fftPlanBytes(n), 16 * n, 16 * n, 16 * n, 16 * n);
  kernels.f32(d, nTraces * nSamples).set(data.subarray(0, nTraces * nSamples));
  writeFftPlan(kernels, n, plan);
  kernels.k.envelopeLine(d, o, nTraces, nSamples, n, plan, a, b, c, w);
  return { data: d, env: o };
}
