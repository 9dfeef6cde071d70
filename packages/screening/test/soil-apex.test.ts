import { C_M_PER_NS, type HyperbolaFit } from '@lamina/velocity';
import { describe, expect, it } from 'vitest';
import type { SliceGrid } from '@lamina/slices';
import { screenSite, type ScreenedAnomaly } from '../src';
import { constantVelocity, feature, identity, surveyLines, synthStack } from './synth';

const C = C_M_PER_NS;
const v = C / 3; // K 9: the ring of a post at r(z) = 3 z

/**
 * A post at (5, 10) and its air-wave ring r = 3 z, and a small buried object lying on the ring at 0.9 m
 * (x = 7.7 m): in its slices the object is one blob with the ring. Two survey lines over it have fitted
 * a soil-velocity hyperbola with the apex at the object (K 9, as the soil); no air wave draws one. With
 * `soilApexSplit` the object is cut out of the ring's member in its slice (within a Fresnel zone of the
 * apexes), screened apart and stays subsurface with the `soilApexes` item; the ring itself stays
 * above-ground. Off (the default), the object goes with the ring.
 */
describe('a buried object on a post\'s air-wave ring, with soil-velocity apexes on two lines (soilApexSplit)', () => {
  const g: SliceGrid = { crs: 'local', originX: 0, originY: 20, cellSize: 0.1, width: 120, height: 200, nodata: -9999 };
  const depths = Array.from({ length: 13 }, (_, i) => 0.3 + 0.1 * i);
  const gauss = (d: number, s: number) => Math.exp(-(d * d) / (2 * s * s));
  const post: [number, number] = [5, 10];
  const obj: [number, number, number] = [7.7, 10, 0.9];
  const stack = synthStack(g, depths, 0.1, (x, y, z) => {
    const ring = (40 / (1 + 3 * z)) * gauss(Math.hypot(x - post[0], y - post[1]) - 3 * z, 0.15);
    const body = 30 * gauss(Math.hypot(x - obj[0], y - obj[1]), 0.2) * gauss(z - obj[2], 0.08);
    return ring + body;
  }, 5);
  const plan = [feature('P', 'post', { type: 'Point', coordinates: post })];
  const lines = surveyLines(g, 0.5, 0.05);
  const fit = (line: string, y: number): HyperbolaFit =>
    ({
      line,
      trace: 0,
      x: obj[0],
      y,
      t0Ns: (2 * obj[2]) / v,
      velocityMPerNs: v,
      permittivity: 9,
      depthM: obj[2],
      radiusM: 0,
      radiusResolved: false,
      uncertaintyMPerNs: 0.002,
      origin: 'subsurface',
    }) as HyperbolaFit;
  const velocity = { ...constantVelocity(v), hyperbolas: [fit('L15', obj[1] - 0.2), fit('L16', obj[1] + 0.2)] };
  const screen = (soilApexSplit: boolean) => screenSite({ stack, plan, velocity, lines, metresPerUnit: 1, toWgs84: identity, lineSpacingM: 0.5 }, { antennaFrequencyMHz: 400, soilApexSplit }).screened;
  // an anomaly holds the object when a member in its slice has a cell within 0.2 m of it
  const holds = (s: ScreenedAnomaly) =>
    s.anomaly.members.some(
      (m) =>
        m.slice === 6 &&
        Array.from(m.cells).some((c) => {
          const row = Math.floor(c / g.width), col = c - row * g.width;
          return Math.hypot(g.originX + (col + 0.5) * g.cellSize - obj[0], g.originY - (row + 0.5) * g.cellSize - obj[1]) < 0.2;
        }),
    );

  it('off (the default): the object goes into the ring\'s above-ground anomaly', () => {
    const off = screen(false);
    expect(off.filter(holds).map((s) => s.verdict.origin)).toContain('above-ground');
  });

  it('on: the object is screened apart and stays subsurface with the soil apexes as evidence; the ring stays above-ground', () => {
    const on = screen(true);
    const object = on.filter(holds);
    expect(object.length).toBe(1);
    expect(object[0]!.verdict.origin).toBe('subsurface');
    // cut out of the ring's member: the object's reach (a Fresnel zone, 0.34 m here), not the ring's 1000+ cells
    expect(object[0]!.anomaly.cells.length).toBeLessThan(200);
    const item = object[0]!.evidence.find((e) => e.test === 'soil-hyperbola');
    expect(item?.weight).toBe(-3);
    expect(item?.measured).toBe(2);
    // the ring's anomalies away from the object: above-ground
    const ring = on.filter((s) => !holds(s) && s.anomaly.depthTopM > 0.2);
    expect(ring.length).toBeGreaterThan(0);
    expect(ring.filter((s) => s.verdict.origin === 'above-ground').length / ring.length).toBeGreaterThanOrEqual(0.8);
  });
});
