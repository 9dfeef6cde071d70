import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { SliceGrid } from '@lamina/slices';
import { traceOutline, type Outline, type Ring } from '../src';
import { grid } from './helpers';

/**
 * The outline tracer as first written (edges in arrays, the edges leaving each vertex and a ring's
 * vertices in Maps): the second method the typed-array tracer is held to, ring for ring.
 */
function plainTraceOutline(cells: number[], g: SliceGrid): Outline {
  if (cells.length === 0) return { type: 'Polygon', coordinates: [] };
  const rows = cells.map((k) => (k / g.width) | 0), cols = cells.map((k, i) => k - rows[i]! * g.width);
  const c0 = Math.min(...cols), c1 = Math.max(...cols), r0 = Math.min(...rows), r1 = Math.max(...rows);
  const w = c1 - c0 + 3, h = r1 - r0 + 3, vw = w + 1;
  const mask = new Uint8Array(w * h);
  cells.forEach((_, i) => (mask[(rows[i]! - r0 + 1) * w + (cols[i]! - c0 + 1)] = 1));
  const edges: { from: number; to: number; dir: number }[] = [];
  for (let r = 1; r < h - 1; r++)
    for (let c = 1; c < w - 1; c++) {
      if (!mask[r * w + c]) continue;
      const bl = (r + 1) * vw + c, br = (r + 1) * vw + c + 1, tr = r * vw + c + 1, tl = r * vw + c;
      if (!mask[(r + 1) * w + c]) edges.push({ from: bl, to: br, dir: 0 });
      if (!mask[r * w + c + 1]) edges.push({ from: br, to: tr, dir: 1 });
      if (!mask[(r - 1) * w + c]) edges.push({ from: tr, to: tl, dir: 2 });
      if (!mask[r * w + c - 1]) edges.push({ from: tl, to: bl, dir: 3 });
    }
  const out = new Map<number, number[]>();
  edges.forEach((e, i) => out.set(e.from, [...(out.get(e.from) ?? []), i]));
  const used = new Set<number>();
  const toXY = (v: number): [number, number] => [g.originX + ((v % vw) - 1 + c0) * g.cellSize, g.originY - (((v / vw) | 0) - 1 + r0) * g.cellSize];
  const rings: Ring[] = [];
  const emit = (vs: number[], ds: number[]) => {
    const ring: Ring = vs.filter((_, i) => ds[i] !== ds[(i - 1 + ds.length) % ds.length]).map(toXY);
    if (ring.length < 3) return;
    rings.push([...ring, [ring[0]![0], ring[0]![1]]]);
  };
  for (let e0 = 0; e0 < edges.length; e0++) {
    if (used.has(e0)) continue;
    const verts: number[] = [], dirs: number[] = [];
    for (let e = e0; !used.has(e); ) {
      used.add(e);
      verts.push(edges[e]!.from);
      dirs.push(edges[e]!.dir);
      // left turn, then straight, then right turn, then back
      const free = (out.get(edges[e]!.to) ?? []).filter((o) => !used.has(o));
      const rank = (o: number) => [2, 3, 0, 1][(edges[o]!.dir - edges[e]!.dir + 4) % 4]!;
      const next = free.reduce((b, o) => (b < 0 || rank(o) > rank(b) ? o : b), -1);
      if (next < 0) break;
      e = next;
    }
    let sv: number[] = [], sd: number[] = [];
    for (let i = 0; i < verts.length; i++) {
      const p = sv.indexOf(verts[i]!);
      if (p >= 0) {
        emit(sv.slice(p), sd.slice(p));
        sv = sv.slice(0, p);
        sd = sd.slice(0, p);
      }
      sv.push(verts[i]!);
      sd.push(dirs[i]!);
    }
    emit(sv, sd);
  }
  const area = (r: Ring) => r.slice(0, -1).reduce((s, p, i) => s + p[0] * r[i + 1]![1] - r[i + 1]![0] * p[1], 0) / 2;
  const inRing = (x: number, y: number, ring: Ring) => {
    let inside = false;
    for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
      const [xi, yi] = ring[i]!, [xj, yj] = ring[j]!;
      if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
    }
    return inside;
  };
  const outers = rings.filter((r) => area(r) > 0).map((r) => [r]);
  for (const hole of rings.filter((r) => !(area(r) > 0))) {
    const px = 0.5 * (hole[0]![0] + hole[1]![0]), py = 0.5 * (hole[0]![1] + hole[1]![1]);
    let owner: Ring[] | undefined;
    for (const p of outers) if (inRing(px, py, p[0]!) && (!owner || area(p[0]!) < area(owner[0]!))) owner = p;
    (owner ?? outers[0])?.push(hole);
  }
  return outers.length === 1 ? { type: 'Polygon', coordinates: outers[0]! } : { type: 'MultiPolygon', coordinates: outers };
}

describe('traceOutline', () => {
  it('gives the rings of the plain tracer on random cell sets (holes, islands, cells touching at corners)', () => {
    const g = grid(23, 17, 0.25);
    const cellSet = fc.uniqueArray(fc.integer({ min: 0, max: 23 * 17 - 1 }), { minLength: 1, maxLength: 250 });
    fc.assert(
      fc.property(cellSet, (list) => {
        const cells = list.sort((a, b) => a - b);
        expect(traceOutline(Int32Array.from(cells), g)).toEqual(plainTraceOutline(cells, g));
      }),
      { numRuns: 500, seed: 15 },
    );
  });
});
