// One-line strips of a survey in two directions, tested against the lines that cross them
// (CrossingLines): an object buried along one set of lines is recorded by every crossing line, an
// artefact of one line is not. Synthetic slices of our own: gamma(4) background (synthStack) with or
// without the object painted into the crossing direction's slice; the rule alone, the class rule, and
// the whole screening (screenSite with directionStacks).
import { buildAnomaly, classifyAnomalies, isOneLineStrip, memberOf, normalIsf, type ClassifyContext } from '@lamina/anomalies';
import type { SliceGrid } from '@lamina/slices';
import { describe, expect, it } from 'vitest';
import { CrossingLines } from '../src/crossing-lines';
import { screenSite } from '../src';
import { constantVelocity, synthStack } from './synth';

// 12 x 12 m of 0.125 m cells; lines 0.5 m apart running north (azimuth 0) and east (azimuth 90)
const g: SliceGrid = { crs: 'local', originX: 0, originY: 12, cellSize: 0.125, width: 96, height: 96, nodata: -9999 };
const depths = [1.2];
// soil v 0.1 m/ns (K 9), 400 MHz: at 1.2 m a slice 0.15 m thick holds an object along the lines out to
// sqrt(2 z dz + dz^2) = 0.62 m across, past the next line (isOneLineStrip)
const ctx: ClassifyContext = { velocityMPerNs: 0.1, frequencyMHz: 400, lineSpacingM: 0.5, nearSurfaceM: 0.2, cellM: 0.125, lineAzimuthsDeg: [0, 90] };
// a strip along the north line at x = 6.25 m, 0.25 m wide, from y = 3 to 9 m
const inStrip = (x: number, y: number) => Math.abs(x - 6.25) < 0.125 && y > 3 && y < 9;
const cells = Int32Array.from(
  Array.from({ length: g.width * g.height }, (_, k) => k).filter((k) => inStrip((k % g.width + 0.5) * g.cellSize, g.originY - (Math.floor(k / g.width) + 0.5) * g.cellSize)),
);
const own = synthStack(g, depths, 0.15, (x, y) => (inStrip(x, y) ? 8 : 0), 3);
const strip = buildAnomaly('A', [memberOf(0, 0, cells, new Float32Array(cells.length).fill(10), own)], own);
// the growth threshold of the extraction (a one-sided 1 % tail)
const low = normalIsf(0.01);

describe('one-line strips tested against the crossing lines (CrossingLines)', () => {
  it('the strip is a one-line strip by its shape alone', () => {
    expect(strip.shape.kind).toBe('linear');
    expect(isOneLineStrip(strip, ctx)).toBe(true);
  });

  it('is seen when the crossing lines record the object, not when they hold background only', () => {
    const recorded = synthStack(g, depths, 0.15, (x, y) => (Math.abs(x - 6.25) < 0.3 && y > 3 && y < 9 ? 8 : 0), 5);
    const background = synthStack(g, depths, 0.15, () => 0, 5);
    expect(new CrossingLines([{ azimuthDeg: 0, stack: own }, { azimuthDeg: 90, stack: recorded }], { lowThreshold: low }).seen(strip)).toBe(true);
    expect(new CrossingLines([{ azimuthDeg: 0, stack: own }, { azimuthDeg: 90, stack: background }], { lowThreshold: low }).seen(strip)).toBe(false);
  });

  it('says nothing without a direction crossing the strip (one direction, or lines within 45 degrees of it)', () => {
    expect(new CrossingLines([{ azimuthDeg: 0, stack: own }], { lowThreshold: low }).seen(strip)).toBeUndefined();
    expect(new CrossingLines([{ azimuthDeg: 30, stack: own }], { lowThreshold: low }).seen(strip)).toBeUndefined();
  });

  it('a strip the crossing lines see is a utility; one they do not see stays one-line clutter', () => {
    const [seen, unseen] = classifyAnomalies(
      [
        { anomaly: strip, aboveGround: false, crossed: true },
        { anomaly: strip, aboveGround: false, crossed: false },
      ],
      ctx,
    );
    expect(seen!.class).toBe('utility');
    expect(seen!.reason).toMatch(/seen by the lines crossing it/);
    expect(unseen!.class).toBe('clutter');
    expect(unseen!.reason).toMatch(/a strip along one line/);
  });
});

describe('screenSite with the stacks of a survey in two directions', () => {
  // 10 x 10 m of 0.1 m cells, lines every 0.5 m north-south (x = 0.25, 0.75, ...) and east-west; slices
  // 0.15 m thick; a narrow strip along the north-south line at x = 5.25 in the slice at 1.2 m, where an
  // object along the lines would reach sqrt(2 z dz + dz^2) = 0.62 m across, past the next line
  const gs: SliceGrid = { crs: 'local', originX: 0, originY: 10, cellSize: 0.1, width: 100, height: 100, nodata: -9999 };
  const zs = [0.75, 0.9, 1.05, 1.2, 1.35];
  const onStrip = (x: number, y: number, z: number) => Math.abs(x - 5.25) < 0.1 && y > 2 && y < 8 && Math.abs(z - 1.2) < 0.01;
  const main = synthStack(gs, zs, 0.15, (x, y, z) => (onStrip(x, y, z) ? 12 : 0), 7);
  const northSouth = Array.from({ length: 20 }, (_, i) => ({ id: `N${i}`, x: Float64Array.from([0.25 + 0.5 * i, 0.25 + 0.5 * i]), y: Float64Array.from([0.05, 9.95]) }));
  const eastWest = Array.from({ length: 20 }, (_, i) => ({ id: `E${i}`, x: Float64Array.from([0.05, 9.95]), y: Float64Array.from([0.25 + 0.5 * i, 0.25 + 0.5 * i]) }));
  const lines = [...northSouth, ...eastWest];
  const velocity = constantVelocity(0.1);
  const run = (crossing?: ReturnType<typeof synthStack>) =>
    screenSite(
      { stack: main, plan: [], velocity, lines, metresPerUnit: 1, toWgs84: (x, y) => [x, y], lineSpacingM: 0.5, ...(crossing ? { directionStacks: [{ azimuthDeg: 0, stack: main }, { azimuthDeg: 90, stack: crossing }] } : {}) },
      { antennaFrequencyMHz: 400, forecast: false },
    ).screened.find((s) => s.anomaly.members.some((m) => Math.abs(m.x - 5.25) < 0.2 && m.slice === 3))!;

  it('the strip alone is one-line clutter; recorded by the crossing lines it is a utility; background there keeps it clutter', () => {
    expect(run().classified!.class).toBe('clutter');
    expect(run().classified!.reason).toMatch(/a strip along one line/);
    const recorded = run(synthStack(gs, zs, 0.15, (x, y, z) => (Math.abs(x - 5.25) < 0.3 && y > 2 && y < 8 && Math.abs(z - 1.2) < 0.01 ? 12 : 0), 9));
    expect(recorded.classified!.class).toBe('utility');
    expect(recorded.classified!.reason).toMatch(/seen by the lines crossing it/);
    expect(run(synthStack(gs, zs, 0.15, () => 0, 9)).classified!.class).toBe('clutter');
  });
});
