import type { PlanFeature, Position } from '@lamina/site';
import { cellCentreX, cellCentreY, type SliceGrid } from '@lamina/slices';
import { wasmDistanceField } from './screen-wasm';

/** Kinds of reflector a plan feature stands for (truth.json `aboveGround[].kind` uses the same words). */
export type ReflectorKind = 'wall' | 'building-edge' | 'fence' | 'post' | 'tree' | 'column' | 'overhead' | 'other';

/** A plan feature as reflecting geometry: segments (flat x0,y0,x1,y1,...) and points (flat x,y,...), site CRS. */
export interface Reflector {
  featureId: string;
  kind: ReflectorKind;
  /** `line` for the feature's own geometry, `posts` for the posts of a fence placed at its postSpacingM. */
  source: 'line' | 'posts' | 'point';
  segments: Float64Array;
  points: Float64Array;
  postSpacingM?: number;
  /** Clearance above the ground of an overhead object, m (its air wave travels the slant distance: locusAtHeight). */
  heightM?: number;
}

function ringsOf(f: PlanFeature): Position[][] {
  const g = f.geometry;
  switch (g.type) {
    case 'Point':
      return [];
    case 'LineString':
      return [g.coordinates];
    case 'MultiLineString':
      return g.coordinates;
    case 'Polygon':
      return g.coordinates;
    case 'MultiPolygon':
      return g.coordinates.flat();
  }
}

function kindOf(f: PlanFeature): ReflectorKind {
  switch (f.kind) {
    case 'building':
      return 'building-edge';
    case 'wall':
    case 'fence':
    case 'post':
    case 'tree':
    case 'column':
    case 'overhead':
      return f.kind;
    default:
      return 'other';
  }
}

/**
 * Reflectors of a plan: a building's footprint edges, a wall's or fence's line, a post, tree or
 * column as a point. A fence with `postSpacingM` also gives its posts: one at the start, one every
 * postSpacingM along the line, and one at the end (our assumption where the plan has no posts).
 */
export function reflectorsOf(plan: PlanFeature[], metresPerUnit: number): Reflector[] {
  const out: Reflector[] = [];
  for (const f of plan) {
    const kind = kindOf(f);
    const height = kind === 'overhead' && f.heightM !== undefined ? { heightM: f.heightM } : {};
    if (f.geometry.type === 'Point') {
      out.push({ featureId: f.id, kind, source: 'point', segments: new Float64Array(0), points: Float64Array.from(f.geometry.coordinates), ...height });
      continue;
    }
    const seg: number[] = [];
    for (const r of ringsOf(f)) for (let i = 0; i + 1 < r.length; i++) seg.push(r[i]![0], r[i]![1], r[i + 1]![0], r[i + 1]![1]);
    out.push({ featureId: f.id, kind, source: 'line', segments: Float64Array.from(seg), points: new Float64Array(0), ...height });
    const spacing = f.postSpacingM;
    if (f.kind === 'fence' && spacing && spacing > 0) {
      const step = spacing / metresPerUnit;
      const pts: number[] = [];
      for (const r of ringsOf(f)) {
        let carry = 0;
        for (let i = 0; i + 1 < r.length; i++) {
          const [x0, y0] = r[i]!, [x1, y1] = r[i + 1]!;
          const len = Math.hypot(x1 - x0, y1 - y0);
          for (let s = carry; s < len - 1e-9; s += step) pts.push(x0 + ((x1 - x0) * s) / len, y0 + ((y1 - y0) * s) / len);
          carry = (((carry - len) % step) + step) % step;
        }
        const last = r[r.length - 1]!;
        const px = pts[pts.length - 2], py = pts[pts.length - 1];
        if (px === undefined || py === undefined || Math.hypot(last[0] - px, last[1] - py) > 0.25 * step) pts.push(last[0], last[1]);
      }
      out.push({ featureId: f.id, kind: 'post', source: 'posts', segments: new Float64Array(0), points: Float64Array.from(pts), postSpacingM: spacing });
    }
  }
  return out;
}

/** Offset (x, y) from its foot on the segment `s[i..i+3]` (ax, ay, bx, by), written into `offset`. */
function segmentOffset(s: Float64Array | number[], i: number, x: number, y: number): void {
  const ax = s[i]!, ay = s[i + 1]!, bx = s[i + 2]!, by = s[i + 3]!;
  const dx = bx - ax, dy = by - ay;
  const l2 = dx * dx + dy * dy;
  let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  offset[0] = x - ax - t * dx;
  offset[1] = y - ay - t * dy;
}
const offset = new Float64Array(2);

/** Distance from (x, y) to the segment at `s[i..i+3]` (ax, ay, bx, by). */
function segmentDistance(s: Float64Array | number[], i: number, x: number, y: number): number {
  segmentOffset(s, i, x, y);
  return Math.hypot(offset[0]!, offset[1]!);
}

