import { describe, expect, it } from 'vitest';
import { ASSUMED_RELATIVE_UNCERTAINTY, buildVelocityReport, ONE_OBJECT_RELATIVE_UNCERTAINTY, permittivityFromVelocity, robustCentre, siteVelocityModel, siteVelocityUncertainty, toppMoisture, velocityAt, type HyperbolaFit } from '../src';
import { weightedMedian } from '@lamina/stats';
import { gauss, rng } from './synth';

function fit(v: number, depthM: number, sigma = 0.002, extra: Partial<HyperbolaFit> = {}): HyperbolaFit {
  return {
    line: 'L',
    trace: 0,
    x: 0,
    y: 0,
    t0Ns: (2 * depthM) / v,
    velocityMPerNs: v,
    permittivity: permittivityFromVelocity(v),
    depthM,
    uncertaintyMPerNs: sigma,
    origin: 'subsurface',
    ...extra,
  };
}

describe('weighted median', () => {
  it('equals the plain median for equal weights and follows heavy weights', () => {
    expect(weightedMedian([5, 1, 3, 2, 4], [1, 1, 1, 1, 1])).toBe(3);
    expect(weightedMedian([1, 2, 3], [1, 1, 10])).toBe(3);
    // 1.4826 MAD is the normal-consistent scale (Rousseeuw & Croux 1993): for N(0, 1) samples it approaches 1.
    const g = gauss(rng(3));
    const xs = Array.from({ length: 20000 }, () => g());
    const { spread } = robustCentre(xs, xs.map(() => 1));
    expect(spread).toBeCloseTo(1, 1);
  });
});

