import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { PlanFeature } from '@lamina/site';
import { cellCentreX, cellCentreY, type SliceGrid } from '@lamina/slices';
import { distanceField, distanceTo, reflectorsOf, type Reflector } from '../src';
import { distanceFieldInJs } from '../src/reflectors';

/** Distance to a reflector as first written: Math.hypot to every segment's foot and every point, the least. */
function plainDistanceTo(r: Reflector, x: number, y: number): number {
  let best = Infinity;
  const s = r.segments, p = r.points;
  for (let i = 0; i < s.length; i += 4) {
    const ax = s[i]!, ay = s[i + 1]!, dx = s[i + 2]! - ax, dy = s[i + 3]! - ay;
    const l2 = dx * dx + dy * dy;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    best = Math.min(best, Math.hypot(x - ax - t * dx, y - ay - t * dy));
  }
  for (let i = 0; i < p.length; i += 2) best = Math.min(best, Math.hypot(x - p[i]!, y - p[i + 1]!));
  return best;
}

/** Reflectors of segments and points whose coordinates `coord` gives (up to `most` numbers of each). */
function reflectors(coord: fc.Arbitrary<number>, most: number): fc.Arbitrary<Reflector> {
  return fc.record({ segments: fc.array(coord, { maxLength: most }), points: fc.array(coord, { maxLength: most }) }).map(({ segments, points }) => ({
    featureId: 'f',
    kind: 'wall' as const,
    source: 'line' as const,
    segments: Float64Array.from(segments.slice(0, segments.length - (segments.length % 4))),
    points: Float64Array.from(points.slice(0, points.length - (points.length % 2))),
  }));
}

describe('distanceTo', () => {
  it('is the least Math.hypot over every segment and point (reflectors of one to twelve elements, far from the origin, equal distances)', () => {
    // coordinates on a coarse lattice far from the origin: many elements at equal or nearly equal distances
    const coord = fc.integer({ min: -40, max: 40 }).map((k) => 500_000 + k * 0.25);
    const reflector = reflectors(coord, 24);
    fc.assert(
      fc.property(reflector, coord, coord, (r, x, y) => {
        expect(distanceTo(r, x, y)).toBe(plainDistanceTo(r, x, y));
      }),
      { numRuns: 3000, seed: 15 },
    );
  });
});

describe('distanceField', () => {
  /** The field cell by cell in JavaScript (distanceTo of every cell centre, times metres per unit), its values' bits. */
  function fieldOfCells(r: Reflector, grid: SliceGrid, mpu: number): Uint32Array {
    const f = new Float32Array(grid.width * grid.height);
    for (let row = 0; row < grid.height; row++)
      for (let col = 0; col < grid.width; col++) f[row * grid.width + col] = distanceTo(r, cellCentreX(grid, col), cellCentreY(grid, row)) * mpu;
    expect(distanceFieldInJs(r, grid, mpu)).toEqual(f);
    return new Uint32Array(f.buffer);
  }
  const bitsOf = (f: Float32Array) => new Uint32Array(f.buffer, f.byteOffset, f.length);
  // on a lattice (equal distances) or anywhere near the grid
  const coord = fc.oneof(
    fc.integer({ min: -60, max: 60 }).map((k) => 500_000 + k * 0.25),
    fc.double({ min: 499_980, max: 500_020, noNaN: true }),
  );
  const reflector = reflectors(coord, 20);

  it('in WebAssembly is distanceTo of every cell centre in JavaScript (the same float32 numbers, bit for bit), for reflectors of none to ten elements', () => {
    const grid = fc.record({ width: fc.integer({ min: 1, max: 40 }), height: fc.integer({ min: 1, max: 40 }), cellSize: fc.constantFrom(0.125, 0.25, 0.3), mpu: fc.constantFrom(1, 0.3048) });
    fc.assert(
      fc.property(reflector, grid, (r, g) => {
        const sg = { crs: 'local', originX: 499_990, originY: 500_010, cellSize: g.cellSize, width: g.width, height: g.height, nodata: -9999 } as SliceGrid;
        expect(bitsOf(distanceField(r, sg, g.mpu))).toEqual(fieldOfCells(r, sg, g.mpu));
      }),
      { numRuns: 300, seed: 22 },
    );
  });

  it('is the same over a grid of several blocks of rows (a fence and its posts), into a given array', () => {
    const sg = { crs: 'local', originX: 499_980, originY: 500_020, cellSize: 0.125, width: 301, height: 250, nodata: -9999 } as SliceGrid;
    const r = reflectorsOf([{ id: 'fence', kind: 'fence', postSpacingM: 2.5, geometry: { type: 'LineString', coordinates: [[499_985, 500_000], [500_010, 500_005], [500_015, 499_995]] } } as PlanFeature], 1);
    for (const x of r) {
      const out = new Float32Array(sg.width * sg.height);
      expect(distanceField(x, sg, 1, out)).toBe(out);
      expect(bitsOf(out)).toEqual(fieldOfCells(x, sg, 1));
    }
  });
});
