import { describe, expect, it } from 'vitest';
import { buildIndex, idwGrid, idwGridParallel, nearestWithin, searchFrame, type SliceGrid } from '../src';
import { mulberry32 as rng } from '@lamina/random';
import { gdalGridInvdistnn } from '@lamina/test-utils';

const NODATA = -9999;

function randomPoints(n: number, seed: number, maxX = 25, maxY = 20) {
  const r = rng(seed);
  const coords = new Float64Array(2 * n);
  const v1 = new Float64Array(n);
  const v2 = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    coords[2 * i] = r() * maxX;
    coords[2 * i + 1] = r() * maxY;
    // Float32 values, as the slice values are, so both sides grid the same numbers.
    v1[i] = Math.fround(1 + 9 * r());
    v2[i] = Math.fround(-50 + 100 * r());
  }
  return { coords, v1, v2 };
}

function interleave(...bands: Float64Array[]): Float32Array {
  const n = bands[0]!.length;
  const out = new Float32Array(n * bands.length);
  for (let i = 0; i < n; i++) for (let b = 0; b < bands.length; b++) out[i * bands.length + b] = bands[b]![i]!;
  return out;
}

function xs(coords: Float64Array, sx = 1): Float64Array {
  return Float64Array.from({ length: coords.length / 2 }, (_, i) => coords[2 * i]! * sx);
}
function ys(coords: Float64Array, sy = 1): Float64Array {
  return Float64Array.from({ length: coords.length / 2 }, (_, i) => coords[2 * i + 1]! * sy);
}

// Tolerance: both sides grid the same Float32 values; our grid is Float32 (relative rounding 2^-24 = 6e-8)
// and GDAL's Float64, and the sums run in a different order; 1e-6 relative leaves room for both. Nodata cells must match exactly. Random
// (continuous) positions make equal distances at the k-th neighbour, where the two could pick different
// points, practically impossible.
function expectSameGrid(ours: Float32Array, ref: Float64Array) {
  expect(ours.length).toBe(ref.length);
  let nodata = 0;
  for (let i = 0; i < ref.length; i++) {
    const r = ref[i]!;
    if (r === NODATA) {
      nodata++;
      expect(ours[i], `cell ${i}`).toBe(NODATA);
    } else {
      expect(Math.abs(ours[i]! - r), `cell ${i}: ours ${ours[i]} gdal ${r}`).toBeLessThanOrEqual(1e-6 * Math.max(1, Math.abs(r)));
    }
  }
  return nodata;
}

const grid: SliceGrid = { crs: 'EPSG:32617', originX: 0, originY: 20, cellSize: 0.5, width: 60, height: 40, nodata: NODATA };

describe('idwGrid against gdal_grid -a invdistnn (GDAL 3.6, Debian gdal-bin)', () => {
  const { coords, v1, v2 } = randomPoints(400, 7);

  it('isotropic: two bands from one neighbour search agree cell by cell, nodata beyond the radius', () => {
    const ours = idwGrid(coords, interleave(v1, v2), 2, grid, { radius: 2, maxPoints: 6 });
    for (const [b, v] of [v1, v2].entries()) {
      const ref = gdalGridInvdistnn({ x: xs(coords), y: ys(coords), z: v, minX: 0, maxX: 30, minY: 0, maxY: 20, width: 60, height: 40, radius: 2, maxPoints: 6 });
      const nodata = expectSameGrid(ours[b]!, ref);
      expect(nodata).toBeGreaterThan(100); // no points beyond x = 25: the east strip is empty
    }
  });

  it('power 3 and max_points 1 (nearest point) agree too', () => {
    const ours = idwGrid(coords, interleave(v1), 1, grid, { radius: 1.5, maxPoints: 1, power: 3 });
    const ref = gdalGridInvdistnn({ x: xs(coords), y: ys(coords), z: v1, minX: 0, maxX: 30, minY: 0, maxY: 20, width: 60, height: 40, radius: 1.5, maxPoints: 1, power: 3 });
    expectSameGrid(ours[0]!, ref);
  });

  it('anisotropic along x: an ellipse (1.5 along, 3 across) equals a circle on points with y scaled by 0.5', () => {
    const ours = idwGrid(coords, interleave(v1), 1, grid, { radius: 1.5, radiusAcross: 3, directionDeg: 0, maxPoints: 8 });
    const ref = gdalGridInvdistnn({ x: xs(coords), y: ys(coords, 0.5), z: v1, minX: 0, maxX: 30, minY: 0, maxY: 10, width: 60, height: 40, radius: 1.5, maxPoints: 8 });
    expectSameGrid(ours[0]!, ref);
  });

  it('anisotropic along y: the same with x scaled', () => {
    const ours = idwGrid(coords, interleave(v2), 1, grid, { radius: 1.5, radiusAcross: 3, directionDeg: 90, maxPoints: 8 });
    const ref = gdalGridInvdistnn({ x: xs(coords, 0.5), y: ys(coords), z: v2, minX: 0, maxX: 15, minY: 0, maxY: 20, width: 60, height: 40, radius: 1.5, maxPoints: 8 });
    expectSameGrid(ours[0]!, ref);
  });
});

