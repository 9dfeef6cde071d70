import { C_M_PER_NS } from '@lamina/velocity';
import { describe, expect, it } from 'vitest';
import type { SliceGrid } from '@lamina/slices';
import { screenSite } from '../src';
import { constantVelocity, feature, identity, surveyLines, synthStack } from './synth';

const C = C_M_PER_NS;

// Every case: 12 x 12 m of 0.1 m cells, lines north-south every 0.5 m (x = 0.25, 0.75, ...).
const g: SliceGrid = { crs: 'local', originX: 0, originY: 12, cellSize: 0.1, width: 120, height: 120, nodata: -9999 };
const lines = surveyLines(g, 0.5, 0.05);
const gauss = (d: number, s: number) => Math.exp(-(d * d) / (2 * s * s));
const nearestLineX = (x: number) => 0.25 + 0.5 * Math.round((x - 0.25) / 0.5);

/**
 * Lines parallel to a wall: each records the wall's air wave at the constant time 2 d / c (d its
 * distance from the wall), a flat event that background removal takes out of the main stack. In the
 * stack before background removal the slice at depth z holds it as a strip along the one line at
 * d = z c / v. A utility running along a line stays on its line from slice to slice. K 9 (c / v = 3),
 * lines north-south every 0.5 m, the wall north-south 1 m west of the first line.
 */
describe('strips along lines parallel to a wall (before background removal)', () => {
  const depths = Array.from({ length: 16 }, (_, i) => 0.15 + 0.1 * i);
  const wallX = -0.75;
  const utilityX = 8.25;
  const main = synthStack(g, depths, 0.1, () => 0, 1);
  const before = synthStack(g, depths, 0.1, (x, y, z) => {
    if (y < 0.5 || y > 11.5) return 0;
    let v = 0;
    // the wall's flat event on the line at d = z c / v (within the pulse: a Gaussian in d of 0.2 m)
    const lx = nearestLineX(x);
    if (Math.abs(x - lx) < 0.15) v += 30 * gauss(lx - wallX - 3 * z, 0.2);
    // a utility along the line at x = 8.25, 0.9 m deep
    if (Math.abs(x - utilityX) < 0.15) v += 30 * gauss(z - 0.9, 0.08);
    return v;
  }, 2);
  const plan = [feature('W', 'wall', { type: 'LineString', coordinates: [[wallX, 0], [wallX, 12]] })];
  const res = screenSite({ stack: main, beforeBackgroundStack: before, plan, velocity: constantVelocity(C / 3), lines, metresPerUnit: 1, toWgs84: identity, lineSpacingM: 0.5 }, { antennaFrequencyMHz: 400 });
  const fromBefore = res.anomalies.features.filter((f) => f.properties.source === 'before-background');

  it('finds the strips and the utility in the stack before background removal', () => {
    expect(fromBefore.length).toBeGreaterThanOrEqual(3);
  });

  it('flags every strip at z c / v from the wall above-ground and keeps the utility a candidate', () => {
    const byId = new Map(res.screened.map((s) => [s.anomaly.id, s]));
    let walls = 0, utility = 0;
    for (const f of fromBefore) {
      const s = byId.get(f.properties.id as string)!;
      const x = s.anomaly.members[0]!.x;
      if (Math.abs(x - utilityX) < 0.3) {
        utility++;
        expect(s.verdict.origin).toBe('subsurface');
      } else {
        walls++;
        expect(s.verdict.origin, `strip at x ${x.toFixed(2)}, ${s.anomaly.depthTopM.toFixed(2)}-${s.anomaly.depthBottomM.toFixed(2)} m: ${s.evidence.map((e) => `${e.test} ${e.passed}`).join(', ')}`).toBe('above-ground');
      }
    }
    expect(walls).toBeGreaterThanOrEqual(2);
    expect(utility).toBeGreaterThanOrEqual(1);
  });
});

/**
 * A flat layer under half the site: every line records it at one time, so background removal takes it
 * out of the main stack and each line keeps a strip of it before removal. Strips on ten neighbouring
 * lines together are wider than any utility: a planar reflector (class layer, reported as an interface),
 * while a utility along one line, three lines' footprint wide at most, stays a utility.
 */
