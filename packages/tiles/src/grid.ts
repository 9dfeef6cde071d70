/** The tile grid: tile ids, which tile owns a point, which traces fall in a box. */
import { type Geometry } from '@lamina/site';

/** Box: [minX, minY, maxX, maxY] in site CRS units. */
export type Box = [number, number, number, number];

const num = (v: number): string => (v < 0 ? `m${-v}` : String(v));
export const tileId = (col: number, row: number): string => `tile_${num(col)}_${num(row)}`;

/** The (col, row) of the tile whose core holds (x, y), in site CRS units. */
export function tileOf(x: number, y: number, sizeUnits: number): [number, number] {
  return [Math.floor(x / sizeUnits), Math.floor(y / sizeUnits)];
}

/**
 * Runs of consecutive traces inside a box, each grown by one trace at both ends (so a piece always spans
 * its boundary and never has a single trace), overlapping runs merged. Inclusive [first, last] pairs.
 */
export function tracesInBox(x: ArrayLike<number>, y: ArrayLike<number>, box: Box): [number, number][] {
  const n = x.length;
  const runs: [number, number][] = [];
  let start = -1;
  for (let i = 0; i <= n; i++) {
    const inside = i < n && x[i]! >= box[0] && x[i]! <= box[2] && y[i]! >= box[1] && y[i]! <= box[3];
    if (inside && start < 0) start = i;
    if (!inside && start >= 0) {
      const a = Math.max(0, start - 1);
      const b = Math.min(n - 1, i);
      const prev = runs[runs.length - 1];
      if (prev && a <= prev[1] + 1) prev[1] = b;
      else runs.push([a, b]);
      start = -1;
    }
  }
  return runs;
}

/** Bounding box of a GeoJSON geometry's coordinates. */
export function geometryBox(g: Geometry): Box {
  const b: Box = [Infinity, Infinity, -Infinity, -Infinity];
  const walk = (c: unknown): void => {
    if (Array.isArray(c) && typeof c[0] === 'number') {
      const [px, py] = c as number[];
      b[0] = Math.min(b[0], px!);
      b[1] = Math.min(b[1], py!);
      b[2] = Math.max(b[2], px!);
      b[3] = Math.max(b[3], py!);
    } else if (Array.isArray(c)) c.forEach(walk);
  };
  walk(g.coordinates);
  return b;
}

/** True when boxes a and b come within `margin` of each other. */
export const near = (a: Box, b: Box, margin: number): boolean => a[0] <= b[2] + margin && a[2] >= b[0] - margin && a[1] <= b[3] + margin && a[3] >= b[1] - margin;