describe('idwGrid invariants', () => {
  const { coords, v1 } = randomPoints(300, 11);
  const base = idwGrid(coords, interleave(v1), 1, grid, { radius: 1.5, radiusAcross: 3, directionDeg: 0, maxPoints: 8 })[0]!;

  it('rotating points, grid and survey direction by 90 degrees rotates the result', () => {
    const rot = new Float64Array(coords.length);
    for (let i = 0; i < coords.length / 2; i++) {
      rot[2 * i] = -coords[2 * i + 1]!;
      rot[2 * i + 1] = coords[2 * i]!;
    }
    const g2: SliceGrid = { ...grid, originX: -20, originY: 30, width: 40, height: 60 };
    const out = idwGrid(rot, interleave(v1), 1, g2, { radius: 1.5, radiusAcross: 3, directionDeg: 90, maxPoints: 8 })[0]!;
    for (let r = 0; r < grid.height; r++) {
      for (let c = 0; c < grid.width; c++) {
        const a = base[r * grid.width + c]!;
        const b = out[(grid.width - 1 - c) * g2.width + r]!;
        if (a === NODATA) expect(b).toBe(NODATA);
        else expect(Math.abs(a - b)).toBeLessThanOrEqual(1e-5 * Math.abs(a));
      }
    }
  });

  it.each([1e-3, 1e3])('scaling positions, cell size and radii by %s leaves the grid unchanged', (s) => {
    const scaled = coords.map((v) => v * s);
    const g2: SliceGrid = { ...grid, originX: grid.originX * s, originY: grid.originY * s, cellSize: grid.cellSize * s };
    const out = idwGrid(scaled, interleave(v1), 1, g2, { radius: 1.5 * s, radiusAcross: 3 * s, directionDeg: 0, maxPoints: 8 })[0]!;
    for (let i = 0; i < base.length; i++) {
      if (base[i] === NODATA) expect(out[i]).toBe(NODATA);
      else expect(Math.abs(out[i]! - base[i]!)).toBeLessThanOrEqual(1e-5 * Math.abs(base[i]!));
    }
  });

  it('a NaN value leaves that point out of that band only (weights renormalised)', () => {
    const vals = interleave(v1, v1);
    for (let i = 0; i < 300; i += 3) vals[2 * i + 1] = Number.NaN;
    const [a, b] = idwGrid(coords, vals, 2, grid, { radius: 2, maxPoints: 6 });
    const keep = Array.from({ length: 300 }, (_, i) => i).filter((i) => i % 3 !== 0);
    // Brute force on the same neighbour sets: band 2 is the IDW over the found points that are not NaN.
    const frame = searchFrame({ radius: 2 });
    const index = buildIndex(coords, frame);
    const ids = new Int32Array(6);
    const d2 = new Float64Array(6);
    const stack = new Int32Array(512);
    let checked = 0;
    for (let cell = 0; cell < grid.width * grid.height; cell += 37) {
      const x = (cell % grid.width + 0.5) * 0.5;
      const y = 20 - (Math.floor(cell / grid.width) + 0.5) * 0.5;
      const n = nearestWithin(index, x, y, 2, 6, ids, d2, stack);
      let num = 0;
      let den = 0;
      for (let j = 0; j < n; j++) {
        if (!keep.includes(ids[j]!)) continue;
        num += v1[ids[j]!]! / d2[j]!;
        den += 1 / d2[j]!;
      }
      if (n === 0) expect(a![cell]).toBe(NODATA);
      if (den > 0) {
        expect(b![cell]).toBeCloseTo(num / den, 4);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(20);
  });

  it('nearestWithin returns the k nearest within r, as a brute-force scan does', () => {
    const frame = searchFrame({ radius: 3 });
    const index = buildIndex(coords, frame);
    const r = rng(5);
    const ids = new Int32Array(10);
    const d2 = new Float64Array(10);
    const stack = new Int32Array(512);
    for (let q = 0; q < 200; q++) {
      const qx = r() * 30 - 2;
      const qy = r() * 24 - 2;
      const n = nearestWithin(index, qx, qy, 3, 10, ids, d2, stack);
      const brute = Array.from({ length: 300 }, (_, i) => ({ i, d: (coords[2 * i]! - qx) ** 2 + (coords[2 * i + 1]! - qy) ** 2 }))
        .filter((p) => p.d <= 9)
        .sort((p, q2) => p.d - q2.d)
        .slice(0, 10);
      expect(n).toBe(brute.length);
      expect(Array.from(ids.subarray(0, n))).toEqual(brute.map((p) => p.i));
    }
  });
});

describe('idwGridParallel', () => {
  it('on worker threads gives the same grid as idwGrid, cell for cell', async () => {
    const { coords } = randomPoints(20000, 13, 100, 75);
    const nb = 20;
    const vals = Float32Array.from({ length: 20000 * nb }, (_, i) => Math.fround(Math.sin(i * 0.7) + (i % nb)));
    vals[17] = Number.NaN;
    const g: SliceGrid = { crs: 'EPSG:32617', originX: 0, originY: 75, cellSize: 0.25, width: 400, height: 300, nodata: NODATA };
    const opts = { radius: 0.8, radiusAcross: 1.6, directionDeg: 30, maxPoints: 10 };
    const one = idwGrid(coords, vals, nb, g, opts);
    const par = await idwGridParallel(coords, vals, nb, g, opts, 2);
    for (let b = 0; b < nb; b++) {
      let diff = 0;
      for (let i = 0; i < one[b]!.length; i++) if (one[b]![i] !== par[b]![i]) diff++;
      expect(diff).toBe(0);
    }
  });
});
