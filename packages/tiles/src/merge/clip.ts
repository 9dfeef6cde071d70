/** Plan geometry against a tile's core: rings and lines clipped to a box, areas, centroids, contact with an edge. */
import type { Box } from '../grid';

export type Pt = [number, number];
export type Ring = Pt[];

/** A polygon ring clipped to an axis-aligned box (Sutherland-Hodgman: exact for a convex clip region). Fewer than 3 points: nothing left. */
export function clipRing(ring: Ring, box: Box): Ring {
  let pts = ring.length > 1 && ring[0]![0] === ring[ring.length - 1]![0] && ring[0]![1] === ring[ring.length - 1]![1] ? ring.slice(0, -1) : ring.slice();
  const sides: [number, 0 | 1, 1 | -1][] = [[box[0], 0, 1], [box[2], 0, -1], [box[1], 1, 1], [box[3], 1, -1]];
  for (const [edge, axis, sign] of sides) {
    if (pts.length === 0) break;
    const inside = (p: Pt) => sign * (p[axis] - edge) >= 0;
    const out: Pt[] = [];
    for (let i = 0; i < pts.length; i++) {
      const a = pts[(i + pts.length - 1) % pts.length]!;
      const b = pts[i]!;
      if (inside(b)) {
        if (!inside(a)) out.push(cut(a, b, axis, edge));
        out.push(b);
      } else if (inside(a)) out.push(cut(a, b, axis, edge));
    }
    pts = out;
  }
  return pts.length >= 3 ? pts : [];
}

function cut(a: Pt, b: Pt, axis: 0 | 1, edge: number): Pt {
  const t = (edge - a[axis]) / (b[axis] - a[axis]);
  const p: Pt = [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
  p[axis] = edge; // exactly on the edge, so contact with it is found without a tolerance
  return p;
}

/** Signed area (counter-clockwise positive), shoelace about the first vertex (site coordinates are large). */
export function ringArea(ring: Ring): number {
  const o = ring[0];
  if (!o) return 0;
  let s = 0;
  for (let i = 0, n = ring.length; i < n; i++) {
    const a = ring[i]!;
    const b = ring[(i + 1) % n]!;
    s += (a[0] - o[0]) * (b[1] - o[1]) - (b[0] - o[0]) * (a[1] - o[1]);
  }
  return s / 2;
}

/** Area-weighted centroid of polygons (outer rings minus holes); undefined when they have no area. */
export function polygonsCentroid(polygons: Ring[][]): { x: number; y: number; area: number } | undefined {
  const o = polygons[0]?.[0]?.[0];
  if (!o) return undefined;
  let ax = 0, ay = 0, area = 0;
  for (const poly of polygons)
    for (const [k, ring] of poly.entries()) {
      let a2 = 0, cx = 0, cy = 0;
      for (let i = 0, n = ring.length; i < n; i++) {
        const px = ring[i]![0] - o[0], py = ring[i]![1] - o[1];
        const qx = ring[(i + 1) % n]![0] - o[0], qy = ring[(i + 1) % n]![1] - o[1];
        const w = px * qy - qx * py;
        a2 += w;
        cx += (px + qx) * w;
        cy += (py + qy) * w;
      }
      if (a2 === 0) continue;
      const s = k === 0 ? Math.abs(a2 / 2) : -Math.abs(a2 / 2);
      ax += (cx / (3 * a2)) * s;
      ay += (cy / (3 * a2)) * s;
      area += s;
    }
  return area > 0 ? { x: o[0] + ax / area, y: o[1] + ay / area, area } : undefined;
}

/** Polygons (outer ring first, then holes) clipped to a box; a polygon whose outer ring is cut away goes. */
export function clipPolygons(polygons: Ring[][], box: Box): Ring[][] {
  const out: Ring[][] = [];
  for (const poly of polygons) {
    const outer = clipRing(poly[0] ?? [], box);
    if (outer.length === 0 || ringArea(outer) === 0) continue;
    const holes = poly.slice(1).map((h) => clipRing(h, box)).filter((h) => h.length > 0 && ringArea(h) !== 0);
    out.push([outer, ...holes]);
  }
  return out;
}

/** A polyline clipped to a box (Liang-Barsky per segment): the runs inside, each of at least two points. */
export function clipLine(line: Pt[], box: Box): Pt[][] {
  const runs: Pt[][] = [];
  let run: Pt[] = [];
  const flush = () => {
    if (run.length >= 2) runs.push(run);
    run = [];
  };
  for (let i = 1; i < line.length; i++) {
    const a = line[i - 1]!;
    const b = line[i]!;
    const dx = b[0] - a[0], dy = b[1] - a[1];
    let t0 = 0, t1 = 1;
    const ok = [[-dx, a[0] - box[0]], [dx, box[2] - a[0]], [-dy, a[1] - box[1]], [dy, box[3] - a[1]]].every(([p, q]) => {
      if (p === 0) return q! >= 0;
      const r = q! / p!;
      if (p! < 0) t0 = Math.max(t0, r);
      else t1 = Math.min(t1, r);
      return t0 <= t1;
    });
    if (!ok) {
      flush();
      continue;
    }
    const p0: Pt = [a[0] + t0 * dx, a[1] + t0 * dy];
    const p1: Pt = [a[0] + t1 * dx, a[1] + t1 * dy];
    const last = run[run.length - 1];
    if (!last || last[0] !== p0[0] || last[1] !== p0[1]) {
      flush();
      run.push(p0);
    }
    run.push(p1);
    if (t1 < 1) flush();
  }
  flush();
  return runs;
}

/** Length of a polyline. */
export const lineLength = (line: Pt[]): number => line.reduce((s, p, i) => (i === 0 ? 0 : s + Math.hypot(p[0] - line[i - 1]![0], p[1] - line[i - 1]![1])), 0);

export type Side = 'west' | 'east' | 'south' | 'north';
export const SIDES: readonly Side[] = ['west', 'east', 'south', 'north'];

/**
 * Where clipped polygons lie on one side of the box: [from, to] along that side (y for west and east, x for
 * south and north) of the outer-ring vertices within `tol` of it, or undefined when there is none.
 */
export function contact(polygons: Ring[][], box: Box, side: Side, tol: number): [number, number] | undefined {
  const axis = side === 'west' || side === 'east' ? 0 : 1;
  const at = side === 'west' ? box[0] : side === 'east' ? box[2] : side === 'south' ? box[1] : box[3];
  let lo = Infinity, hi = -Infinity;
  for (const poly of polygons)
    for (const p of poly[0] ?? []) {
      if (Math.abs(p[axis] - at) > tol) continue;
      lo = Math.min(lo, p[1 - axis]!);
      hi = Math.max(hi, p[1 - axis]!);
    }
  return lo <= hi ? [lo, hi] : undefined;
}