describe('strips of a flat layer on many lines are a layer, a utility along a line stays a utility', () => {
  const depths = Array.from({ length: 16 }, (_, i) => 0.15 + 0.1 * i);
  const utilityX = 9.25;
  const main = synthStack(g, depths, 0.1, () => 0, 1);
  const before = synthStack(g, depths, 0.1, (x, y, z) => {
    if (y < 0.5 || y > 11.5 || Math.abs(x - nearestLineX(x)) >= 0.15) return 0;
    let v = 0;
    if (x < 5.5) v += 30 * gauss(z - 1.2, 0.08);
    if (Math.abs(x - utilityX) < 0.15) v += 30 * gauss(z - 0.9, 0.08);
    return v;
  }, 2);
  const res = screenSite({ stack: main, beforeBackgroundStack: before, plan: [], velocity: constantVelocity(C / 3), lines, metresPerUnit: 1, toWgs84: identity, lineSpacingM: 0.5 }, { antennaFrequencyMHz: 400 });
  const fromBefore = res.anomalies.features.filter((f) => f.properties.source === 'before-background');

  it('classes the layer strips layer and the utility utility', () => {
    const x = (f: (typeof fromBefore)[number]) => (f.properties.centroid as number[])[0]!;
    const layer = fromBefore.filter((f) => x(f) < 6);
    const utility = fromBefore.filter((f) => Math.abs(x(f) - utilityX) < 0.5);
    expect(layer.length).toBeGreaterThanOrEqual(5);
    expect(utility.length).toBeGreaterThanOrEqual(1);
    for (const f of layer) expect(f.properties.class, String(f.properties.classReason)).toBe('layer');
    for (const f of utility) expect(f.properties.class, String(f.properties.classReason)).toBe('utility');
  });
});

/**
 * A wall at 20 degrees to the lines: each line records its air wave where its distance d from the wall
 * is z c / v, so before background removal each slice holds a strip along every line near that distance,
 * and the strips side by side make a band parallel to the wall. A strip runs along its line, 20 degrees
 * off the wall; the band of its planar group runs along the wall, and it is the band that the edge
 * alignment reads (ScreenContext.groupDirectionDeg). K 9 (c / v = 3), lines north-south every 0.5 m.
 */
describe('strips of an air wave crossing the lines obliquely: their band is parallel to the object', () => {
  const depths = Array.from({ length: 8 }, (_, i) => 0.45 + 0.1 * i);
  // the wall through (-1, 0) at azimuth 20 degrees (east of north); distance of (x, y) from it
  const az = (20 * Math.PI) / 180;
  const ux = Math.sin(az), uy = Math.cos(az);
  const dist = (x: number, y: number) => Math.abs((x + 1) * uy - y * ux);
  const main = synthStack(g, depths, 0.1, () => 0, 1);
  const before = synthStack(g, depths, 0.1, (x, y, z) => {
    if (y < 0.5 || y > 11.5 || Math.abs(x - nearestLineX(x)) >= 0.15) return 0;
    return 30 * gauss(dist(nearestLineX(x), y) - 3 * z, 0.25);
  }, 2);
  const plan = [feature('W', 'wall', { type: 'LineString', coordinates: [[-1, 0], [-1 + 14 * ux, 14 * uy]] })];
  const res = screenSite({ stack: main, beforeBackgroundStack: before, plan, velocity: constantVelocity(C / 3), lines, metresPerUnit: 1, toWgs84: identity, lineSpacingM: 0.5 }, { antennaFrequencyMHz: 400 });
  const fromBefore = res.screened.filter((s) => res.anomalies.features.find((f) => f.properties.id === s.anomaly.id)?.properties.source === 'before-background');

  it('the strips run along their lines and their edge alignment with the wall passes', () => {
    expect(fromBefore.length).toBeGreaterThanOrEqual(5);
    let aligned = 0;
    for (const s of fromBefore) {
      expect(Math.min(Math.abs(s.anomaly.shape.directionDeg), Math.abs(180 - s.anomaly.shape.directionDeg))).toBeLessThan(10);
      if (s.evidence.some((e) => e.test === 'edge-alignment' && e.passed)) aligned++;
    }
    expect(aligned).toBeGreaterThanOrEqual(0.8 * fromBefore.length);
  });
});
