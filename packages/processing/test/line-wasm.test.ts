// The line kernels (wasm/line-kernels.ts) against the JavaScript they replace, on random lines: the same
// bits. References outside the project: scipy.signal.sosfiltfilt (committed fixture of
// data/make_fixtures.py) and the median by its definition (the middle of the sorted window, the mean of
// the two middle values for an even count).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { bits, kernelsOffAndOn } from '@lamina/test-utils';
import { butterworthSos } from '../src/butterworth';
import { zeroPhaseJs, zeroPhaseWasm } from '../src/bandpass';
import { backgroundRemoval, movingMedianJs, movingMedianWasm } from '../src/background';
import { dewow } from '../src/dewow';
import { lineKernels } from '../src/line-wasm';
import { useKernels } from '../src/wasm-kernels';
import { stoltKernel, type StoltKernelOptions } from '../src/stolt';
import { envelope } from '../src/envelope';
import { bistaticResample, passThroughBack } from '../src/fk';
import { pickFirstArrival, pickLineWasm, shiftLineWasm, shiftTrace, timeZero, type TimeZeroPick } from '../src/time-zero';
import { addNoise, addRicker, makeLine } from './synth';
import { rng } from './synth';

const kernels = lineKernels();
if (!kernels) throw new Error('line kernels: WebAssembly SIMD expected on Node 20');
const K = kernels;

/** Byte-wise equality (tells -0 from 0 and keeps NaN payloads). */
function sameBits(a: Float32Array, b: Float32Array): boolean {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
}

function randomLine(seed: number, n: number, opts: { zeros?: number; negZeros?: number; nans?: number; levels?: number } = {}): Float32Array {
  const r = rng(seed);
  const d = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    const u = r.next();
    let x = 1000 * r.normal() * Math.exp(3 * r.normal());
    if (opts.levels) x = Math.round(r.normal() * opts.levels);
    if (u < (opts.zeros ?? 0)) x = 0;
    else if (u < (opts.zeros ?? 0) + (opts.negZeros ?? 0)) x = -0;
    else if (u < (opts.zeros ?? 0) + (opts.negZeros ?? 0) + (opts.nans ?? 0)) x = NaN;
    d[i] = x;
  }
  return d;
}

describe('filtfiltLine (zero-phase Butterworth of a line)', () => {
  const cases = [
    { nTraces: 7, nSamples: 301, order: 4, wn: [0.05, 0.4] as [number, number] },
    { nTraces: 10, nSamples: 64, order: 2, wn: [0.1, 0.3] as [number, number] },
    { nTraces: 3, nSamples: 5, order: 4, wn: [0.2, 0.6] as [number, number] },
    { nTraces: 1, nSamples: 2, order: 3, wn: [0.2, 0.6] as [number, number] },
  ];
  for (const [i, c] of cases.entries()) {
    it(`the JavaScript loop's bits: ${c.nTraces} traces x ${c.nSamples} samples, order ${c.order}`, () => {
      const sos = butterworthSos(c.order, c.wn, 'bandpass');
      const data = randomLine(11 + i, c.nTraces * c.nSamples);
      const js = zeroPhaseJs(sos, data, c.nTraces, c.nSamples, new Float32Array(data.length));
      const wasm = zeroPhaseWasm(K, sos, data, c.nTraces, c.nSamples, new Float32Array(data.length));
      expect(sameBits(wasm, js)).toBe(true);
      // in place
      const copy = data.slice();
      zeroPhaseWasm(K, sos, copy, c.nTraces, c.nSamples, copy);
      expect(sameBits(copy, js)).toBe(true);
    });
  }

  it('scipy.signal.sosfiltfilt on the fixture signals (1e-7 of the peak, float32 output)', () => {
    const fx = JSON.parse(readFileSync(new URL('./data/scipy-signal.json', import.meta.url), 'utf8')) as {
      signals: number[][];
      filters: { kind: 'bandpass' | 'lowpass' | 'highpass'; order: number; wn: number[]; sosfiltfilt: number[][] }[];
    };
    for (const f of fx.filters) {
      const sos = butterworthSos(f.order, f.kind === 'bandpass' ? [f.wn[0]!, f.wn[1]!] : f.wn[0]!, f.kind);
      f.sosfiltfilt.forEach((ref, i) => {
        const x = Float32Array.from(fx.signals[i]!);
        const y = zeroPhaseWasm(K, sos, x, 1, x.length, new Float32Array(x.length));
        const peak = Math.max(...ref.map(Math.abs));
        // float32 output: half an ulp of float32 of the peak on top of the float64 agreement
        for (let k = 0; k < ref.length; k++) expect(Math.abs(y[k]! - ref[k]!)).toBeLessThan(1e-7 * peak + 6e-8 * Math.abs(ref[k]!));
      });
    }
  });
});

