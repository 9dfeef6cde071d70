// Checks against scipy.signal (Debian python3-scipy) on committed fixtures made by data/make_fixtures.py.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { butterworthSos, filtfiltWorkspace, hilbertEnvelope, hilbertEnvelopePair, hilbertWorkspace, sosfiltfilt, sosfiltfiltPadlen, sosfiltfiltPair, type FilterKind } from '../src';

interface Fixture {
  origin: string;
  dtNs: number;
  signals: number[][];
  hilbert: { N: number; envelope: number[] }[];
  filters: {
    kind: FilterKind;
    order: number;
    cornersMHz: number[];
    wn: number[];
    padlen: number;
    freqRadPerSample: number[];
    magnitude: number[];
    sosfiltfilt: number[][];
  }[];
}
const fx = JSON.parse(readFileSync(new URL('./data/scipy-signal.json', import.meta.url), 'utf8')) as Fixture;

function maxAbs(a: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] as number));
  return m;
}
function maxDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs((a[i] as number) - (b[i] as number)));
  return m;
}
/** |H(e^{iw})| of a second-order-section cascade. */
function sosMagnitude(sos: Float64Array, w: number): number {
  let mag = 1;
  for (let s = 0; s < sos.length / 6; s++) {
    const c = (k: number) => sos[s * 6 + k] as number;
    const num = [c(0) + c(1) * Math.cos(w) + c(2) * Math.cos(2 * w), -c(1) * Math.sin(w) - c(2) * Math.sin(2 * w)] as const;
    const den = [c(3) + c(4) * Math.cos(w) + c(5) * Math.cos(2 * w), -c(4) * Math.sin(w) - c(5) * Math.sin(2 * w)] as const;
    mag *= Math.hypot(num[0], num[1]) / Math.hypot(den[0], den[1]);
  }
  return mag;
}

describe('Hilbert envelope vs scipy.signal.hilbert', () => {
  fx.signals.forEach((x, i) => {
    const ref = fx.hilbert[i]!;
    it(`length ${x.length} padded to ${ref.N}`, () => {
      const env = hilbertEnvelope(Float32Array.from(x), { padTo: ref.N });
      // Tolerance 1e-8 of the peak: both sides compute in float64; the fixture keeps 10 significant digits.
      expect(maxDiff(env, ref.envelope) / maxAbs(ref.envelope)).toBeLessThan(1e-8);
    });
  });
  it('defaults to the next power of two', () => {
    const x = Float32Array.from(fx.signals[1]!);
    expect(maxDiff(hilbertEnvelope(x), hilbertEnvelope(x, { padTo: 512 }))).toBe(0);
  });
  it('two traces per transform (hilbertEnvelopePair) give the same envelopes, and one alone too', () => {
    fx.signals.forEach((x, i) => {
      const ref = fx.hilbert[i]!;
      const other = fx.signals[(i + 1) % fx.signals.length]!.slice(0, x.length);
      const ws = hilbertWorkspace(x.length, ref.N);
      const a = new Float64Array(x.length);
      const b = new Float64Array(other.length);
      hilbertEnvelopePair(Float32Array.from(x), Float32Array.from(other), ws, a, b);
      expect(maxDiff(a, ref.envelope) / maxAbs(ref.envelope)).toBeLessThan(1e-8);
      const alone = hilbertEnvelope(Float32Array.from(other), { padTo: ref.N });
      expect(maxDiff(b, alone) / maxAbs(alone)).toBeLessThan(1e-12);
      const single = new Float64Array(x.length);
      hilbertEnvelopePair(Float32Array.from(x), undefined, ws, single);
      expect(maxDiff(single, ref.envelope) / maxAbs(ref.envelope)).toBeLessThan(1e-8);
      // a shorter second trace in the same workspace: nothing of the earlier pairs stays in the padding
      const short = other.slice(0, Math.max(1, other.length - 5));
      const bs = new Float64Array(short.length);
      hilbertEnvelopePair(Float32Array.from(x), Float32Array.from(short), ws, a, bs);
      expect(maxDiff(a, ref.envelope) / maxAbs(ref.envelope)).toBeLessThan(1e-8);
      const shortAlone = hilbertEnvelope(Float32Array.from(short), { padTo: ref.N });
      expect(maxDiff(bs, shortAlone) / maxAbs(shortAlone)).toBeLessThan(1e-12);
    });
  });
});

describe('Butterworth design and sosfiltfilt vs scipy.signal.butter(output="sos") + sosfiltfilt', () => {
  for (const f of fx.filters) {
    const label = `${f.kind} order ${f.order} at ${f.cornersMHz.join('-')} MHz`;
    const sos = butterworthSos(f.order, f.kind === 'bandpass' ? [f.wn[0]!, f.wn[1]!] : f.wn[0]!, f.kind);
    it(`${label}: magnitude response matches scipy.signal.sosfreqz`, () => {
      f.freqRadPerSample.forEach((w, k) => {
        // absolute 1e-9 on |H| <= 1 (scipy's sections are paired differently; the product is the same filter)
        expect(Math.abs(sosMagnitude(sos, w) - f.magnitude[k]!)).toBeLessThan(1e-9);
      });
    });
    it(`${label}: default pad length as scipy's`, () => {
      expect(sosfiltfiltPadlen(sos)).toBe(f.padlen);
    });
    f.sosfiltfilt.forEach((ref, i) => {
      it(`${label}: sosfiltfilt on signal ${i} (${ref.length} samples)`, () => {
        const y = sosfiltfilt(sos, Float32Array.from(fx.signals[i]!));
        // 1e-7 of the output peak: float64 on both sides; pairing of sections changes only rounding.
        expect(maxDiff(y, ref) / maxAbs(ref)).toBeLessThan(1e-7);
      });
    });
    it(`${label}: two signals at once (sosfiltfiltPair) give the numbers of one at a time`, () => {
      const n = Math.min(fx.signals[0]!.length, fx.signals[1]!.length);
      const a = Float32Array.from(fx.signals[0]!.slice(0, n));
      const b = Float32Array.from(fx.signals[1]!.slice(0, n));
      const ya = new Float64Array(n);
      const yb = new Float64Array(n);
      sosfiltfiltPair(sos, a, b, filtfiltWorkspace(sos, n), filtfiltWorkspace(sos, n), ya, yb);
      expect(ya).toEqual(sosfiltfilt(sos, a));
      expect(yb).toEqual(sosfiltfilt(sos, b));
    });
  }
});
