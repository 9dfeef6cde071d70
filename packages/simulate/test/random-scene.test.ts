import { describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import { buildModel, parseScenario, randomScenario } from '../src';
import { CART_HALF_WIDTH_M } from '../src/random-scene';

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

  it('keeps the cart off posts, trees and columns: lines go around them (no cart drives through a column)', () => {
    let standing = 0, among = 0, split = 0;
    for (let seed = 1; seed <= 200; seed++) {
      const s = randomScenario(seed);
      // the simulator's own trace positions (local metres from the survey origin) and above-ground truth
      const m = buildModel(s, 1, () => 0.5);
      const [E0, N0] = s.survey.origin;
      if (m.lines.some((l) => /[a-z]$/.test(l.id))) split++;
      for (const o of m.above) {
        if (o.kind !== 'post' && o.kind !== 'tree' && o.kind !== 'column') continue;
        standing++;
        const x = o.center![0] - E0, y = o.center![1] - N0;
        let d = Infinity;
        for (const l of m.lines) for (let j = 0; j < l.mx.length; j++) d = Math.min(d, Math.hypot(l.mx[j]! - x, l.my[j]! - y));
        // no antenna midpoint within the cart's half width plus the object's radius
        expect(d).toBeGreaterThanOrEqual(CART_HALF_WIDTH_M + o.radiusM!);
        const az = (s.survey.azimuthDeg * Math.PI) / 180;
        const a = x * Math.sin(az) + y * Math.cos(az), b = x * Math.cos(az) - y * Math.sin(az);
        if (a > 0 && a < s.survey.lengthM && b > 0 && b < s.survey.widthM) among++;
      }
    }
    // objects still stand among the lines, and the lines stop at them
    expect(standing).toBeGreaterThan(100);
    expect(among).toBeGreaterThan(50);
    expect(split).toBeGreaterThan(20);
  });
});
