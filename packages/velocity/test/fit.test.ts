import { describe, expect, it } from 'vitest';
import { C_M_PER_NS, classifyVelocity, fitHyperbola, hyperbolaTime } from '../src';
import { gauss, rng } from './synth';

function picks(x0: number, z: number, v: number, s: number, half: number, step: number) {
  const off: number[] = [];
  const t: number[] = [];
  for (let x = x0 - half; x <= x0 + half + 1e-9; x += step) {
    off.push(x);
    t.push(hyperbolaTime(x, x0, z, v, s));
  }
  return { off, t };
}

/** Two-way time to the specular point on a cylinder of radius R, axis at depth d, across the line (Fermat's principle). */
function cylinderTime(x: number, d: number, R: number, v: number, s: number): number {
  const path = (phi: number) => {
    const px = R * Math.sin(phi);
    const pz = d - R * Math.cos(phi);
    return Math.hypot(px - (x - s / 2), pz) + Math.hypot(px - (x + s / 2), pz);
  };
  let a = -Math.PI / 2;
  let b = Math.PI / 2;
  const g = (Math.sqrt(5) - 1) / 2;
  for (let i = 0; i < 200; i++) {
    const c = b - g * (b - a);
    const e = a + g * (b - a);
    if (path(c) < path(e)) b = e;
    else a = c;
  }
  return path((a + b) / 2) / v;
}

/** Cylinder picks every 0.05 m over +-half along the line, each with `noiseNs` of Gaussian pick noise from `g`. */
function noisyCylinderPicks(half: number, d: number, R: number, v: number, s: number, g: () => number, noiseNs = 0.1): { off: number[]; t: number[] } {
  const off: number[] = [];
  const t: number[] = [];
  for (let x = -half; x <= half + 1e-9; x += 0.05) {
    off.push(x);
    t.push(cylinderTime(x, d, R, v, s) + noiseNs * g());
  }
  return { off, t };
}

