import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { mulberry32 as rng } from '@lamina/random';
import { cellCentreX, cellCentreY, type SliceGrid } from '@lamina/slices';
import { cellResidual } from '../src';
import type { ScreenContext } from '../src/context';
import { locusResiduals, locusResidualsInJs } from '../src/locus-residual';
import type { Reflector } from '../src/reflectors';
import { bits } from '@lamina/test-utils';

/** The residual as the formula reads: every element's Math.hypot distance from its locus, the least in magnitude (the first of equals). */
function plainResidual(c: number, refl: Reflector, radiusM: number, ctx: ScreenContext): number {
  const g = ctx.grid, mpu = ctx.metresPerUnit, mig = ctx.migration;
  const row = (c / g.width) | 0;
  const x = cellCentreX(g, c - row * g.width), y = cellCentreY(g, row);
  let best = Infinity;
  const pts = refl.points, seg = refl.segments;
  for (let k = 0; k < pts.length; k += 2) {
    const r = Math.hypot(x - pts[k]!, y - pts[k + 1]!) * mpu - radiusM;
    if (Math.abs(r) < Math.abs(best)) best = r;
  }
  for (let i = 0; i < seg.length; i += 4) {
    const ax = seg[i]!, ay = seg[i + 1]!, dx = seg[i + 2]! - ax, dy = seg[i + 3]! - ay;
    const l2 = dx * dx + dy * dy;
    const rho = mig && l2 > 0 ? radiusM * Math.sqrt(Math.max(0, 1 - mig.k2 * (Math.abs(mig.ux * dy - mig.uy * dx) / Math.sqrt(l2)) ** 2)) : radiusM;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const r = Math.hypot(x - ax - t * dx, y - ay - t * dy) * mpu - rho;
    if (Math.abs(r) < Math.abs(best)) best = r;
  }
  return best;
}

describe('locus residual', () => {
  it('is the least residual over every element, bit for bit, on fences of posts and footprints, migrated or not, in metres and feet', () => {
    const r = rng(21);
    for (const mpu of [1, 0.3048006096012192]) {
      const grid: SliceGrid = { crs: 'EPSG:32617', originX: 500, originY: 900, cellSize: 0.25, width: 120, height: 90, nodata: -9999, metresPerUnit: mpu, isGeographic: false };
      for (const migration of [undefined, { k2: 0.11, ux: 0.6, uy: 0.8 }]) {
        const ctx: ScreenContext = { grid, metresPerUnit: mpu, loci: [], reflectors: [], fields: [], positionM: 0.3, parallelToleranceDeg: 15, rateTolerance: 0.25, ...(migration ? { migration } : {}) };
        // posts on a grid (equal distances: ties) and a ragged footprint
        const points = Float64Array.from({ length: 60 }, (_, i) => (i % 2 === 0 ? 500 + 2 * ((i >> 1) % 6) : 880 + 2 * Math.floor((i >> 1) / 6)));
        const segments = Float64Array.from({ length: 40 }, (_, i) => (i % 2 === 0 ? 505 + 20 * r() : 870 + 20 * r()));
        for (const refl of [
          { featureId: 'p', kind: 'fence', source: 'posts', segments: new Float64Array(0), points },
          { featureId: 's', kind: 'building-edge', source: 'line', segments, points: new Float64Array(0) },
          { featureId: 'b', kind: 'fence', source: 'line', segments, points },
        ] satisfies Reflector[]) {
          for (const radiusM of [0, 0.7, 3.1, 9]) {
            const field = new Float32Array(grid.width * grid.height);
            for (let c = 0; c < grid.width * grid.height; c += 7) expect(cellResidual(c, refl, field, radiusM, ctx)).toBe(plainResidual(c, refl, radiusM, ctx));
          }
        }
      }
    }
  });
});

describe('locus residuals in WebAssembly', () => {
  it('are locusResidual of every sampled cell, bit for bit (posts, footprints and both, migrated or not, random grids)', () => {
    const coord = (lo: number) => fc.oneof(fc.integer({ min: 0, max: 80 }).map((k) => lo + k * 0.25), fc.double({ min: lo, max: lo + 20, noNaN: true }));
    const cases = fc.record({
      points: fc.array(fc.tuple(coord(500), coord(880)), { maxLength: 12 }),
      segments: fc.array(fc.tuple(coord(500), coord(880)), { maxLength: 10 }),
      migrated: fc.boolean(),
      mpu: fc.constantFrom(1, 0.3048006096012192),
      radiusM: fc.double({ min: 0, max: 8, noNaN: true }),
      cells: fc.uniqueArray(fc.integer({ min: 0, max: 80 * 80 - 1 }), { minLength: 0, maxLength: 200 }),
      step: fc.integer({ min: 1, max: 4 }),
    });
    const grid: SliceGrid = { crs: 'EPSG:32617', originX: 500, originY: 900, cellSize: 0.25, width: 80, height: 80, nodata: -9999, metresPerUnit: 1, isGeographic: false };
    const field = Float32Array.from({ length: 80 * 80 }, (_, i) => (i % 97) / 7);
    let compared = 0;
    fc.assert(
      fc.property(cases, ({ points, segments, migrated, mpu, radiusM, cells, step }) => {
        const ctx: ScreenContext = { grid, metresPerUnit: mpu, loci: [], reflectors: [], fields: [], positionM: 0.3, parallelToleranceDeg: 15, rateTolerance: 0.25, ...(migrated ? { migration: { k2: 0.11, ux: 0.6, uy: 0.8 } } : {}) };
        const seg = segments.length % 2 === 0 ? segments : segments.slice(1);
        const refl: Reflector = { featureId: 'f', kind: 'fence', source: 'line', points: Float64Array.from(points.flat()), segments: Float64Array.from(seg.flat()) };
        const sorted = Int32Array.from(cells).sort();
        const fast = locusResiduals(refl, field, radiusM, ctx, sorted, step);
        const js = locusResidualsInJs(refl, field, radiusM, ctx, sorted, step);
        expect(Array.from(fast, bits)).toEqual(Array.from(js, bits));
        compared += js.length;
      }),
      { numRuns: 400, seed: 31 },
    );
    expect(compared).toBeGreaterThan(1000);
  });
});
