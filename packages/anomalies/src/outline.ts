import type { SliceGrid } from '@lamina/slices';
import type { Outline, Ring } from './types';

/**
 * Outline of a set of grid cells as polygons in the site CRS, by tracing cell boundaries.
 * Each boundary edge is emitted with the cells on its left, so outer rings run counter-clockwise
 * and holes clockwise (RFC 7946 section 3.1.6). Where two cells touch only at a corner the left turn
 * is taken, so rings stay simple and such pieces become separate polygons (a MultiPolygon).
 * Collinear vertices are dropped.
 */
export function traceOutline(cells: ArrayLike<number>, grid: SliceGrid): Outline {
  if (cells.length === 0) return { type: 'Polygon', coordinates: [] };
  let c0 = Infinity, c1 = -Infinity, r0 = Infinity, r1 = -Infinity;
  for (let i = 0; i < cells.length; i++) {
    const k = cells[i]!;
    const r = (k / grid.width) | 0;
    const c = k - r * grid.width;
    if (c < c0) c0 = c;
    if (c > c1) c1 = c;
    if (r < r0) r0 = r;
    if (r > r1) r1 = r;
  }
  // local mask with a one-cell margin
  const w = c1 - c0 + 3;
  const h = r1 - r0 + 3;
  const mask = new Uint8Array(w * h);
  for (let i = 0; i < cells.length; i++) {
    const k = cells[i]!;
    const r = (k / grid.width) | 0;
    const c = k - r * grid.width;
    mask[(r - r0 + 1) * w + (c - c0 + 1)] = 1;
  }
  // vertices (i, j) with i in 0..w, j in 0..h; y grows northwards, so j grows southwards
  const vw = w + 1;
  // boundary edges in the order they are met, and the (at most two) edges leaving each vertex in that
  // order: two leave a vertex where cells touch only at a corner
  const maxEdges = 4 * cells.length;
  const from = new Int32Array(maxEdges), to = new Int32Array(maxEdges);
  const dir = new Uint8Array(maxEdges); // 0 east, 1 north, 2 west, 3 south
  const out1 = new Int32Array(vw * (h + 1)).fill(-1), out2 = new Int32Array(vw * (h + 1)).fill(-1);
  let nEdges = 0;
  const add = (a: number, b: number, d: number) => {
    from[nEdges] = a;
    to[nEdges] = b;
    dir[nEdges] = d;
    if (out1[a]! < 0) out1[a] = nEdges;
    else out2[a] = nEdges;
    nEdges++;
  };
  for (let r = 1; r < h - 1; r++) {
    for (let c = 1; c < w - 1; c++) {
      if (!mask[r * w + c]) continue;
      const bl = (r + 1) * vw + c, br = (r + 1) * vw + c + 1, tr = r * vw + c + 1, tl = r * vw + c;
      if (!mask[(r + 1) * w + c]) add(bl, br, 0);
      if (!mask[r * w + c + 1]) add(br, tr, 1);
      if (!mask[(r - 1) * w + c]) add(tr, tl, 2);
      if (!mask[r * w + c - 1]) add(tl, bl, 3);
    }
  }
  const used = new Uint8Array(nEdges);
  const rings: Ring[] = [];
  const toXY = (v: number): [number, number] => {
    const j = (v / vw) | 0;
    const i = v - j * vw;
    return [grid.originX + (i - 1 + c0) * grid.cellSize, grid.originY - (j - 1 + r0) * grid.cellSize];
  };
  // preference of the next edge by its turn from the last: left (3), straight (2), right (1)
  const RANK = [2, 3, 0, 1];
  // one ring's vertices and edge directions; a vertex's place in the loop being split off (-1: none)
  const verts = new Int32Array(nEdges), dirs = new Uint8Array(nEdges);
  const at = new Int32Array(vw * (h + 1)).fill(-1);
  const sv = new Int32Array(nEdges), sd = new Uint8Array(nEdges);
  const emit = (vs: Int32Array, ds: Uint8Array, a: number, b: number) => {
    const ring: Ring = [];
    const n = b - a;
    for (let i = 0; i < n; i++) if (ds[a + i] !== ds[a + ((i - 1 + n) % n)]) ring.push(toXY(vs[a + i]!));
    if (ring.length < 3) return;
    ring.push([ring[0]![0], ring[0]![1]]);
    rings.push(ring);
  };
  for (let e0 = 0; e0 < nEdges; e0++) {
    if (used[e0]) continue;
    let nv = 0;
    let e = e0;
    while (!used[e]) {
      used[e] = 1;
      verts[nv] = from[e]!;
      dirs[nv++] = dir[e]!;
      let next = -1;
      let best = -1;
      for (let k = 0; k < 2; k++) {
        const o = k === 0 ? out1[to[e]!]! : out2[to[e]!]!;
        if (o < 0 || used[o]) continue;
        const rank = RANK[(dir[o]! - dir[e]! + 4) % 4]!;
        if (rank > best) {
          best = rank;
          next = o;
        }
      }
      if (next < 0) break;
      e = next;
    }
    // a ring that passes a vertex twice touches itself there: split it into simple loops
    // (one outer and one hole, told apart by orientation)
    let ns = 0;
    for (let i = 0; i < nv; i++) {
      const v = verts[i]!;
      const p = at[v]!;
      if (p >= 0) {
        for (let q = p; q < ns; q++) at[sv[q]!] = -1;
        emit(sv, sd, p, ns);
        ns = p;
      }
      at[v] = ns;
      sv[ns] = v;
      sd[ns++] = dirs[i]!;
    }
    emit(sv, sd, 0, ns);
    for (let q = 0; q < ns; q++) at[sv[q]!] = -1;
  }
  const outers: Ring[][] = [];
  const holes: Ring[] = [];
  for (const r of rings) (ringArea(r) > 0 ? outers.push([r]) : holes.push(r));
  for (const hole of holes) {
    const a = hole[0]!, b = hole[1]!;
    const px = 0.5 * (a[0] + b[0]), py = 0.5 * (a[1] + b[1]);
    // the smallest outer ring holding it (islands may sit inside other holes)
    let owner: Ring[] | undefined;
    for (const p of outers) if (pointInRing(px, py, p[0]!) && (!owner || ringArea(p[0]!) < ringArea(owner[0]!))) owner = p;
    owner ??= outers[0];
    owner?.push(hole);
  }
  if (outers.length === 1) return { type: 'Polygon', coordinates: outers[0]! };
  return { type: 'MultiPolygon', coordinates: outers };
}

/** Signed area (shoelace), positive for counter-clockwise rings. */
export function ringArea(ring: Ring): number {
  let s = 0;
  for (let i = 0; i + 1 < ring.length; i++) s += ring[i]![0] * ring[i + 1]![1] - ring[i + 1]![0] * ring[i]![1];
  return 0.5 * s;
}

/** Even-odd ray casting. */
export function pointInRing(x: number, y: number, ring: Ring): boolean {
  let inside = false;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
    const xi = ring[i]![0], yi = ring[i]![1], xj = ring[j]![0], yj = ring[j]![1];
    if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** Area of an outline (outer rings minus holes), CRS units squared. */
export function outlineArea(o: Outline): number {
  const polys = o.type === 'Polygon' ? [o.coordinates] : o.coordinates;
  let s = 0;
  for (const p of polys) for (const r of p) s += ringArea(r);
  return s;
}