describe('movingMedian in the kernels (windowMedians, subtractBackground)', () => {
  const centresOf = (nTraces: number, win: number) => {
    const step = Math.max(1, Math.floor(win / 4));
    const c: number[] = [];
    for (let t = 0; t < nTraces; t += step) c.push(t);
    if (c[c.length - 1] !== nTraces - 1) c.push(nTraces - 1);
    return c;
  };
  const cases = [
    { name: 'continuous values, odd window', nTraces: 97, nSamples: 130, win: 21, opts: {} },
    { name: 'continuous values, even window', nTraces: 120, nSamples: 90, win: 40, opts: {} },
    { name: 'few levels (ties), even window', nTraces: 64, nSamples: 70, win: 16, opts: { levels: 2 } },
    { name: 'zeros and negative zeros', nTraces: 80, nSamples: 60, win: 12, opts: { zeros: 0.3, negZeros: 0.3 } },
    { name: 'NaN in some windows', nTraces: 50, nSamples: 40, win: 9, opts: { nans: 0.01, zeros: 0.1 } },
    { name: 'window of the whole line', nTraces: 9, nSamples: 33, win: 9, opts: { levels: 3, negZeros: 0.2 } },
  ];
  for (const [i, c] of cases.entries()) {
    it(`the JavaScript selection's bits: ${c.name}`, () => {
      const data = randomLine(101 + i, c.nTraces * c.nSamples, c.opts);
      const centres = centresOf(c.nTraces, c.win);
      const js = new Float32Array(data.length);
      movingMedianJs(data, c.nTraces, c.nSamples, c.win, centres, js);
      const wasm = new Float32Array(data.length);
      movingMedianWasm(K, data, c.nTraces, c.nSamples, c.win, centres, wasm);
      expect(sameBits(wasm, js)).toBe(true);
    });
  }

  it('at a centre trace the background is the median by definition (sorted window)', () => {
    const nTraces = 101;
    const nSamples = 50;
    for (const win of [20, 21]) {
      const data = randomLine(7 + win, nTraces * nSamples);
      const centres = centresOf(nTraces, win);
      const out = new Float32Array(data.length);
      movingMedianWasm(K, data, nTraces, nSamples, win, centres, out);
      for (const c of centres) {
        const a = Math.max(0, Math.min(nTraces - win, c - Math.floor(win / 2)));
        for (let s = 0; s < nSamples; s++) {
          const w = Array.from({ length: win }, (_, j) => data[(a + j) * nSamples + s]!).sort((x, y) => x - y);
          const med = win % 2 ? w[win >> 1]! : 0.5 * (w[(win >> 1) - 1]! + w[win >> 1]!);
          expect(out[c * nSamples + s]).toBe(Math.fround(data[c * nSamples + s]! - Math.fround(med)));
        }
      }
    }
  });
});

