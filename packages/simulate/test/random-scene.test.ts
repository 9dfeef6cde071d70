import { describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import { parseScenario, randomScenario } from '../src';

describe('randomScenario', () => {
  it('is deterministic per seed, differs between seeds, and always validates', () => {
    expect(JSON.stringify(randomScenario(7))).toBe(JSON.stringify(randomScenario(7)));
    expect(JSON.stringify(randomScenario(7))).not.toBe(JSON.stringify(randomScenario(8)));
    for (let seed = 0; seed < 300; seed++) {
      const s = randomScenario(seed);
      // a round trip through JSON validates as a scenario file would
      expect(() => parseScenario(JSON.parse(JSON.stringify(s)))).not.toThrow();
    }
  });

  it('draws within the documented ranges (README, "Random scenes")', () => {
    let cross = 0, noObstruction = 0, big = 0, overhead = 0, layered = 0;
    for (let seed = 1; seed <= 200; seed++) {
      const s = randomScenario(seed);
      const sv = s.survey;
      expect(s.soil.permittivity).toBeGreaterThanOrEqual(4);
      expect(s.soil.permittivity).toBeLessThanOrEqual(25);
      expect(s.antenna.frequencyMHz).toBeGreaterThanOrEqual(100);
      expect(s.antenna.frequencyMHz).toBeLessThanOrEqual(900);
      expect(sv.lengthM).toBeGreaterThanOrEqual(10 - 0.25);
      expect(sv.lengthM).toBeLessThanOrEqual(30);
      expect(sv.widthM).toBeGreaterThanOrEqual(10 - sv.lineSpacingM);
      expect(sv.widthM).toBeLessThanOrEqual(30);
      expect(sv.lineSpacingM).toBeGreaterThanOrEqual(0.25);
      expect(sv.lineSpacingM).toBeLessThanOrEqual(1);
      // at least 8 samples per period of the antenna's peak frequency (Nyquist with a margin)
      expect(s.recording.sampleIntervalNs).toBeLessThanOrEqual(1000 / s.antenna.frequencyMHz / 8);
      // trace spacing at most a fifth of the wavelength in the soil
      const lambda = C_M_PER_NS / Math.sqrt(s.soil.permittivity) / (s.antenna.frequencyMHz / 1000);
      expect(sv.traceSpacingM).toBeLessThanOrEqual(Math.max(0.15, lambda / 5) + 1e-9);
      const utilities = s.buried.filter((b) => b.kind !== 'compact');
      expect(utilities.length).toBeGreaterThanOrEqual(1);
      expect(utilities.length).toBeLessThanOrEqual(5);
      expect(s.buried.length - utilities.length).toBeLessThanOrEqual(8);
      if (sv.crossAzimuthDeg !== undefined) cross++;
      if (s.plan.length === 0) noObstruction++;
      if (utilities.some((b) => b.radiusM >= 0.3)) big++;
      if (s.plan.some((p) => p.kind === 'overhead')) overhead++;
      if ((s.soil.layers ?? []).length) layered++;
    }
    // every kind of scene occurs in the population
    for (const n of [cross, noObstruction, big, overhead, layered]) expect(n).toBeGreaterThan(10);
  });
});
