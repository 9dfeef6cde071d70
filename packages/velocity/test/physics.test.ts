import { describe, expect, it } from 'vitest';
import {
  C_M_PER_NS,
  constantModel,
  depthFromTime,
  dixInterval,
  hyperbolaTime,
  permittivityFromVelocity,
  permittivitySpread,
  timeFromDepth,
  toppMoisture,
  toppPermittivity,
  velocityAt,
  velocityFromPermittivity,
  type VelocityModel,
} from '../src';

describe('velocity and permittivity', () => {
  it('matches the published K-to-velocity table', () => {
    // Davis & Annan (1989), Geophysical Prospecting 37, table of typical materials:
    // air K 1 -> 0.30 m/ns, K 9 -> 0.10 m/ns (e.g. saturated sand/limestone range), fresh water K 80 -> 0.033 m/ns.
    // The table rounds to two significant figures.
    expect(velocityFromPermittivity(1)).toBeCloseTo(0.3, 2);
    expect(velocityFromPermittivity(9)).toBeCloseTo(0.1, 3);
    expect(Math.abs(velocityFromPermittivity(80) - 0.033)).toBeLessThan(0.001);
  });
  it('round-trips K <-> v', () => {
    for (const k of [1, 2.5, 4, 9, 16, 25, 81]) expect(permittivityFromVelocity(velocityFromPermittivity(k))).toBeCloseTo(k, 10);
    expect(permittivityFromVelocity(C_M_PER_NS)).toBe(1);
  });
});

describe('Topp, Davis & Annan (1980)', () => {
  it('gives the published worked values', () => {
    // Topp et al. (1980), Water Resources Research 16(3): theta(K) cubic; values at K 4, 10, 20
    // as commonly tabulated (0.055, 0.188, 0.345).
    expect(toppMoisture(4)).toBeCloseTo(0.055, 3);
    expect(toppMoisture(10)).toBeCloseTo(0.188, 3);
    expect(toppMoisture(20)).toBeCloseTo(0.345, 3);
  });
  it('its two published fits invert each other only to about 0.03', () => {
    // Topp et al. (1980) give K(theta) = 3.03 + 9.3 theta + 146 theta^2 - 76.7 theta^3 as a separate fit,
    // not the algebraic inverse; the brief of this project states about 0.03 tolerance.
    for (let theta = 0.05; theta <= 0.45; theta += 0.05) {
      expect(Math.abs(toppMoisture(toppPermittivity(theta)) - theta)).toBeLessThan(0.03);
    }
  });
});

describe('time <-> depth', () => {
  it('constant velocity: bistatic z = sqrt((v t / 2)^2 - (s/2)^2), agreeing with the travel-time formula', () => {
    const m = constantModel(0.1);
    for (const s of [0, 0.15, 0.6]) {
      for (const z of [0.05, 0.3, 1, 2.5]) {
        const t = hyperbolaTime(0, 0, z, 0.1, s);
        expect(timeFromDepth(m, z, s)).toBeCloseTo(t, 10);
        expect(depthFromTime(m, t, s)).toBeCloseTo(z, 10);
      }
      // Inside the direct-wave time (v t < s) the depth is 0.
      expect(depthFromTime(m, (0.5 * s) / 0.1, s)).toBe(0);
    }
  });
  it('layered: vertical times add 2 h / v per layer, and depthFromTime inverts timeFromDepth', () => {
    const m: VelocityModel = {
      kind: 'layered',
      layers: [
        { topM: 0, bottomM: 0.5, velocityMPerNs: 0.12, permittivity: permittivityFromVelocity(0.12) },
        { topM: 0.5, bottomM: 2, velocityMPerNs: 0.07, permittivity: permittivityFromVelocity(0.07) },
      ],
    };
    expect(timeFromDepth(m, 1.2, 0)).toBeCloseTo((2 * 0.5) / 0.12 + (2 * 0.7) / 0.07, 10);
    // Below the last layer's bottom the last velocity continues.
    expect(timeFromDepth(m, 3, 0)).toBeCloseTo((2 * 0.5) / 0.12 + (2 * 2.5) / 0.07, 10);
    for (const z of [0.1, 0.5, 0.9, 2.7]) expect(depthFromTime(m, timeFromDepth(m, z, 0.15), 0.15)).toBeCloseTo(z, 8);
    expect(velocityAt(m, 0.2)).toBe(0.12);
    expect(velocityAt(m, 0.5)).toBe(0.07);
    expect(velocityAt(m, 10)).toBe(0.07);
  });
});

describe('Dix relation', () => {
  it('recovers the interval velocity of a two-layer medium from its RMS velocities', () => {
    // Dix (1955), Geophysics 20: v_int^2 = (v2^2 t2 - v1^2 t1) / (t2 - t1), exact for vertical times.
    const v1 = 0.12;
    const vb = 0.07;
    const t1 = (2 * 0.6) / v1;
    const dt = (2 * 0.9) / vb;
    const t2 = t1 + dt;
    const vrms2 = Math.sqrt((v1 * v1 * t1 + vb * vb * dt) / t2);
    expect(dixInterval(v1, t1, vrms2, t2)).toBeCloseTo(vb, 12);
    // An RMS velocity that falls too fast has no real interval velocity.
    expect(Number.isNaN(dixInterval(0.12, 10, 0.01, 11))).toBe(true);
  });
});

describe('permittivitySpread', () => {
  it('propagates the spread of v to K: dK / K = 2 dv / v (K = (c / v)^2)', () => {
    expect(permittivitySpread(7.94, 0.1064, 0.0021)).toBeCloseTo((2 * 7.94 * 0.0021) / 0.1064, 12);
    // against a finite difference of K(v) itself
    const v = 0.1064;
    const h = 1e-7;
    const dKdv = (permittivityFromVelocity(v + h) - permittivityFromVelocity(v - h)) / (2 * h);
    expect(permittivitySpread(permittivityFromVelocity(v), v, 0.0021)).toBeCloseTo(Math.abs(dKdv) * 0.0021, 6);
    expect(permittivitySpread(9, 0, 0.01)).toBeNaN();
  });
});
