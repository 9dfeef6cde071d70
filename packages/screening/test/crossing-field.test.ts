import { C_M_PER_NS } from '@lamina/velocity';
import { describe, expect, it } from 'vitest';
import type { SliceGrid } from '@lamina/slices';
import { screenSite } from '../src';
import { constantVelocity, feature, identity, synthStack } from './synth';

const C = C_M_PER_NS;

/**
 * A pipe crossing the air-wave band of a row of bollards: K 9 (c / v = 3), bollards every 1.5 m along
 * y = 10 m, the union of their rings a band on each side of the row at r(z) = 3 z. A pipe runs
 * north-south at x = 8.1 m, 0.9 m deep, so in its slices it crosses both bands (at y = 10 +- 2.7 m).
 * The part of the pipe inside a band is still the pipe: it keeps its position and depth and continues
 * on both sides.
 */
describe('a pipe crossing the bands of a bollard row', () => {
  const g: SliceGrid = { crs: 'local', originX: 0, originY: 20, cellSize: 0.1, width: 160, height: 200, nodata: -9999 };
  const depths = Array.from({ length: 13 }, (_, i) => 0.15 + 0.1 * i);
  const gauss = (d: number, s: number) => Math.exp(-(d * d) / (2 * s * s));
  const posts = Array.from({ length: 11 }, (_, i) => [0.5 + 1.5 * i, 10] as [number, number]);
  const pipeX = 8.1;
  const stack = synthStack(g, depths, 0.1, (x, y, z) => {
    let v = 0;
    for (const [px, py] of posts) v += (40 / (1 + 3 * z)) * gauss(Math.hypot(x - px, y - py) - 3 * z, 0.15);
    if (y > 1 && y < 19) v += 25 * gauss(x - pipeX, 0.15) * gauss(z - 0.9, 0.08);
    return v;
  }, 3);
  const plan = [feature('B', 'fence', { type: 'LineString', coordinates: [posts[0]!, posts[posts.length - 1]!] }, { postSpacingM: 1.5 })];
  // east-west lines every 0.5 m, a trace every 0.05 m
  const lines = Array.from({ length: 40 }, (_, i) => ({ id: `L${i}`, x: Float64Array.from({ length: 320 }, (_, k) => 0.025 + 0.05 * k), y: Float64Array.from({ length: 320 }, () => 0.25 + 0.5 * i) }));
  const res = screenSite({ stack, plan, velocity: constantVelocity(C / 3), lines, metresPerUnit: 1, toWgs84: identity, lineSpacingM: 0.5 }, { antennaFrequencyMHz: 400 });

  it('covers the pipe along its whole length with subsurface anomalies, band crossings included', () => {
    const sub = res.screened.filter((s) => s.verdict.origin === 'subsurface' && s.anomaly.depthTopM <= 1.0 && s.anomaly.depthBottomM >= 0.8);
    const covered = new Set<number>();
    for (const s of sub) for (const m of s.anomaly.members) {
      for (const c of m.cells) {
        const row = Math.floor(c / g.width), col = c - row * g.width;
        const x = g.originX + (col + 0.5) * g.cellSize, y = g.originY - (row + 0.5) * g.cellSize;
        if (Math.abs(x - pipeX) <= 0.3 && y > 1.5 && y < 18.5) covered.add(Math.floor(y * 10));
      }
    }
    const total = Math.round((18.5 - 1.5) * 10);
    const frac = covered.size / total;
    // both crossings at y = 7.3 and 12.7 must be covered
    expect(covered.has(73)).toBe(true);
    expect(covered.has(127)).toBe(true);
    expect(frac).toBeGreaterThanOrEqual(0.95);
  });

  it('still flags the bands themselves above-ground', () => {
    const bands = res.screened.filter((s) => s.anomaly.members.every((m) => Math.abs(m.x - pipeX) > 1.5));
    const air = bands.filter((s) => s.verdict.origin === 'above-ground');
    expect(bands.length).toBeGreaterThan(0);
    expect(air.length / bands.length).toBeGreaterThanOrEqual(0.9);
  });
});