describe('Stolt maps in the kernels (fkTraces, fkColumns, rotateBins, stoltInterpolate, stoltAcross, stoltTime)', () => {
  const run = (kernelsOn: boolean, data: Float32Array, nTraces: number, nSamples: number, dxM: number, o: StoltKernelOptions) => {
    useKernels(kernelsOn);
    try {
      return stoltKernel(data, nTraces, nSamples, 0.1, dxM, 4, 0.1, o);
    } finally {
      useKernels(true);
    }
  };
  const cases: { name: string; nTraces: number; nSamples: number; dxM: number; o: StoltKernelOptions }[] = [
    { name: 'migration, one dip limit', nTraces: 40, nSamples: 96, dxM: 0.05, o: {} },
    { name: 'migration, aperture nodes, half-integral', nTraces: 37, nSamples: 128, dxM: 0.04, o: { apertureM: 0.6, halfIntegral: true, energyTolerance: 1e-5 } },
    { name: 'modelling, aperture nodes, half-derivative', nTraces: 33, nSamples: 80, dxM: 0.05, o: { inverse: true, apertureM: 0.5, halfIntegral: true } },
    { name: 'modelling, one limit, narrow band', nTraces: 20, nSamples: 64, dxM: 0.1, o: { inverse: true, maxAngleDeg: 40, taper: 0.5, energyTolerance: 0.2 } },
    { name: 'odd traces, wide taper', nTraces: 25, nSamples: 75, dxM: 0.03, o: { maxAngleDeg: 75, taper: 1, apertureM: 1 } },
  ];
  for (const [i, c] of cases.entries()) {
    it(`the JavaScript path's bits: ${c.name}`, () => {
      // twice each, and a second line of the same geometry: the table kept from line to line
      for (let rep = 0; rep < 2; rep++) {
        const data = randomLine(300 + 10 * i + rep, c.nTraces * c.nSamples);
        const js = run(false, data, c.nTraces, c.nSamples, c.dxM, c.o);
        const wasm = run(true, data, c.nTraces, c.nSamples, c.dxM, c.o);
        expect(sameBits(wasm, js)).toBe(true);
        expect(js.some((x) => x !== 0)).toBe(true);
      }
    });
  }

  it('a silent line maps to zeros', () => {
    const data = new Float32Array(20 * 64);
    expect(sameBits(run(true, data, 20, 64, 0.05, {}), run(false, data, 20, 64, 0.05, {}))).toBe(true);
  });
});

/** `f` with the kernels off (the JavaScript path) and on. */
const bothPaths = <T>(f: () => T): [T, T] => kernelsOffAndOn(useKernels, f);

describe('envelopeLine (Hilbert envelopes of a line)', () => {
  for (const [nTraces, nSamples, padTo] of [[9, 100, undefined], [8, 64, 256], [1, 33, undefined]] as const) {
    it(`the JavaScript path's bits: ${nTraces} traces x ${nSamples} samples${padTo ? `, padded to ${padTo}` : ''}`, () => {
      const line = makeLine(nTraces, nSamples, 0.1, 0.05);
      line.data.set(randomLine(500 + nTraces, nTraces * nSamples));
      const [js, wasm] = bothPaths(() => envelope(line, { padTo }).data);
      expect(sameBits(wasm, js)).toBe(true);
    });
  }

  it('scipy.signal.hilbert on the fixture signals (abs of the analytic signal, 1e-6 of the peak)', () => {
    const fx = JSON.parse(readFileSync(new URL('./data/scipy-signal.json', import.meta.url), 'utf8')) as { signals: number[][]; hilbert: { N: number; envelope: number[] }[] };
    fx.hilbert.forEach((ref, i) => {
      const x = Float32Array.from(fx.signals[i]!);
      const line = { ...makeLine(1, x.length, 0.1, 0.05), data: x };
      const env = envelope(line, { padTo: ref.N }).data;
      const peak = Math.max(...ref.envelope);
      for (let k = 0; k < x.length; k++) expect(Math.abs(env[k]! - ref.envelope[k]!)).toBeLessThan(1e-6 * peak);
    });
  });
});

