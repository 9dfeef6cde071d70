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
  const from: number[] = [];
  const to: number[] = [];
  const dir: number[] = []; // 0 east, 1 north, 2 west, 3 south
  const add = (a: number, b: number, d: number) => {
    from.push(a);
    to.push(b);
    dir.push(d);
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
  const out = new Map<number, number[]>();
  for (let e = 0; e < from.length; e++) {
    const list = out.get(from[e]!);
    if (list) list.push(e);
    else out.set(from[e]!, [e]);
  }
  const used = new Uint8Array(from.length);
  const rings: Ring[] = [];
  const toXY = (v: number): [number, number] => {
    const j = (v / vw) | 0;
    const i = v - j * vw;
    return [grid.originX + (i - 1 + c0) * grid.cellSize, grid.originY - (j - 1 + r0) * grid.cellSize];
  };
  for (let e0 = 0; e0 < from.length; e0++) {
    if (used[e0]) continue;
    const verts: number[] = [];
    const dirs: number[] = [];
    let e = e0;
    while (!used[e]) {
      used[e] = 1;
      verts.push(from[e]!);
      dirs.push(dir[e]!);
      const options = out.get(to[e]!) ?? [];
      let next = -1;
      let best = -1;
      for (const o of options) {
        if (used[o]) continue;
        // preference: left turn (3), straight (2), right turn (1)
        const turn = (dir[o]! - dir[e]! + 4) % 4;
        const rank = turn === 1 ? 3 : turn === 0 ? 2 : turn === 3 ? 1 : 0;
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
    const sv: number[] = [];
    const sd: number[] = [];
    const at = new Map<number, number>();
    const emit = (vs: number[], ds: number[]) => {
      const ring: Ring = [];
      for (let i = 0; i < vs.length; i++) if (ds[i] !== ds[(i - 1 + ds.length) % ds.length]) ring.push(toXY(vs[i]!));
      if (ring.length < 3) return;
      ring.push([ring[0]![0], ring[0]![1]]);
      rings.push(ring);
    };
    for (let i = 0; i < verts.length; i++) {
      const v = verts[i]!;
      const p = at.get(v);
      if (p !== undefined) {
        const vs = sv.splice(p);
        const ds = sd.splice(p);
        for (const u of vs) at.delete(u);
        emit(vs, ds);
      }
      at.set(v, sv.length);
      sv.push(v);
      sd.push(dirs[i]!);
    }
    emit(sv, sd);
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
