import { describe, expect, it } from 'vitest';
import { components, extractAnomalies, fitNoiseLaw, gammaQ, gammaQInv, noiseMean, noiseScores, normalIsf, seedThreshold } from '../src';
import { grid, py, rng } from './helpers';

/** Gamma(shape k, integer) sample as a sum of k exponentials times `scale`. */
function gammaSample(n: number, k: number, scale: number, seed: number): Float32Array {
  const r = rng(seed);
  return Float32Array.from({ length: n }, () => {
    let s = 0;
    for (let i = 0; i < k; i++) s -= Math.log(1 - r());
    return s * scale;
  });
}

describe('noise law functions', () => {
  it('Q(a, x), its inverse and the normal inverse survival agree with scipy', () => {
    // reference: scipy.special.gammaincc / gammainccinv, scipy.stats.norm.isf (Debian python3-scipy)
    const ax = [[1, 1], [0.5, 3], [5, 20], [12, 3], [100, 150], [1, 40], [2.5, 0.01], [30, 29]] as const;
    const ps = [0.5, 0.1, 1e-3, 1e-7, 1e-20, 0.9, 0.999, 2.5e-5];
    const ref = JSON.parse(
      py(
        `import sys,json
from scipy.special import gammaincc, gammainccinv
from scipy.stats import norm
d=json.loads(sys.stdin.read())
print(json.dumps([[float(gammaincc(a,x)) for a,x in d['ax']],[float(gammainccinv(a,0.5)) for a,x in d['ax']],[float(norm.isf(p)) for p in d['p']]]))`,
        JSON.stringify({ ax, p: ps }),
      ),
    ) as number[][];
    ax.forEach(([a, x], i) => {
      expect(gammaQ(a, x) / ref[0]![i]!).toBeCloseTo(1, 9);
      expect(gammaQInv(a, 0.5) / ref[1]![i]!).toBeCloseTo(1, 9);
    });
    ps.forEach((p, i) => expect(normalIsf(p)).toBeCloseTo(ref[2]![i]!, 6));
  });

  it('fits shape and scale of a Gamma sample from its lower quartiles, at any scale', () => {
    for (const [k, scale] of [[1, 2], [4, 0.5], [12, 3]] as const) {
      for (const mult of [1e-9, 1, 1e9]) {
        const law = fitNoiseLaw(gammaSample(40000, k, scale * mult, 5 + k), -9999)!;
        expect(Math.abs(law.shape / k - 1)).toBeLessThan(0.08);
        expect(Math.abs(noiseMean(law) / (k * scale * mult) - 1)).toBeLessThan(0.03);
      }
    }
  });

  it('a score means the same exceedance probability whatever the law (scores of pure noise are standard normal in the tail)', () => {
    // the fraction of cells scoring >= z must be the normal upper tail (scipy.stats.norm.sf values: z 2 -> 0.02275, z 3 -> 0.00135)
    for (const k of [1, 6]) {
      const v = gammaSample(200000, k, 1, 40 + k);
      const z = noiseScores(v, -9999, fitNoiseLaw(v, -9999)!);
      const frac = (t: number) => z.filter((s) => s >= t).length / z.length;
      expect(Math.abs(frac(2) / 0.02275 - 1)).toBeLessThan(0.08);
      expect(Math.abs(frac(3) / 0.00135 - 1)).toBeLessThan(0.2);
    }
  });

  it('a floor leaves every score at or above it as it was and every other under it', () => {
    // the scores without a floor are the reference (checked against scipy above); the floor only skips work
    for (const [k, floor] of [[1, 1.8], [6, 1.826], [30, 0], [2, -1]] as const) {
      const v = gammaSample(50000, k, 3, 60 + k);
      v[7] = -9999;
      v[11] = 0;
      const law = fitNoiseLaw(v, -9999)!;
      const full = noiseScores(v, -9999, law);
      const cut = noiseScores(v, -9999, law, undefined, floor);
      let skipped = 0;
      for (let i = 0; i < v.length; i++) {
        if (Number.isNaN(full[i]!)) expect(cut[i]).toBeNaN();
        // (scores are Float32: within its rounding of the floor either may hold)
        else if (full[i]! >= floor + 1e-6) expect(cut[i]).toBe(full[i]);
        else {
          expect(cut[i]!).toBeLessThan(floor + 1e-6);
          if (cut[i] !== full[i]) skipped++;
        }
      }
      // most noise cells lie under the floor: their scores were not worked out
      if (floor > 1) expect(skipped).toBeGreaterThan(0.8 * v.length);
    }
  });

  it('hysteresis on scores floored half a unit under the growth threshold finds the same components', () => {
    const low = normalIsf(0.01), high = normalIsf(1e-3);
    for (const k of [1, 4]) {
      const v = gammaSample(300 * 300, k, 2, 80 + k);
      const law = fitNoiseLaw(v, -9999)!;
      const whole = components(noiseScores(v, -9999, law), 300, 300, high, low, 2);
      const floored = components(noiseScores(v, -9999, law, undefined, low - 0.5), 300, 300, high, low, 2);
      expect(whole.length).toBeGreaterThan(5);
      expect(floored.map((c) => Array.from(c))).toEqual(whole.map((c) => Array.from(c)));
    }
  });

  it('pure noise starts about the stated number of false components (1 per hectare per slice)', () => {
    // 30 slices of 400 m^2 of independent cells at 1e-4 per m^2: 1.2 noise seeds expected in all (Poisson)
    const g = grid(200, 200, 0.1);
    const slices = Array.from({ length: 30 }, (_, i) => ({ index: i, topM: 0.1 * i, bottomM: 0.1 * i + 0.1, values: gammaSample(200 * 200, 2, 1, 100 + i) }));
    const ex = extractAnomalies({ grid: g, slices }, { minCells: 1, correlationAreaM2: 0.01, falseAlarmsPerM2: 1e-4 });
    expect(ex.threshold).toBeCloseTo(normalIsf(1e-6), 9);
    expect(ex.anomalies.length).toBeLessThanOrEqual(5); // P(Poisson(1.2) > 5) < 0.2 %
  });

  it('the seed threshold is the normal deviate of rate x correlation area', () => {
    expect(seedThreshold(1e-4, 0.25)).toBeCloseTo(normalIsf(2.5e-5), 12);
  });

  it('strength is the peak energy over the noise mean in dB', () => {
    const g = grid(80, 80, 0.1);
    const v = gammaSample(80 * 80, 3, 1, 9);
    for (let r = 38; r < 42; r++) for (let c = 38; c < 42; c++) v[r * 80 + c] = 30; // 10 x the mean energy (3)
    const ex = extractAnomalies({ grid: g, slices: [{ index: 0, topM: 0.5, bottomM: 0.6, values: v }] }, { minCells: 4 });
    const a = ex.anomalies.find((x) => x.peakValue === 30)!;
    expect(Math.abs(a.strengthDb - 10)).toBeLessThan(0.5);
  });
});