describe('shiftLine (time-zero shifts of a line)', () => {
  it('shiftTrace\'s bits for whole, fractional, negative and far shifts', () => {
    const n = 50;
    const shifts = Float64Array.of(0, 3, -2, 0.25, -0.75, 7.5, -13.125, 49.5, -60, 1e6, 0.999999, 2.5e-7);
    const data = randomLine(77, shifts.length * n);
    const wasm = new Float32Array(data.length);
    shiftLineWasm(K, data, wasm, shifts.length, n, shifts);
    const js = new Float32Array(data.length);
    shifts.forEach((sh, t) => shiftTrace(data.subarray(t * n, (t + 1) * n), sh, js.subarray(t * n, (t + 1) * n)));
    expect(sameBits(wasm, js)).toBe(true);
  });

  it('timeZero gives the same line, picks and shifts with the kernels', () => {
    const line = makeLine(61, 200, 0.1, 0.05);
    for (let t = 0; t < line.nTraces; t++) addRicker(line, t, 5 + 0.3 * Math.sin(t / 7), 1, 400);
    addNoise(line, 0.02, 9);
    const [js, wasm] = bothPaths(() => timeZero(line, { frequencyMHz: 400, separationM: 0.16 }));
    expect(sameBits(wasm.line.data, js.line.data)).toBe(true);
    expect([...wasm.picksNs]).toEqual([...js.picksNs]);
    expect([...wasm.shiftsNs]).toEqual([...js.shiftsNs]);
  });
});

describe('pickLine (time-zero\'s first-arrival picks)', () => {
  // envelopes with ties (integer levels), zeros of both signs, NaN, infinities, negative values (any
  // array, not only an envelope), dead traces; traces with ties and NaN
  const nTraces = 14;
  const nSamples = 90;
  const env = Float64Array.from(randomLine(31, nTraces * nSamples, { levels: 4, zeros: 0.2, negZeros: 0.05, nans: 0.01 }), (v) => (v < -3 ? -v : v));
  env.fill(0, 0, nSamples);
  env.fill(NaN, nSamples, 2 * nSamples);
  env[2 * nSamples + 40] = Infinity;
  env.fill(-0, 3 * nSamples, 4 * nSamples);
  env.fill(2, 4 * nSamples, 5 * nSamples);
  for (let i = 0; i < nSamples; i++) env[5 * nSamples + i] = i === nSamples - 1 ? 9 : 1;
  // a peak whose neighbours lie at exactly half of it
  env.fill(0, 6 * nSamples, 7 * nSamples).set([1, 2, 1, 1], 6 * nSamples + 40);
  const data = randomLine(32, nTraces * nSamples, { levels: 3, zeros: 0.1, negZeros: 0.1, nans: 0.01 });
  // firstPeak on a window of zeros (+0, then -0) after the crossing, signal just before it: a parabola
  // with no sign to compare
  for (const [t, zero] of [[7, 0], [8, -0]] as const) {
    env.fill(0, t * nSamples, (t + 1) * nSamples).fill(1, t * nSamples + 40, t * nSamples + 70);
    data.fill(zero, t * nSamples, (t + 1) * nSamples).set([5, 5], t * nSamples + 38);
  }
  // firstPeak beside NaN: a parabola of NaN
  env.fill(0, 9 * nSamples, 10 * nSamples).fill(1, 9 * nSamples + 40, 9 * nSamples + 70);
  data.fill(0, 9 * nSamples, 10 * nSamples).set([7, NaN], 9 * nSamples + 42);
  const picks: TimeZeroPick[] = ['onset', 'firstPeak', 'peak'];
  const settings = [
    { threshold: 0.25, periodSamples: 25 },
    { threshold: 0.5, periodSamples: 7.5, from: 10, to: 50 },
    { threshold: 1.5, periodSamples: 0.3, from: -5, to: 1e9 },
    { threshold: 0.9, periodSamples: 1e6, from: nSamples - 3 },
    { threshold: 0.25, periodSamples: 25, from: 30, to: 30 },
    { threshold: 0.25, periodSamples: 25, from: 60, to: 20 },
    { threshold: 0.25, periodSamples: 4.5, from: NaN },
    { threshold: 0, periodSamples: 12, to: nSamples - 1 },
    { threshold: NaN, periodSamples: 12 },
  ];
  for (const pick of picks) {
    for (const [i, o] of settings.entries()) {
      it(`pickFirstArrival's bits: ${pick}, setting ${i}`, () => {
        const [d, e] = K.layout(4 * data.length, 8 * env.length);
        K.f32(d, data.length).set(data);
        K.f64(e, env.length).set(env);
        const wasm = pickLineWasm(K, { data: d, env: e }, nTraces, nSamples, { ...o, pick });
        const js = Array.from({ length: nTraces }, (_, t) =>
          pickFirstArrival(env.subarray(t * nSamples, (t + 1) * nSamples), { ...o, pick, trace: data.subarray(t * nSamples, (t + 1) * nSamples) }),
        );
        expect([...wasm].map(bits)).toEqual(js.map(bits));
      });
    }
  }

  for (const pick of picks) {
    it(`timeZero gives the same line, picks and shifts with the kernels: ${pick}, a search window`, () => {
      const line = makeLine(40, 200, 0.1, 0.05);
      for (let t = 0; t < line.nTraces; t++) addRicker(line, t, 5 + 0.3 * Math.sin(t / 7), 1, 400);
      addNoise(line, 0.02, 19);
      const [js, wasm] = bothPaths(() => timeZero(line, { frequencyMHz: 400, pick, searchNs: [1, 15] }));
      expect(sameBits(wasm.line.data, js.line.data)).toBe(true);
      expect([...wasm.picksNs].map(bits)).toEqual([...js.picksNs].map(bits));
      expect([...wasm.shiftsNs].map(bits)).toEqual([...js.shiftsNs].map(bits));
    });
  }
});