describe('fitHyperbola', () => {
  it('recovers x0, z, v exactly from noise-free bistatic picks, including air velocity and off-line targets', () => {
    for (const s of [0, 0.15, 0.5]) {
      for (const k of [1, 4, 9, 25]) {
        const v = C_M_PER_NS / Math.sqrt(k);
        for (const z of [0.4, 1.3]) {
          const { off, t } = picks(2.7, z, v, s, 1.2, 0.05);
          const f = fitHyperbola(off, t, { separationM: s })!;
          // Within 1 % (the brief); in fact to rounding.
          expect(Math.abs(f.velocityMPerNs / v - 1)).toBeLessThan(1e-6);
          expect(f.x0M).toBeCloseTo(2.7, 6);
          expect(f.zM).toBeCloseTo(z, 6);
          expect(f.t0Ns).toBeCloseTo(hyperbolaTime(2.7, 2.7, z, v, s), 6);
        }
      }
    }
  });

  it('stays within 5 % with realistic pick noise, and its sigma(v) matches the scatter of repeated fits', () => {
    const v = 0.1;
    const est: number[] = [];
    const sig: number[] = [];
    for (let seed = 1; seed <= 200; seed++) {
      const g = gauss(rng(seed));
      const { off, t } = picks(0, 0.8, v, 0.15, 0.8, 0.04);
      // 0.15 ns pick noise: a few samples at 400 MHz (common practice, no source).
      const noisy = t.map((x) => x + 0.15 * g());
      const f = fitHyperbola(off, noisy, { separationM: 0.15 })!;
      expect(Math.abs(f.velocityMPerNs / v - 1)).toBeLessThan(0.05);
      est.push(f.velocityMPerNs);
      sig.push(f.sigmaVelocity);
    }
    const mean = est.reduce((a, b) => a + b, 0) / est.length;
    const sd = Math.sqrt(est.reduce((a, b) => a + (b - mean) ** 2, 0) / (est.length - 1));
    const meanSigma = sig.reduce((a, b) => a + b, 0) / sig.length;
    // Two estimates of the same spread (Jacobian covariance vs Monte Carlo) agree within 30 %.
    expect(meanSigma / sd).toBeGreaterThan(0.7);
    expect(meanSigma / sd).toBeLessThan(1.3);
  });

  it('is robust to outlier picks (25 % gross errors), where plain least squares is not', () => {
    const v = 0.09;
    const g = gauss(rng(7));
    const u = rng(8);
    const { off, t } = picks(1, 1, v, 0.15, 1, 0.05);
    const bad = t.map((x, i) => (i % 4 === 1 ? x + (u() < 0.5 ? -1 : 1) * (4 + 8 * u()) : x + 0.1 * g()));
    const robust = fitHyperbola(off, bad, { separationM: 0.15 })!;
    const plain = fitHyperbola(off, bad, { separationM: 0.15, robust: 'none' })!;
    expect(Math.abs(robust.velocityMPerNs / v - 1)).toBeLessThan(0.02);
    expect(Math.abs(plain.velocityMPerNs / v - 1)).toBeGreaterThan(Math.abs(robust.velocityMPerNs / v - 1));
    // The outliers get weight 0.
    const rejected = robust.weights.filter((w, i) => i % 4 === 1 && w === 0).length;
    expect(rejected).toBeGreaterThanOrEqual(Math.floor(off.length / 4) - 1);
  });

  it('reads a 0.1 m radius pipe at 1 m about 4 % fast (the point-model radius bias)', () => {
    // Exact cylinder geometry: top of the pipe at 1 m (axis at 1.1 m), picks within +-1 m (45 degrees).
    // For small apertures t ~ 2(d-R)/v + x^2/(v d), so a point fit reads v sqrt(d / (d - R)) (4.9 % here);
    // wider apertures bring it down. Expected: 4 % +- 1 % (stated tolerance).
    const v = 0.1;
    const off: number[] = [];
    const t: number[] = [];
    for (let x = -1; x <= 1 + 1e-9; x += 0.02) {
      off.push(x);
      t.push(cylinderTime(x, 1.1, 0.1, v, 0.15));
    }
    const f = fitHyperbola(off, t, { separationM: 0.15, radius: 'point' })!;
    const bias = f.velocityMPerNs / v - 1;
    expect(bias).toBeGreaterThan(0.03);
    expect(bias).toBeLessThan(0.05);
    expect(bias).toBeLessThan(Math.sqrt(1.1 / 1.0) - 1);
    // Radius -> 0 is the point model: no bias.
    const t0 = off.map((x) => cylinderTime(x, 1.1, 1e-9, v, 0.15));
    expect(Math.abs(fitHyperbola(off, t0, { separationM: 0.15, radius: 'point' })!.velocityMPerNs / v - 1)).toBeLessThan(1e-6);
    // With the radius fitted, the same exact (Fermat) cylinder picks give v, R and the top depth back:
    // the fit's normal-per-leg path differs from Fermat's by a second-order term only.
    const r = fitHyperbola(off, t, { separationM: 0.15 })!;
    expect(r.radiusResolved).toBe(true);
    expect(Math.abs(r.velocityMPerNs / v - 1)).toBeLessThan(0.005);
    expect(Math.abs(r.radiusM - 0.1)).toBeLessThan(0.01);
    expect(Math.abs(r.zM - 1.0)).toBeLessThan(0.005);
  });

  it('fits the radius of a 0.3 m pipe: v within 5 % and R within 15 % (median of noisy seeds), a point gives R ~ 0', () => {
    // K 16 soil (v 0.075 m/ns), 250 MHz, s 0.3 m; axis at 1.2 m; picks within +-60 degrees of vertical,
    // every 0.05 m, with 0.1 ns Gaussian pick noise (a fortieth of the 4 ns period; common practice for
    // sub-sample envelope-peak picks, no source). Tolerances: the brief's 5 % (v) and 15-20 % (R).
    const v = 0.075;
    const s = 0.3;
    for (const [R, zc] of [
      [0.3, 1.2],
      [0, 1.0],
    ] as const) {
      const ztop = zc - R;
      const half = ztop * Math.tan(Math.PI / 3);
      const dv: number[] = [];
      const dr: number[] = [];
      for (let seed = 1; seed <= 40; seed++) {
        const { off, t } = noisyCylinderPicks(half, zc, Math.max(R, 1e-9), v, s, gauss(rng(seed)));
        const f = fitHyperbola(off, t, { separationM: s })!;
        dv.push(Math.abs(f.velocityMPerNs / v - 1));
        dr.push(Math.abs(f.radiusM - R));
        if (R > 0) expect(f.radiusResolved).toBe(true);
      }
      const worst = (a: number[]) => Math.max(...a);
      const p90 = (a: number[]) => a.slice().sort((p, q) => p - q)[Math.floor(0.9 * (a.length - 1))]!;
      expect(worst(dv)).toBeLessThan(0.05);
      // R within 15 % in half the seeds and 25 % in 90 % of them (its scatter is about 3x that of v:
      // R and v trade off; measured p90 16 % over 100 seeds, 21 % over these 40).
      if (R > 0) {
        expect(p90(dr) / R).toBeLessThan(0.25);
        expect(dr.slice().sort((p, q) => p - q)[dr.length >> 1]! / R).toBeLessThan(0.15);
      }
      // A point: R resolved only as a rare false alarm (3 sigma and F at 99.9 %), and then small.
      else expect(dr.filter((d) => d > 0.05).length).toBeLessThanOrEqual(1);
    }
  });

  it('keeps the radius within its bound (0.75 m by default): a 1.2 m culvert fits at the bound, slower than its point fit', () => {
    // K 16 soil, s 0.3 m, axis at 2 m, picks within +-60 degrees every 0.05 m, 0.1 ns noise
    const v = 0.075, s = 0.3, R = 1.2, zc = 2;
    const half = (zc - R) * Math.tan(Math.PI / 3);
    const { off, t } = noisyCylinderPicks(half, zc, R, v, s, gauss(rng(3)));
    const bounded = fitHyperbola(off, t, { separationM: s })!;
    expect(bounded.radiusM).toBeLessThanOrEqual(0.75 + 1e-12);
    expect(bounded.velocityRadiusFree).toBeLessThanOrEqual(fitHyperbola(off, t, { separationM: s, radius: 'point' })!.velocityMPerNs);
    const free = fitHyperbola(off, t, { separationM: s, maxRadiusM: 5 })!;
    expect(Math.max(free.radiusM, 0)).toBeGreaterThan(0.75);
  });

  it("states an unresolved pipe's velocity with the R-v trade-off, so the truth lies within 2 sigma", () => {
    // A 0.1 m pipe, axis 1 m, K 16 (v 0.075 m/ns), s 0.3 m, picks within +-45 degrees every 0.05 m with
    // 0.1 ns noise: the flanks rarely resolve the radius, and the point fit reads v fast by about
    // sqrt(zc / (zc - R)) (README). Its radius-free velocity and uncertainty must cover the truth at the
    // nominal rate of 2 sigma (95 %); the point fit's own sigma never does. Before the Jacobian's radius
    // column was taken along the bisector at R = 0, it vanished there: a third of these fits had no
    // radius uncertainty and the truth was within 2 sigma in 38 of 60.
    const v = 0.075;
    const s = 0.3;
    const R = 0.1;
    const zc = 1.0;
    const half = (zc - R) * Math.tan(Math.PI / 4);
    let unresolved = 0;
    let covered = 0;
    let pointCovered = 0;
    for (let seed = 1; seed <= 60; seed++) {
      const { off, t } = noisyCylinderPicks(half, zc, R, v, s, gauss(rng(seed)));
      const f = fitHyperbola(off, t, { separationM: s })!;
      if (f.radiusResolved) continue;
      unresolved++;
      expect(Number.isFinite(f.sigmaRadiusM)).toBe(true);
      if (Math.abs(f.velocityRadiusFree - v) <= 2 * f.sigmaVelocityRadiusFree) covered++;
      if (Math.abs(f.velocityMPerNs - v) <= 2 * f.sigmaVelocity) pointCovered++;
    }
    expect(unresolved).toBeGreaterThan(50);
    expect(covered / unresolved).toBeGreaterThan(0.85);
    expect(pointCovered / unresolved).toBeLessThan(0.2);
  });

  it('fits v > c when the picks say so, and the fit is flagged', () => {
    const { off, t } = picks(0, 0.6, 0.36, 0.15, 1, 0.05);
    const f = fitHyperbola(off, t, { separationM: 0.15 })!;
    expect(f.velocityMPerNs).toBeCloseTo(0.36, 6);
    const c = classifyVelocity(f.velocityMPerNs);
    expect(c.flags).toContain('v > c');
    expect(c.origin).toBe('above-ground');
    expect(classifyVelocity(0.1)).toEqual({ origin: 'subsurface', flags: [] });
    // K below about 2 is above-ground (common practice, no source).
    expect(classifyVelocity(C_M_PER_NS / Math.sqrt(1.9)).origin).toBe('above-ground');
    expect(classifyVelocity(C_M_PER_NS / Math.sqrt(2.1)).origin).toBe('subsurface');
  });

  it('returns null for too few picks', () => {
    expect(fitHyperbola([0, 1, 2], [3, 2, 3])).toBeNull();
  });
});
