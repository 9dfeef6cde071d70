// The mixed-radix FFTs (JavaScript and WebAssembly) against numpy.fft (Debian /usr/bin/python3, python3-numpy).
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { MixedRadixFFT, fftOfSize, nextFastSize, stagedTransform } from '../src/fft';
import { WasmFFT, wasmFftAvailable } from '../src/fft-wasm';

/** numpy.fft.fft of each interleaved complex array, in one python run. */
const numpyFfts = (xs: Float64Array[]): number[][] => {
  const py = 'import numpy as np,json,sys\nout=[]\nfor a in json.load(sys.stdin):\n  a=np.array(a); F=np.fft.fft(a[0::2]+1j*a[1::2]); out.append(np.column_stack([F.real,F.imag]).ravel().tolist())\nprint(json.dumps(out))';
  const r = spawnSync('/usr/bin/python3', ['-c', py], { input: JSON.stringify(xs.map((x) => [...x])), encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout) as number[][];
};

describe.each([
  ['MixedRadixFFT', (n: number) => new MixedRadixFFT(n)],
  ['WasmFFT', (n: number) => new WasmFFT(n)],
] as const)('%s', (_name, make) => {
  it('agrees with numpy.fft.fft within 1e-12 of the peak for sizes made of 2, 3, 4, 5; inverse and real transforms', () => {
    const sizes = [2, 3, 5, 6, 12, 15, 45, 100, 375, 576, 1280, 1000, 1024];
    const input = (n: number) => new Float64Array(2 * n).map((_, i) => Math.sin(1.7 * i + 0.3 * i * i));
    const realInput = (n: number) => Float64Array.from({ length: 2 * n }, (_, i) => (i % 2 ? 0 : Math.sin(0.85 * i + 0.075 * i * i)));
    const refs = numpyFfts([...sizes.map(input), ...sizes.map(realInput)]);
    sizes.forEach((n, c) => {
      const x = input(n);
      const f = make(n);
      const out = new Float64Array(2 * n);
      f.transform(out, x);
      const ref = refs[c] as number[];
      const peak = Math.max(...ref.map(Math.abs));
      for (let i = 0; i < 2 * n; i++) expect(Math.abs((out[i] as number) - (ref[i] as number))).toBeLessThan(1e-12 * peak);
      const back = new Float64Array(2 * n);
      f.inverseTransform(back, out);
      for (let i = 0; i < 2 * n; i++) expect(Math.abs((back[i] as number) - (x[i] as number))).toBeLessThan(1e-12);
      const re = realInput(n).filter((_, i) => i % 2 === 0);
      const ro = new Float64Array(2 * n);
      f.realTransform(ro, re);
      const rref = refs[sizes.length + c] as number[];
      const rpeak = Math.max(...rref.map(Math.abs));
      for (let i = 0; i <= n; i++) expect(Math.abs((ro[i] as number) - (rref[i] as number))).toBeLessThan(1e-12 * rpeak);
    });
  });

  it('the unscaled inverse is n times the inverse; the input array is left as it was', () => {
    const f = make(1280);
    const x = new Float64Array(2 * 1280).map((_, i) => Math.cos(0.37 * i * i));
    const copy = x.slice();
    const a = new Float64Array(2 * 1280);
    const b = new Float64Array(2 * 1280);
    f.inverseTransform(a, x);
    f.inverseUnscaled(b, x);
    for (let i = 0; i < a.length; i++) expect(Math.abs((b[i] as number) - 1280 * (a[i] as number))).toBeLessThan(1e-12 * 1280);
    expect(x).toEqual(copy);
  });

  it('a staged run gives the transform (and the unscaled inverse) of its input and leaves the input as it was', () => {
    for (const n of [600, 1280]) {
      const f = make(n);
      const st = stagedTransform(f);
      const x = new Float64Array(2 * n).map((_, i) => Math.sin(0.61 * i + 0.05 * i * i));
      const fwd = new Float64Array(2 * n);
      const inv = new Float64Array(2 * n);
      f.transform(fwd, x);
      f.inverseUnscaled(inv, x);
      st.input.set(x);
      expect(Array.from(st.run(false))).toEqual(Array.from(fwd));
      expect(st.input).toEqual(x);
      expect(Array.from(st.run(true))).toEqual(Array.from(inv));
      expect(st.input).toEqual(x);
    }
  });

  it('nextFastSize: the smallest size >= n with prime factors 2, 3, 5 only', () => {
    expect([2, 7, 481, 568, 577, 1024, 1281].map(nextFastSize)).toEqual([2, 8, 486, 576, 600, 1024, 1296]);
    expect(() => make(14)).toThrow(/prime factor/);
  });
});

describe('fftOfSize', () => {
  it('takes the WebAssembly transform where SIMD runs (Node 20 here), for powers of two too', () => {
    expect(wasmFftAvailable()).toBe(true);
    expect(fftOfSize(1024)).toBeInstanceOf(WasmFFT);
    expect(fftOfSize(1280)).toBeInstanceOf(WasmFFT);
  });
});