describe('resampleLine (bistatic to zero-offset time and back)', () => {
  for (const [name, layers, sep] of [
    ['one layer', [{ topM: 0, velocityMPerNs: 0.1 }], 0.16],
    ['two layers, wide separation', [{ topM: 0, velocityMPerNs: 0.12 }, { topM: 0.5, velocityMPerNs: 0.08 }], 0.6],
  ] as const) {
    it(`the JavaScript path's bits: ${name}`, () => {
      const nTraces = 7;
      const nSamples = 120;
      const data = randomLine(900, nTraces * nSamples);
      const [js, wasm] = bothPaths(() => {
        const zo = new Float64Array(nTraces * nSamples);
        bistaticResample(data, nTraces, nSamples, 0.1, 3, layers, sep, true, zo);
        const back = data.slice();
        passThroughBack(Float32Array.from(zo), data, back, nTraces, nSamples, 0.1, 3, layers, sep);
        return { zo, back };
      });
      expect(Buffer.from(wasm.zo.buffer).equals(Buffer.from(js.zo.buffer))).toBe(true);
      expect(sameBits(wasm.back, js.back)).toBe(true);
    });
  }
});

describe('dewowLine and subtractMeanTrace (running-mean dewow, mean background)', () => {
  for (const [nTraces, nSamples, windowNs] of [[9, 200, 2.5], [4, 7, 2.5], [3, 30, 0.1], [1, 1, 1]] as const) {
    it(`the JavaScript path's bits: ${nTraces} traces x ${nSamples} samples, window ${windowNs} ns`, () => {
      const line = makeLine(nTraces, nSamples, 0.1, 0.05);
      line.data.set(randomLine(700 + nSamples, nTraces * nSamples, { zeros: 0.1, negZeros: 0.1 }));
      const [js, wasm] = bothPaths(() => ({ dewow: dewow(line, { windowNs }).data, mean: backgroundRemoval(line, { method: 'mean' }).data }));
      expect(sameBits(wasm.dewow, js.dewow)).toBe(true);
      expect(sameBits(wasm.mean, js.mean)).toBe(true);
    });
  }
});

describe('the committed modules', () => {
  it('are the builds of wasm/*-kernels.ts (scripts/build-wasm.mjs --check)', () => {
    const root = join(dirname(fileURLToPath(import.meta.url)), '../../..');
    const r = spawnSync(process.execPath, [join(root, 'scripts/build-wasm.mjs'), '--check'], { encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
  });
});
