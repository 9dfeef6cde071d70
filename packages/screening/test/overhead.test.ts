import { C_M_PER_NS } from '@lamina/velocity';
import { describe, expect, it } from 'vitest';
import type { SliceGrid } from '@lamina/slices';
import { moveOutWeight } from '../src/checks';
import { locusAtHeight, screenSite, type ScreenedAnomaly, type SliceLocus } from '../src';
import { constantVelocity, feature, identity, surveyLines, synthStack } from './synth';

const C = C_M_PER_NS;

describe('locus of an overhead object', () => {
  const l: SliceLocus = { index: 0, depthM: 1, topM: 0.95, bottomM: 1.05, radiusM: 5, rate: 3, bandHalfM: 0.2, toleranceM: 0.3 };
  it('is the slice locus itself at no height', () => {
    expect(locusAtHeight(l, undefined)).toBe(l);
    expect(locusAtHeight(l, 0)).toBe(l);
  });
  it('lies at the plan distance of the slant range: sqrt(R^2 - h^2) (3-4-5 triangle)', () => {
    const o = locusAtHeight(l, 3);
    expect(o.radiusM).toBeCloseTo(4, 12);
    // dr/dR = R / r: the band widens by 5/4 to first order
    expect(o.bandHalfM).toBeGreaterThan(l.bandHalfM * 1.2);
    expect(o.bandHalfM).toBeLessThan(l.bandHalfM * 1.35);
    expect(o.rate).toBeCloseTo((3 * 5) / 4, 12);
  });
  it('weighs a member on its band less where the band is wider than a standing object\'s (the log of the widening)', () => {
    // standing band: the full move-out weight 2 (shared by n members); a fail costs the same
    expect(moveOutWeight(true, 0.3, 0.3, 1)).toBe(2);
    expect(moveOutWeight(false, 0.9, 0.3, 2)).toBe(-1);
    // a band e times wider holds a buried object e times as often by chance: one nat less
    expect(moveOutWeight(true, 0.3 * Math.E, 0.3, 1)).toBeCloseTo(1, 12);
    // near the onset (h 4.9 of R 5) the band is 3.4 times wider: 2 - ln 3.4 = 0.78
    const o = locusAtHeight(l, 4.9);
    expect(moveOutWeight(true, o.toleranceM, l.toleranceM, 1)).toBeCloseTo(2 - Math.log(o.toleranceM / 0.3), 12);
    expect(o.toleranceM / 0.3).toBeGreaterThan(3);
    // more than e^2 times wider: the position says nothing (never evidence against air)
    expect(moveOutWeight(true, 0.3 * Math.exp(2.5), 0.3, 1)).toBe(0);
  });
  it('does not exist before the air wave can reach the slice (R + tolerance <= h)', () => {
    expect(locusAtHeight(l, 5.3).radiusM).toBeNaN();
    expect(locusAtHeight(l, 5.29).radiusM).toBe(0);
  });
});

/**
 * K 9 soil (c / v = 3), slices 0.15-1.35 m, a cable 1.2 m above the ground running east-west across
 * the middle of a 20 x 16 m survey. Its air wave, reaching the antenna along the slant, shows first at
 * z = h v / c = 0.4 m and lies at plan distance sqrt((3 z)^2 - h^2) on both sides of it. A buried pipe
 * runs parallel to the cable 4 m south at 0.8 m depth (off the locus: sqrt(2.4^2 - 1.44) = 2.08 m).
 */
describe('screening an overhead cable', () => {
  const h = 1.2;
  const g: SliceGrid = { crs: 'local', originX: 0, originY: 16, cellSize: 0.1, width: 200, height: 160, nodata: -9999 };
  const depths = Array.from({ length: 13 }, (_, i) => 0.15 + 0.1 * i);
  const gauss = (d: number, s: number) => Math.exp(-(d * d) / (2 * s * s));
  const cableY = 8;
  const stack = synthStack(g, depths, 0.1, (x, y, z) => {
    let v = 0;
    const R = 3 * z;
    if (R > h && x > 1 && x < 19) {
      const r = Math.sqrt(R * R - h * h);
      const d = Math.abs(y - cableY);
      v += (50 / (1 + R)) * gauss(d - r, 0.15);
    }
    if (x > 2 && x < 18) v += 20 * gauss(y - (cableY - 4), 0.15) * gauss(z - 0.8, 0.08);
    return v;
  });
  const plan = [feature('cable', 'overhead', { type: 'LineString', coordinates: [[0, cableY], [20, cableY]] }, { heightM: h })];
  const velocity = constantVelocity(C / 3);
  const lines = surveyLines(g, 0.5, 0.05);
  const res = screenSite({ stack, plan, velocity, lines, metresPerUnit: 1, toWgs84: identity });
  const sc = res.screened;
  const near = (a: ScreenedAnomaly, y0: number, tol: number) => a.anomaly.members.some((m) => Math.abs(m.y - y0) < tol);

  it('flags the bands on both sides of the cable above-ground, with move-out evidence at the slant-range locus', () => {
    const bands = sc.filter((a) => a.anomaly.members.every((m) => Math.abs(Math.abs(m.y - cableY) - Math.sqrt(Math.max(0, (3 * 0.5 * (m.topM + m.bottomM)) ** 2 - h * h))) < 0.5));
    expect(bands.length).toBeGreaterThanOrEqual(2);
    for (const a of bands) expect(a.verdict.origin).toBe('above-ground');
    const mo = bands.flatMap((a) => a.evidence.filter((e) => e.test === 'move-out' && e.passed && e.featureId === 'cable'));
    expect(mo.length).toBeGreaterThan(0);
    for (const e of mo) {
      const z = 0.5 * (depths[e.slice!]! - 0.05 + depths[e.slice!]! + 0.05);
      expect(e.expected).toBeCloseTo(Math.sqrt((3 * z) ** 2 - h * h), 6);
    }
  });

  it('keeps the buried pipe parallel to the cable subsurface', () => {
    // the band reaches y = 4 only in the deepest slice; the pipe's members sit at 0.6-1.0 m
    const pipe = sc.filter((a) => near(a, cableY - 4, 0.3) && a.anomaly.depthBottomM < 1.1);
    expect(pipe.length).toBeGreaterThan(0);
    for (const a of pipe) expect(a.verdict.origin).toBe("subsurface");
  });

  it('forecasts no locus before z = h v / c and sqrt(R^2 - h^2) after', () => {
    const f = res.forecast.features.filter((x) => x.properties.featureId === 'cable');
    expect(f.length).toBeGreaterThan(0);
    for (const x of f) {
      const z = x.properties.depthM as number;
      expect(3 * z + (x.properties.bandHalfWidthM as number)).toBeGreaterThan(h * 0.9);
      expect(x.properties.radiusM as number).toBeCloseTo(Math.sqrt(Math.max(0, (3 * z) ** 2 - h * h)), 9);
      expect(x.properties.heightM).toBe(h);
    }
    expect(f.some((x) => (x.properties.depthM as number) < 0.3)).toBe(false);
  });
});
