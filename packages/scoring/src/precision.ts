import type { VelocityModel } from '@lamina/velocity';

type XY = [number, number];

/** Area of polygon rings (outer minus holes by the sign of each ring relative to the first), in squared input units. */
export function ringsArea(polygons: XY[][][]): number {
  let total = 0;
  for (const rings of polygons) {
    let a = 0;
    rings.forEach((ring, k) => {
      let s = 0;
      for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) s += (ring[j]![0] + ring[i]![0]) * (ring[j]![1] - ring[i]![1]);
      a += k === 0 ? Math.abs(s) / 2 : -Math.abs(s) / 2;
    });
    total += Math.max(0, a);
  }
  return total;
}

type Geo = { type: string; coordinates: unknown } | null | undefined;

/** The polygons of a target: its geometry when it is a (Multi)Polygon, else its `properties.outline`. */
export function targetPolygons(geometry: Geo, outline: Geo, from: (lon: number, lat: number) => XY): XY[][][] {
  const polys = (g: Geo): XY[][][] => {
    if (!g) return [];
    const ring = (r: number[][]) => r.map((c) => from(c[0]!, c[1]!));
    if (g.type === 'Polygon') return [(g.coordinates as number[][][]).map(ring)];
    if (g.type === 'MultiPolygon') return (g.coordinates as number[][][][]).map((p) => p.map(ring));
    return [];
  };
  const p = polys(geometry);
  return p.length ? p : polys(outline);
}

/**
 * Area within `coverM` of the survey lines, m2: cells of `cellM` (centres tested) marked by each segment.
 * Two survey directions over one area count it once.
 */
export function surveyedAreaM2(lines: XY[][], metresPerUnit: number, coverM: number, cellM = 0.1): number {
  let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
  for (const l of lines)
    for (const [x, y] of l) {
      minX = Math.min(minX, x * metresPerUnit);
      minY = Math.min(minY, y * metresPerUnit);
      maxX = Math.max(maxX, x * metresPerUnit);
      maxY = Math.max(maxY, y * metresPerUnit);
    }
  if (!Number.isFinite(minX)) return 0;
  minX -= coverM + cellM;
  minY -= coverM + cellM;
  const w = Math.ceil((maxX + coverM + cellM - minX) / cellM);
  const h = Math.ceil((maxY + coverM + cellM - minY) / cellM);
  const mark = new Uint8Array(w * h);
  const c2 = coverM * coverM;
  for (const l of lines) {
    const pts = l.map(([x, y]) => [x * metresPerUnit - minX, y * metresPerUnit - minY] as XY);
    if (pts.length === 1) pts.push(pts[0]!);
    for (let k = 0; k + 1 < pts.length; k++) {
      const [ax, ay] = pts[k]!, [bx, by] = pts[k + 1]!;
      const dx = bx - ax, dy = by - ay, l2 = dx * dx + dy * dy;
      const i0 = Math.max(0, Math.floor((Math.min(ax, bx) - coverM) / cellM)), i1 = Math.min(w - 1, Math.ceil((Math.max(ax, bx) + coverM) / cellM));
      const j0 = Math.max(0, Math.floor((Math.min(ay, by) - coverM) / cellM)), j1 = Math.min(h - 1, Math.ceil((Math.max(ay, by) + coverM) / cellM));
      for (let j = j0; j <= j1; j++)
        for (let i = i0; i <= i1; i++) {
          const px = (i + 0.5) * cellM, py = (j + 0.5) * cellM;
          const t = l2 > 0 ? Math.max(0, Math.min(1, ((px - ax) * dx + (py - ay) * dy) / l2)) : 0;
          const ex = px - ax - t * dx, ey = py - ay - t * dy;
          if (ex * ex + ey * ey <= c2) mark[j * w + i] = 1;
        }
    }
  }
  let n = 0;
  for (let i = 0; i < mark.length; i++) n += mark[i]!;
  return n * cellM * cellM;
}

/** Interval permittivity of a layered model at depth z (the last layer below its bottom). */
export function permittivityAt(z: number, model: VelocityModel): number {
  const ls = model.layers;
  for (const l of ls) if (z >= l.topM && z < l.bottomM) return l.permittivity;
  return (z < (ls[0]?.topM ?? 0) ? ls[0] : ls[ls.length - 1])!.permittivity;
}

/** The classes an anomaly may carry in `properties.class` (DEVELOPERS.md). */
export const ANOMALY_CLASSES = ['utility', 'structure', 'layer', 'clutter', 'above-ground'] as const;