describe('siteVelocityModel', () => {
  it('takes the weighted median of subsurface fits only, ignoring air-wave and v > c fits', () => {
    const g = gauss(rng(9));
    const fits = Array.from({ length: 15 }, (_, i) => fit(0.1 + 0.002 * g(), 0.4 + 0.1 * i));
    fits.push(fit(0.3, 1, 0.001, { origin: 'above-ground' }));
    fits.push(fit(0.35, 1, 0.001, { origin: 'above-ground', flags: ['v > c'] }));
    fits.push(fit(0.05, 1, 0.0001)); // one wild fit (K 36), very confident: the median resists it
    // and one no soil has (K 225, beyond the wettest soils' K 40): not counted at all
    fits.push(fit(0.02, 1, 0.0001));
    // nor one whose unresolved radius left a radius-free velocity no soil has (K 1400)
    fits.push(fit(0.1, 1, 0.002, { radiusResolved: false, radiusFreeVelocityMPerNs: 0.008 }));
    const { site, model } = siteVelocityModel(fits);
    expect(site.fitCount).toBe(16);
    expect(Math.abs(site.velocityMPerNs - 0.1)).toBeLessThan(0.003);
    expect(site.permittivity).toBeCloseTo(permittivityFromVelocity(site.velocityMPerNs), 10);
    expect(site.spreadMPerNs).toBeGreaterThan(0.0005);
    expect(site.spreadMPerNs).toBeLessThan(0.005);
    expect(model.kind).toBe('constant');
    expect(site.moisture?.volumetricWaterContent).toBeCloseTo(toppMoisture(site.permittivity), 10);
    expect(site.moisture?.caution).toMatch(/mineral soils/);
  });

  it('states at least the uncertainty floor as spread when one object holds the weight (its weighted MAD is 0)', () => {
    const { site } = siteVelocityModel([fit(0.1, 0.8), fit(0.1, 0.8), fit(0.1, 0.8)]);
    expect(site.velocityMPerNs).toBeCloseTo(0.1, 12);
    expect(site.spreadMPerNs).toBeCloseTo(0.02 * 0.1, 12);
  });

  it('states the uncertainty of the site value: one object at least a fifth of v, shrinking as 1 / sqrt(objects), the assumed velocity 0.29 v', () => {
    // one object (three fits of one pipe on neighbouring lines): the fits agree, the object may not
    const one = siteVelocityModel([fit(0.1, 0.8), fit(0.1, 0.8), fit(0.1, 0.8)]).site;
    expect(one.objectCount).toBe(1);
    expect(one.uncertaintyMPerNs).toBeCloseTo(ONE_OBJECT_RELATIVE_UNCERTAINTY * 0.1, 12);
    // sixteen objects that agree to 1 %: the floor per object over sqrt(16)
    expect(siteVelocityUncertainty(0.1, 0.001, 16)).toBeCloseTo((0.2 * 0.1) / 4, 12);
    // scattered objects: the standard error of their median, 1.2533 x spread / sqrt(n)
    expect(siteVelocityUncertainty(0.1, 0.03, 9)).toBeCloseTo((1.2533 * 0.03) / 3, 12);
    // nothing fits: common soils K 4 to 30 as a uniform spread in ln v, (ln sqrt(30 / 4) / 2) / sqrt(3)
    const none = siteVelocityModel([]).site;
    expect(none.fitCount).toBe(0);
    expect(ASSUMED_RELATIVE_UNCERTAINTY).toBeCloseTo(0.2908, 4);
    expect(none.uncertaintyMPerNs).toBeCloseTo(ASSUMED_RELATIVE_UNCERTAINTY * 0.1, 12);
    expect(none.note).toMatch(/assumed 0\.1 m\/ns; depths are uncertain \(the site velocity by about 29 %/);
  });

  it('chooses a layered model with the Dix interval velocity when shallow and deep fits disagree', () => {
    // Layer 1: 0-0.8 m at 0.12 m/ns; below, 0.07 m/ns. Fits report RMS velocities (Dix 1955).
    const v1 = 0.12;
    const v2 = 0.07;
    const vrmsAt = (z: number) => {
      if (z <= 0.8) return v1;
      const t1 = (2 * 0.8) / v1;
      const dt = (2 * (z - 0.8)) / v2;
      return Math.sqrt((v1 * v1 * t1 + v2 * v2 * dt) / (t1 + dt));
    };
    const g = gauss(rng(4));
    const fits: HyperbolaFit[] = [];
    // Sixteen separate objects (3 m apart): fits of one object on several lines would count once.
    for (let i = 0; i < 8; i++) fits.push(fit(v1 * (1 + 0.003 * g()), 0.3 + 0.06 * i, 0.0015, { x: 3 * i }));
    for (let i = 0; i < 8; i++) fits.push(fit(vrmsAt(1.8) * (1 + 0.003 * g()), 1.8, 0.0015, { x: 3 * i, y: 10 }));
    const { model } = siteVelocityModel(fits);
    expect(model.kind).toBe('layered');
    expect(model.layers.length).toBe(2);
    expect(Math.abs(velocityAt(model, 0.2) / v1 - 1)).toBeLessThan(0.02);
    // The interval between the shallow group's deepest fit (0.72 m) and 1.8 m is mostly layer 2.
    const truthInterval = Math.sqrt((vrmsAt(1.8) ** 2 * ((2 * 0.8) / v1 + (2 * 1.0) / v2) - v1 * v1 * ((2 * 0.72) / v1)) / ((2 * 0.08) / v1 + (2 * 1.0) / v2));
    expect(Math.abs(velocityAt(model, 1.5) / truthInterval - 1)).toBeLessThan(0.05);
    expect(velocityAt(model, 1.5)).toBeLessThan(0.08);
    expect(model.layers[0]!.topM).toBe(0);
    expect(model.layers[1]!.topM).toBe(model.layers[0]!.bottomM);
  });

  it('decides layers on objects: a shallow pipe seen on twelve lines moves the site median, not the layer test', () => {
    // The two layers above (8 shallow and 8 deep objects, one fit each) and a pipe at 0.5 m crossing 12
    // lines. Its fits read the shallow layer 3 % fast (its radius). The site's median weighs fits, the
    // layer test's BIC counts objects: its residuals weigh each object once.
    const v1 = 0.12;
    const vDeep = 0.09;
    const g = gauss(rng(6));
    const fits: HyperbolaFit[] = [];
    for (let i = 0; i < 8; i++) fits.push(fit(v1 * (1 + 0.003 * g()), 0.3 + 0.06 * i, 0.0015, { x: 3 * i }));
    for (let i = 0; i < 8; i++) fits.push(fit(vDeep * (1 + 0.003 * g()), 1.8, 0.0015, { x: 3 * i, y: 10 }));
    for (let i = 0; i < 12; i++) fits.push(fit(1.03 * v1 * (1 + 0.003 * g()), 0.5, 0.0015, { x: 40, y: 0.5 * i }));
    const perFit = siteVelocityModel(fits);
    const shared = siteVelocityModel(fits, { objectWeights: 'shared' });
    expect(perFit.site.objectCount).toBe(17);
    expect(perFit.model.kind).toBe('layered');
    expect(perFit.model).toEqual(shared.model);
    expect(perFit.site.velocityMPerNs).not.toBeCloseTo(shared.site.velocityMPerNs, 4);
  });

  it('keeps a uniform soil uniform when objects scatter by their own biases (false layers in at most 1 of 20 sites)', () => {
    // Uniform v 0.106 m/ns; 16 objects at 0.3-1.6 m, each read 4 % off at random (radius bias, oblique
    // crossings, time-zero: the scatter of real fits), 1 % formal errors. Dix's inversion turns a deep
    // group a few percent slow into an interval of half the velocity; BIC on the formal errors alone
    // took such splits.
    const v = 0.106;
    let layered = 0;
    for (let seed = 1; seed <= 20; seed++) {
      const g = gauss(rng(100 + seed));
      const fits = Array.from({ length: 16 }, (_, i) => fit(v * (1 + 0.04 * g()), 0.3 + (1.3 * i) / 15, 0.001, { x: 3 * i }));
      const { model, site } = siteVelocityModel(fits);
      if (model.kind === 'layered') layered++;
      expect(Math.abs(site.velocityMPerNs / v - 1)).toBeLessThan(0.04);
    }
    expect(layered).toBeLessThanOrEqual(1);
  });

  it('counts the fits of one straight strike (an oblique pipe) as one object however far apart their apexes', () => {
    // A pipe at 25 degrees to the lines moves its apex about 1.1 m per 0.5 m line: single linkage at
    // 1.5 m with a 10 % time window joins neighbours only by chance; the strike found by
    // correctObliqueCrossings says they are one object.
    const v = 0.1;
    const crossing = { feature: 'linear-1', angleDeg: 25, apparentVelocityMPerNs: v / Math.sin((25 * Math.PI) / 180), apparentDepthM: 1, lines: 8 };
    const pipe = Array.from({ length: 8 }, (_, i) => fit(v, 0.8 + 0.06 * i, 0.002, { x: 2.2 * i, y: 0.5 * i, strike: 'linear-1', crossing }));
    const stones = [0, 1, 2].map((i) => fit(v, 0.5, 0.002, { x: 40 + 5 * i, y: 30 }));
    expect(siteVelocityModel([...pipe, ...stones], { layered: false }).site.objectCount).toBe(4);
  });

  it('weighs each fit by its own uncertainty: a pipe seen on twelve lines outweighs two boxes read fast', () => {
    // A flat-topped box (a tank, a footing) fits as a flatter hyperbola: faster soil (the TUNE scenes'
    // tanks and footings read K at 0.16-0.76 of the truth, packages/velocity README). Per object (one vote
    // each) two boxes outvote the pipe; per fit the pipe's twelve crossings hold the median.
    const v = 0.1;
    const pipe = Array.from({ length: 12 }, (_, i) => fit(v, 0.9, 0.003, { x: 5, y: 0.5 * i }));
    const boxes = [0, 1].map((i) => fit(0.14, 1.1, 0.003, { x: 30 + 10 * i, y: 20 }));
    const perFit = siteVelocityModel([...pipe, ...boxes], { layered: false, metresPerUnit: 1 });
    expect(perFit.site.objectCount).toBe(3);
    expect(perFit.site.velocityMPerNs).toBeCloseTo(v, 6);
    expect(siteVelocityModel([...pipe, ...boxes], { layered: false, objectWeights: 'shared' }).site.velocityMPerNs).toBeCloseTo(0.14, 6);
  });

  it("combines a pipe's resolved fits with its unresolved ones at their radius-free velocities", () => {
    // A 0.3 m pipe (axis 1.5 m) seen on 8 lines: 3 resolve R; 5 give point fits reading v fast by
    // sqrt(zc / (zc - R)) = sqrt(1.5 / 1.2) (packages/velocity README), whose radius-free fits scatter
    // about v with the wide uncertainty of the R-v trade-off. Four small stones elsewhere read v itself.
    const v = 0.08;
    const biased = v * Math.sqrt(1.5 / 1.2);
    const g = gauss(rng(5));
    const fits: HyperbolaFit[] = [];
    for (let i = 0; i < 8; i++) {
      const resolved = i % 3 === 0;
      fits.push(
        resolved
          ? fit(v * (1 + 0.01 * g()), 1.2, 0.002, { x: 0.5 * i, y: 0, t0Ns: (2 * 1.2) / v, radiusResolved: true, radiusM: 0.3 })
          : fit(biased, 1.2, 0.008, { x: 0.5 * i, y: 0, t0Ns: (2 * 1.2) / v, radiusResolved: false, radiusM: 0, radiusFreeVelocityMPerNs: v * (1 + 0.06 * g()) }),
      );
    }
    for (let i = 0; i < 4; i++) fits.push(fit(v * (1 + 0.01 * g()), 0.5 + 0.3 * i, 0.002, { x: 10 + 3 * i, y: 5, radiusResolved: false, radiusM: 0 }));
    const { site } = siteVelocityModel(fits, { layered: false });
    expect(Math.abs(site.velocityMPerNs / v - 1)).toBeLessThan(0.02);
    expect(site.fitCount).toBe(12);
    expect(site.objectCount).toBe(5);
    // The pipe alone, and its unresolved fits alone: both read v within their scatter, not 12 % fast.
    expect(Math.abs(siteVelocityModel(fits.slice(0, 8), { layered: false }).site.velocityMPerNs / v - 1)).toBeLessThan(0.02);
    const unresolved = fits.slice(0, 8).filter((f) => f.radiusResolved === false);
    expect(Math.abs(siteVelocityModel(unresolved, { layered: false }).site.velocityMPerNs / v - 1)).toBeLessThan(0.06);
  });

  it('takes an unresolved fit at its radius-free velocity, and weighs fits by relative uncertainty', () => {
    // Point fits read a pipe fast (sqrt(zc / (zc - R))); the radius-free fit of the same picks is the estimate its uncertainty belongs to.
    const v = 0.1;
    const fits = [0, 1, 2, 3, 4].map((i) => fit(v * 1.1, 0.6 + 0.4 * i, 0.004, { x: 5 * i, radiusResolved: false, radiusFreeVelocityMPerNs: v * (1 + 0.01 * (i - 2)) }));
    expect(siteVelocityModel(fits, { layered: false }).site.velocityMPerNs).toBeCloseTo(v, 6);
    expect(siteVelocityModel(fits, { layered: false, unresolvedVelocity: 'point' }).site.velocityMPerNs).toBeCloseTo(v * 1.1, 6);
    // Two slow fits of nonsense (v 0.01 +- 0.003: 30 %) must not outweigh three fits of 4 % (0.004 at 0.1).
    const slow = [0, 1].map((i) => fit(0.01, 0.5, 0.003, { x: 40 + 5 * i }));
    expect(siteVelocityModel([...fits.slice(0, 3), ...slow], { layered: false }).site.velocityMPerNs).toBeGreaterThan(0.09);
  });

  it('falls back to a stated assumption when nothing qualifies', () => {
    const r = buildVelocityReport([fit(0.3, 1, 0.01, { origin: 'above-ground' })]);
    expect(r.site.fitCount).toBe(0);
    expect(r.site.velocityMPerNs).toBe(0.1);
    expect(r.site.note).toMatch(/assumed/);
    expect(r.hyperbolas.length).toBe(1);
  });
});