/** The square of `segmentDistance` (not rounded to it): for comparisons within a margin. */
function segmentDistance2(s: Float64Array | number[], i: number, x: number, y: number): number {
  segmentOffset(s, i, x, y);
  return offset[0]! * offset[0]! + offset[1]! * offset[1]!;
}

function pointDistance2(p: Float64Array, i: number, x: number, y: number): number {
  const ex = x - p[i]!, ey = y - p[i + 1]!;
  return ex * ex + ey * ey;
}

/**
 * Distance from (x, y) to a reflector, site CRS units: the least `Math.hypot` over its segments and
 * points. With more than one element, Math.hypot (slow) is worked out only for those whose squared
 * distance lies within 1e-9 of the least one: far above the rounding of either, so no other element
 * could give a smaller distance.
 */
export function distanceTo(r: Reflector, x: number, y: number): number {
  const s = r.segments, p = r.points;
  if (s.length === 0 && p.length <= 2) return p.length === 2 ? Math.hypot(x - p[0]!, y - p[1]!) : Infinity;
  if (s.length === 4 && p.length === 0) return segmentDistance(s, 0, x, y);
  let near2 = Infinity;
  for (let i = 0; i < s.length; i += 4) near2 = Math.min(near2, segmentDistance2(s, i, x, y));
  for (let i = 0; i < p.length; i += 2) near2 = Math.min(near2, pointDistance2(p, i, x, y));
  const within = near2 * (1 + 1e-9) + 1e-300;
  let best = Infinity;
  for (let i = 0; i < s.length; i += 4) {
    if (!(segmentDistance2(s, i, x, y) <= within)) continue;
    const d = segmentDistance(s, i, x, y);
    if (d < best) best = d;
  }
  for (let i = 0; i < p.length; i += 2) {
    if (!(pointDistance2(p, i, x, y) <= within)) continue;
    const d = Math.hypot(x - p[i]!, y - p[i + 1]!);
    if (d < best) best = d;
  }
  return best;
}

/** Azimuth (degrees from north, [0, 180)) of the reflector segment nearest (x, y); NaN for points. */
export function nearestSegmentAzimuth(r: Reflector, x: number, y: number): number {
  let best = Infinity;
  let az = NaN;
  const s = r.segments;
  for (let i = 0; i < s.length; i += 4) {
    const d = segmentDistance(s, i, x, y);
    if (d < best) {
      best = d;
      az = ((((Math.atan2(s[i + 2]! - s[i]!, s[i + 3]! - s[i + 1]!) * 180) / Math.PI) % 180) + 180) % 180;
    }
  }
  return az;
}

/** Position along a polyline reflector of the foot of (x, y), site CRS units from its start. */
export function alongDistance(r: Reflector, x: number, y: number): number {
  let best = Infinity;
  let along = 0;
  let acc = 0;
  const s = r.segments;
  for (let i = 0; i < s.length; i += 4) {
    const ax = s[i]!, ay = s[i + 1]!, bx = s[i + 2]!, by = s[i + 3]!;
    const dx = bx - ax, dy = by - ay;
    const len = Math.hypot(dx, dy);
    let t = len > 0 ? ((x - ax) * dx + (y - ay) * dy) / (len * len) : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const d = Math.hypot(x - ax - t * dx, y - ay - t * dy);
    if (d < best) {
      best = d;
      along = acc + t * len;
    }
    acc += len;
  }
  return along;
}

/**
 * Distance (metres) from every cell centre of the grid to the reflector: `distanceTo` of each cell
 * times `metresPerUnit`, in WebAssembly (screen-wasm.ts: the same operations, the same numbers) where it
 * runs.
 */
export function distanceField(r: Reflector, grid: SliceGrid, metresPerUnit: number, out?: Float32Array): Float32Array {
  const f = out ?? new Float32Array(grid.width * grid.height);
  return wasmDistanceField(r.segments, r.points, grid, metresPerUnit, f) ?? distanceFieldInJs(r, grid, metresPerUnit, f);
}

/** `distanceField` in JavaScript, a call of `distanceTo` per cell: where WebAssembly does not run, and the kernel's reference in the tests. */
export function distanceFieldInJs(r: Reflector, grid: SliceGrid, metresPerUnit: number, out?: Float32Array): Float32Array {
  const f = out ?? new Float32Array(grid.width * grid.height);
  for (let row = 0; row < grid.height; row++) {
    const y = cellCentreY(grid, row);
    for (let col = 0; col < grid.width; col++) {
      f[row * grid.width + col] = distanceTo(r, cellCentreX(grid, col), y) * metresPerUnit;
    }
  }
  return f;
}
