import { describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import { envelope, medianOf, pickFirstArrival, shiftTrace, timeZero } from '../src';
import { addNoise, addRicker, makeLine, rng, trace } from './synth';

const F = 400;
const S = 0.16;

describe('time-zero', () => {
  it('finds known per-trace shifts under noise and dead traces, aligns, and sets time-zero = pick - s/c', () => {
    const nt = 120;
    const line = makeLine(nt, 512, 0.1, 0.05);
    const r = rng(3);
    const base = 6; // ns: direct air wave (wavelet centre) on an unshifted trace
    const jitter = Float64Array.from({ length: nt }, () => (r.next() - 0.5) * 1.0);
    for (let t = 0; t < nt; t++) {
      addRicker(line, t, base + (jitter[t] as number), 1, F);
      addRicker(line, t, 20 + (jitter[t] as number), 0.3, F); // a reflection riding with the trace
    }
    addNoise(line, 0.03, 5);
    const dead = [10, 11, 70];
    for (const t of dead) trace(line, t).fill(0);
    const res = timeZero(line, { frequencyMHz: F, separationM: S, maxDeviationNs: 1 });
    expect(res.replaced).toEqual(expect.arrayContaining(dead));
    // the aligned pick is the median of the true times, within a sample
    const med = [...jitter].sort((a, b) => a - b);
    const trueMedian = base + ((med[59] as number) + (med[60] as number)) / 2;
    expect(Math.abs(res.pickNs - trueMedian)).toBeLessThan(0.1);
    expect(res.timeZeroNs).toBeCloseTo(res.pickNs - S / C_M_PER_NS, 10);
    expect(res.line.timeZeroNs).toBe(res.timeZeroNs);
    // recovered shifts: the negative of the jitter (up to the common median), within one sample (0.1 ns,
    // 1/25 of a period) with noise at 3 % of the direct wave; the noise-free error is far smaller (next test)
    const errs: number[] = [];
    for (let t = 0; t < nt; t++) {
      if (dead.includes(t)) continue;
      errs.push(Math.abs((res.shiftsNs[t] as number) - (res.pickNs - base - (jitter[t] as number))));
    }
    expect(Math.max(...errs)).toBeLessThan(0.1);
    // after alignment the direct wave lines up: re-picking gives the common time everywhere
    const env = envelope(res.line);
    for (let t = 0; t < nt; t++) {
      if (dead.includes(t)) continue;
      const p = pickFirstArrival(trace(env, t), { threshold: 0.25, pick: 'peak', periodSamples: 25 }) * 0.1;
      expect(Math.abs(p - res.pickNs)).toBeLessThan(0.1);
    }
  });

  it('noise-free: shifts exact to 0.005 ns and the pick is the wavelet centre', () => {
    const line = makeLine(30, 400, 0.1, 0.05);
    for (let t = 0; t < 30; t++) addRicker(line, t, 7 + 0.013 * t, 1, F);
    const res = timeZero(line, { frequencyMHz: F });
    for (let t = 0; t < 30; t++) expect(Math.abs((res.shiftsNs[t] as number) - (res.pickNs - 7 - 0.013 * t))).toBeLessThan(0.005);
    expect(Math.abs(res.pickNs - (7 + 0.013 * 14.5))).toBeLessThan(0.01);
  });

  it('a ground wave within a period of the air wave: firstPeak stays on the air wave, the envelope centre does not', () => {
    // Direct waves between the antennas: air wave after s/c, ground wave after s/v (straight paths along
    // the surface). Ground wave 0.6 of the air wave, soil v = 0.11 m/ns: 0.93 ns apart at s = 0.16 m.
    const line = makeLine(20, 400, 0.1, 0.05);
    const t0 = 6.2;
    for (let t = 0; t < 20; t++) {
      addRicker(line, t, t0 + S / C_M_PER_NS, 1, F);
      addRicker(line, t, t0 + S / 0.11, 0.6, F);
    }
    const first = timeZero(line, { frequencyMHz: F, separationM: S });
    const env = timeZero(line, { frequencyMHz: F, separationM: S, pick: 'peak' });
    expect(Math.abs(first.timeZeroNs - t0)).toBeLessThan(0.1);
    expect(Math.abs(env.timeZeroNs - t0)).toBeGreaterThan(0.15);
  });

  it('a real step in the picks (e.g. a trigger change) is followed, not smoothed away', () => {
    const line = makeLine(60, 300, 0.1, 0.05);
    for (let t = 0; t < 60; t++) addRicker(line, t, t < 30 ? 5 : 8, 1, F);
    const res = timeZero(line, { frequencyMHz: F, maxDeviationNs: 0.5 });
    expect(res.replaced.length).toBe(0);
    expect(Math.abs((res.shiftsNs[0] as number) - (res.shiftsNs[59] as number) - 3)).toBeLessThan(0.05);
  });

  it('a record that ends far from zero (a slow transient) is not wrapped onto its first samples', () => {
    // 126 samples of 0.455 ns at 183 MHz, a transient q e^(1 - q) (q = (t - 13.5 ns) / 33 ns) of 0.35 x
    // the direct wave still near its peak at the record's end. The analytic signal's FFT is circular; with
    // only two samples of padding the wrapped end raised the envelope at the start above the threshold.
    const f = 183;
    const line = makeLine(40, 126, 0.455, 0.05);
    for (let t = 0; t < 40; t++) {
      addRicker(line, t, 14.7, 1, f);
      const tr = trace(line, t);
      for (let i = 0; i < 126; i++) {
        const q = (i * 0.455 - 13.5) / 33;
        if (q > 0) tr[i] = (tr[i] as number) + 0.35 * q * Math.exp(1 - q);
      }
    }
    const res = timeZero(line, { frequencyMHz: f });
    expect(Math.abs(res.pickNs - 14.7)).toBeLessThan(0.2);
    for (let t = 0; t < 40; t++) expect(Math.abs(res.picksNs[t]! - 14.7)).toBeLessThan(0.2);
  });

  it('a run of traces where a shallow reflector outshines the direct wave keeps the direct-wave pick', () => {
    // 25 consecutive traces (longer than half the 11-trace median) with a reflection five times the
    // direct wave, 4.5 ns (1.8 periods) after it: each trace's own threshold falls on the reflector.
    const line = makeLine(80, 300, 0.1, 0.05);
    for (let t = 0; t < 80; t++) {
      addRicker(line, t, 6, 1, F);
      if (t >= 30 && t < 55) addRicker(line, t, 10.5, 5, F);
    }
    const res = timeZero(line, { frequencyMHz: F });
    expect(Math.abs(res.pickNs - 6)).toBeLessThan(0.05);
    for (let t = 0; t < 80; t++) expect(Math.abs(res.shiftsNs[t]!)).toBeLessThan(0.05);
  });

  it('replaces picks by the medians of their windows, as the rule says, bit for bit', () => {
    // The rule written out with a median per window (medianOf): far = over half a period from the median
    // of the 5 h wide window; the rest against the median of +-h traces (then the wide one, then all).
    const nt = 150;
    const line = makeLine(nt, 400, 0.1, 0.05);
    const r = rng(11);
    for (let t = 0; t < nt; t++) {
      const late = t % 17 === 5 ? 2 : t % 23 === 7 ? 0.9 : 0; // outliers: far ones and near ones
      addRicker(line, t, 6 + (r.next() - 0.5) * 0.6 + late, 1, F);
      if (t >= 90 && t < 110) addRicker(line, t, 10.5, 5, F);
    }
    addNoise(line, 0.02, 7);
    for (const t of [0, 40, 41, 42, 149]) trace(line, t).fill(0);
    const res = timeZero(line, { frequencyMHz: F });
    const h = 5;
    const p = res.picksNs;
    const far = Array.from(p, (x, t) => !(Math.abs(x - medianOf(p, Math.max(0, t - 5 * h), Math.min(nt, t + 5 * h + 1))) <= 1.25));
    const valid = Float64Array.from(p, (x, t) => (far[t] ? Number.NaN : x));
    const global = Number.isFinite(medianOf(valid)) ? medianOf(valid) : medianOf(p);
    const used = Float64Array.from(valid, (x, t) => {
      let med = medianOf(valid, Math.max(0, t - h), Math.min(nt, t + h + 1));
      if (!Number.isFinite(med)) med = medianOf(valid, Math.max(0, t - 5 * h), Math.min(nt, t + 5 * h + 1));
      if (!Number.isFinite(med)) med = global;
      return Number.isFinite(x) && Math.abs(x - med) <= 0.625 ? x : med;
    });
    expect(res.replaced.length).toBeGreaterThan(10);
    expect(Array.from(res.usedNs)).toEqual(Array.from(used));
  });

  it('onset pick is earlier than the peak pick; integer shifts are whole samples', () => {
    const line = makeLine(10, 300, 0.1, 0.05);
    for (let t = 0; t < 10; t++) addRicker(line, t, 5 + 0.037 * t, 1, F);
    const peak = timeZero(line, { frequencyMHz: F });
    const onset = timeZero(line, { frequencyMHz: F, pick: 'onset' });
    expect(onset.pickNs).toBeLessThan(peak.pickNs);
    const integer = timeZero(line, { frequencyMHz: F, shift: 'integer' });
    for (const s of integer.shiftsNs) expect(Math.abs(s / 0.1 - Math.round(s / 0.1))).toBeLessThan(1e-9);
  });

  it('an all-dead line is an input error naming the line', () => {
    const line = makeLine(5, 100, 0.1, 0.05);
    expect(() => timeZero(line, { frequencyMHz: F })).toThrow(/synthetic: time-zero: expected a direct arrival/);
  });

  it('cubic shift by a whole number of samples is exact and a fractional shift of a smooth signal is accurate', () => {
    const x = Float64Array.from({ length: 200 }, (_, i) => Math.sin(i * 0.1));
    const out = new Float64Array(200);
    shiftTrace(x, 3, out);
    expect(out[50]).toBe(x[47]);
    shiftTrace(x, 2.4, out);
    // Keys cubic convolution is third-order accurate (Keys 1981): error << 1e-3 for this smooth sine
    for (let i = 10; i < 190; i++) expect(Math.abs((out[i] as number) - Math.sin((i - 2.4) * 0.1))).toBeLessThan(1e-4);
  });
});
