import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { addRicker, ricker, rickerSeries, rickerZeroCrossingNs } from '../src';

describe('Ricker wavelet', () => {
  // Published formula: r(t) = (1 - 2 pi^2 f^2 t^2) exp(-pi^2 f^2 t^2) (Ricker 1953; e.g. Yilmaz, Seismic Data Analysis).
  it('is 1 at t = 0 and has its zero crossings at t = +-1/(pi f sqrt 2)', () => {
    for (const f of [100, 250, 400, 600, 1000]) {
      expect(ricker(0, f)).toBe(1);
      const tz = 1 / (Math.PI * (f / 1000) * Math.SQRT2);
      expect(rickerZeroCrossingNs(f)).toBeCloseTo(tz, 12);
      expect(Math.abs(ricker(tz, f))).toBeLessThan(1e-12);
      expect(Math.abs(ricker(-tz, f))).toBeLessThan(1e-12);
      expect(ricker(0.99 * tz, f)).toBeGreaterThan(0);
      expect(ricker(1.01 * tz, f)).toBeLessThan(0);
      // Side lobes: minimum -2 exp(-3/2) at t = +-sqrt(3/2)/(pi f) (from the derivative of the formula).
      const tm = Math.sqrt(1.5) / (Math.PI * (f / 1000));
      expect(ricker(tm, f)).toBeCloseTo(-2 * Math.exp(-1.5), 12);
    }
  });

  it('has its amplitude spectrum peak at the centre frequency', () => {
    // The spectrum of the formula is proportional to (f'/f)^2 exp(-(f'/f)^2): maximum at f' = f.
    const f = 400;
    const dt = 0.01;
    const n = 8192;
    const w = rickerSeries(n, dt, f, (n / 2) * dt);
    let best = 0;
    let bestF = 0;
    for (let fq = 50; fq <= 1500; fq += 2) {
      let re = 0;
      let im = 0;
      for (let i = 0; i < n; i++) {
        const ph = (-2 * Math.PI * (fq / 1000) * i * dt);
        re += w[i]! * Math.cos(ph);
        im += w[i]! * Math.sin(ph);
      }
      const a = Math.hypot(re, im);
      if (a > best) {
        best = a;
        bestF = fq;
      }
    }
    expect(Math.abs(bestF - f)).toBeLessThanOrEqual(2);
  });

  it("agrees with scipy.signal.ricker (Debian scipy 1.10) up to scipy's normalisation", () => {
    // scipy's ricker(points, a) = A (1 - (t/a)^2) exp(-t^2 / (2 a^2)); with a = 1/(pi f sqrt 2) it is our wavelet times A.
    const f = 400;
    const dt = 0.05;
    const a = 1 / (Math.PI * (f / 1000) * Math.SQRT2) / dt; // in samples
    const points = 101;
    const out = execFileSync('/usr/bin/python3', ['-c', `import scipy.signal as s, json; w = s.ricker(${points}, ${a}); print(json.dumps((w / w.max()).tolist()))`], { encoding: 'utf8' });
    const ref = JSON.parse(out) as number[];
    const ours = rickerSeries(points, dt, f, ((points - 1) / 2) * dt);
    for (let i = 0; i < points; i++) expect(ours[i]!).toBeCloseTo(ref[i]!, 10);
  });

  it('addRicker places a wavelet at a fractional time exactly', () => {
    const tr = new Float64Array(400);
    addRicker(tr, 0.1, 12.34, 2, 400);
    for (let i = 0; i < tr.length; i++) expect(Math.abs(tr[i]! - 2 * ricker(i * 0.1 - 12.34, 400))).toBeLessThan(2e-6);
  });
});
