import { C_M_PER_NS } from '@lamina/velocity';
import { describe, expect, it } from 'vitest';
import type { SliceGrid } from '@lamina/slices';
import { alongLineMembers, cellResidual, distanceField, nearestLineLabels, reflectorsOf, sliceLoci, type Line } from '../src';
import type { ScreenContext } from '../src/context';
import { constantVelocity, feature, rng, synthStack } from './synth';

const C = C_M_PER_NS;

/**
 * Independent kinematics: Kirchhoff (diffraction-summation) migration images a point (xm, zm) where the
 * diffraction curve t_d(x) = 2 sqrt((x - xm)^2 + zm^2) / v touches the event (stationary phase). For the
 * air wave of a wall at x = 0 on a line perpendicular to it, t(x) = 2 x / c; find xm by bisection on
 * min_x [t_d(x) - t(x)] = 0 (a numeric search, not the closed form under test).
 */
function migratedDistance(zm: number, v: number): number {
  const gap = (xm: number) => {
    let best = Infinity;
    for (let i = 0; i <= 20000; i++) {
      const x = xm + (i / 20000) * 20 - 0.001;
      best = Math.min(best, (2 * Math.hypot(x - xm, zm)) / v - (2 * x) / C);
    }
    return best;
  };
  let lo = 0, hi = 20;
  for (let it = 0; it < 60; it++) {
    const mid = 0.5 * (lo + hi);
    if (gap(mid) > 0) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

function context(grid: SliceGrid, migration?: ScreenContext['migration']): ScreenContext {
  const plan = [feature('wall', 'wall', { type: 'LineString', coordinates: [[0, 0], [0, 10]] })];
  const stack = synthStack(grid, [1], 0.1, () => 0);
  const reflectors = reflectorsOf(plan, 1);
  return {
    grid,
    metresPerUnit: 1,
    loci: sliceLoci(stack, constantVelocity(0.1), 0.1),
    reflectors,
    fields: [distanceField(reflectors[0]!, grid, 1)],
    positionM: 0.1,
    parallelToleranceDeg: 15,
    rateTolerance: 0.25,
    ...(migration ? { migration } : {}),
  };
}

describe('air-wave locus of a wall in a stack migrated along the lines', () => {
  const grid: SliceGrid = { originX: 0, originY: 10, cellSize: 0.01, width: 1000, height: 10, nodata: -9999 } as SliceGrid;
  for (const v of [0.06, 0.1, 0.15]) {
    it(`v = ${v} m/ns: lines across the wall see it at r sqrt(1 - (v/c)^2), as diffraction-summation kinematics give`, () => {
      const k2 = (v / C) ** 2;
      const ctx = context(grid, { k2, ux: 1, uy: 0 });
      const zm = 1.2;
      const r = (zm * C) / v;
      const dm = migratedDistance(zm, v);
      // the cell whose residual is zero lies at rho = r sqrt(1 - k^2); compare with the numeric image
      const rho = r * Math.sqrt(1 - k2);
      expect(dm).toBeCloseTo(rho, 2);
      const col = Math.round(rho / grid.cellSize - 0.5);
      const res = cellResidual(5 * grid.width + col, ctx.reflectors[0]!, ctx.fields[0]!, r, ctx);
      expect(Math.abs(res)).toBeLessThanOrEqual(grid.cellSize);
    });
  }

  it('lines parallel to the wall (a flat event) leave the locus at r, and so does an unmigrated stack', () => {
    const along = context(grid, { k2: (0.1 / C) ** 2, ux: 0, uy: 1 });
    const plain = context(grid);
    const c = 5 * grid.width + 300; // x = 3.005
    for (const ctx of [along, plain]) expect(cellResidual(c, ctx.reflectors[0]!, ctx.fields[0]!, 3, ctx)).toBeCloseTo(0.005, 6);
  });
});

describe('alongLineMembers', () => {
  // 3 north-south lines 1 m apart; a strip under the middle line, and a band joining all three (a flat blob)
  const grid: SliceGrid = { originX: 0, originY: 20, cellSize: 0.25, width: 12, height: 80, nodata: -9999 } as SliceGrid;
  const lines: Line[] = [0.5, 1.5, 2.5].map((x, i) => ({ id: `L${i}`, x: Float64Array.from({ length: 200 }, () => x + 0.5), y: Float64Array.from({ length: 200 }, (_, k) => k * 0.1) }));
  it('keeps a strip under one line and splits a blob spanning lines into per-line pieces', () => {
    const stack = synthStack(grid, [0.5], 0.1, (x, y) => (Math.abs(x - 2) < 0.3 && y > 2 && y < 18 ? 40 : 0) + (y > 1 && y < 1.6 && x < 3 ? 40 : 0), 3);
    const scores = [new Float32Array(stack.slices[0]!.values.length)];
    // robust-score stand-in: values are already noise ~1 +- 0.5 plus 40 on the events
    stack.slices[0]!.values.forEach((v, i) => (scores[0]![i] = (v - 1) / 0.5));
    const labels = nearestLineLabels(grid, lines, 2);
    const ms = alongLineMembers(stack, scores, [], lines, labels, { threshold: 5, lowThreshold: 3, minCells: 6, minLengthM: 2, parallelToleranceDeg: 15, metresPerUnit: 1, firstId: 100 });
    // the strip under the middle line (x = 2) is one linear member along the line, about 16 m long;
    // the east-west band (0.6 m x 3 m) is cut by line and no piece is long along its line: none kept
    expect(ms.length).toBe(1);
    expect(ms[0]!.shape.lengthM).toBeGreaterThan(14);
    expect(Math.abs(ms[0]!.x - 2)).toBeLessThan(0.3);
    expect(ms[0]!.id).toBe(100);
    // a strip already held by a main-stack member is not new
    const taken = [{ slice: 0, cells: ms[0]!.cells }];
    expect(alongLineMembers(stack, scores, taken, lines, labels, { threshold: 5, lowThreshold: 3, minCells: 6, minLengthM: 2, parallelToleranceDeg: 15, metresPerUnit: 1, firstId: 0 }).length).toBe(0);
  });

  it('a taken cell is as a cell under the growth threshold: the same strips as with the taken cells scored NaN', () => {
    // events along and across the lines at random, in two slices; main-stack members take random boxes of them
    const r = rng(5);
    let found = 0, cut = 0;
    for (let trial = 0; trial < 20; trial++) {
      const bars = Array.from({ length: 6 }, () => ({ x0: r() * 3, x1: r() * 3, y0: r() * 20, y1: r() * 20 }));
      const stack = synthStack(grid, [0.5, 1], 0.1, (x, y) => (bars.some((b) => x >= Math.min(b.x0, b.x1) && x <= Math.max(b.x0, b.x1) + 0.3 && y >= Math.min(b.y0, b.y1) && y <= Math.max(b.y0, b.y1)) ? 40 : 0), 3 + trial);
      const scores = stack.slices.map((s) => Float32Array.from(s.values, (v) => (v - 1) / 0.5));
      const labels = nearestLineLabels(grid, lines, 2);
      const taken = Array.from({ length: 3 }, () => {
        const slice = Math.floor(r() * 2), c0 = Math.floor(r() * 12), r0 = Math.floor(r() * 80);
        const cells: number[] = [];
        for (let row = r0; row < Math.min(80, r0 + 1 + Math.floor(r() * 30)); row++) for (let col = c0; col < Math.min(12, c0 + 1 + Math.floor(r() * 4)); col++) cells.push(row * 12 + col);
        return { slice, cells: Int32Array.from(cells) };
      });
      const masked = scores.map((z, si) => {
        const out = Float32Array.from(z);
        for (const t of taken) if (t.slice === si) for (const k of t.cells) out[k] = Number.NaN;
        return out;
      });
      const options = { threshold: 5, lowThreshold: 3, minCells: 6, minLengthM: 2, parallelToleranceDeg: 15, metresPerUnit: 1, firstId: 0 };
      const cellsOf = (ms: { slice: number; cells: Int32Array }[]) => ms.map((m) => [m.slice, ...m.cells]);
      const strips = alongLineMembers(stack, scores, taken, lines, labels, options);
      expect(cellsOf(strips)).toEqual(cellsOf(alongLineMembers(stack, masked, [], lines, labels, options)));
      found += strips.length;
      cut += alongLineMembers(stack, scores, [], lines, labels, options).length - strips.length === 0 ? 0 : 1;
    }
    // strips found, and taken cells that changed them in some trials
    expect(found).toBeGreaterThan(40);
    expect(cut).toBeGreaterThan(0);
  });
});
