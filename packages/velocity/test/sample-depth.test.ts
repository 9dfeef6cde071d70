import { describe, expect, it } from 'vitest';
import { averageVelocity, constantModel, sampleDepth, sampleDepths, timeFromDepth, type VelocityModel } from '../src';

const bistaticDepth = (t: number, v: number, s: number) => sampleDepth(constantModel(v), t, s);

const layered: VelocityModel = {
  kind: 'layered',
  layers: [
    { topM: 0, bottomM: 1, velocityMPerNs: 0.1, permittivity: 9 },
    { topM: 1, bottomM: 2, velocityMPerNs: 0.06, permittivity: 25 },
  ],
};

describe('sample depths (time to depth for slices)', () => {
  it('constant velocity, bistatic: z = sqrt((v t / 2)^2 - (s / 2)^2)', () => {
    // Worked by hand (right triangle of half-separation and depth): v 0.1 m/ns, t 20 ns, s 0.5 m:
    // v t / 2 = 1 m, z = sqrt(1 - 0.0625) = 0.968246 m.
    expect(bistaticDepth(20, 0.1, 0.5)).toBeCloseTo(0.968246, 6);
    // Zero separation is the monostatic v t / 2.
    expect(bistaticDepth(20, 0.1, 0)).toBeCloseTo(1, 12);
    // The direct ground wave arrives at t = s / v: depth 0; earlier times have no depth.
    expect(bistaticDepth(5, 0.1, 0.5)).toBeCloseTo(0, 12);
    expect(bistaticDepth(4, 0.1, 0.5)).toBeNaN();
    expect(sampleDepth(constantModel(0.1), 20, 0.5)).toBeCloseTo(0.968246, 6);
  });

  it('layered, zero separation: vertical two-way times through interval velocities (worked by hand)', () => {
    // 1 m at 0.1 m/ns takes 20 ns two-way; 0.5 m more at 0.06 m/ns adds 2 * 0.5 / 0.06 = 16.667 ns.
    expect(sampleDepth(layered, 20, 0)).toBeCloseTo(1, 6);
    expect(sampleDepth(layered, 20 + 1 / 0.06, 0)).toBeCloseTo(1.5, 6);
    // The last layer extends below its bottom.
    expect(sampleDepth(layered, 20 + 2 / 0.06 + 2 / 0.06, 0)).toBeCloseTo(3, 6);
    expect(averageVelocity(layered, 1.5)).toBeCloseTo(1.5 / (10 + 0.5 / 0.06), 9);
  });

  it('layered with equal interval velocities is the constant-velocity formula', () => {
    const same: VelocityModel = { kind: 'layered', layers: [
      { topM: 0, bottomM: 0.7, velocityMPerNs: 0.08, permittivity: 14 },
      { topM: 0.7, bottomM: 3, velocityMPerNs: 0.08, permittivity: 14 },
    ] };
    for (const t of [6, 10, 25, 60]) expect(sampleDepth(same, t, 0.35)).toBeCloseTo(bistaticDepth(t, 0.08, 0.35), 7);
  });

  it('round trip: timeFromDepth(sampleDepth(t)) = t, and depth increases with time', () => {
    let prev = -1;
    for (let t = 7; t < 80; t += 0.7) {
      const z = sampleDepth(layered, t, 0.3);
      expect(timeFromDepth(layered, z, 0.3)).toBeCloseTo(t, 6);
      expect(z).toBeGreaterThan(prev);
      prev = z;
    }
  });

  it('sample depths count from the aligned time-zero', () => {
    const d = sampleDepths(100, 0.5, 4, constantModel(0.1), 0);
    expect(d[7]).toBeNaN(); // 3.5 ns before time-zero
    expect(d[8]).toBeCloseTo(0, 12);
    expect(d[48]).toBeCloseTo(1, 12); // 20 ns after time-zero
  });
});
