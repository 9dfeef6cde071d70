/** Plan anchor of an anomaly feature: the point review decisions are matched by after a rerun. */

type Coord = number[];
export interface FeatureLike {
  geometry?: { type: string; coordinates?: unknown } | null;
  properties?: Record<string, unknown> | null;
}

function ringCentroid(ring: Coord[]): { x: number; y: number; a: number } {
  // Shoelace centroid; falls back to the vertex mean for degenerate rings.
  let a = 0;
  let cx = 0;
  let cy = 0;
  const n = ring.length;
  for (let i = 0; i < n - 1; i++) {
    const p = ring[i]!;
    const q = ring[i + 1]!;
    const cross = p[0]! * q[1]! - q[0]! * p[1]!;
    a += cross;
    cx += (p[0]! + q[0]!) * cross;
    cy += (p[1]! + q[1]!) * cross;
  }
  if (Math.abs(a) < 1e-18) {
    const m = meanOf(ring);
    return { ...m, a: 0 };
  }
  return { x: cx / (3 * a), y: cy / (3 * a), a: a / 2 };
}

function meanOf(pts: Coord[]): { x: number; y: number } {
  let x = 0;
  let y = 0;
  for (const p of pts) {
    x += p[0]!;
    y += p[1]!;
  }
  return { x: x / Math.max(1, pts.length), y: y / Math.max(1, pts.length) };
}

/**
 * `properties.anchor` {lon, lat}, `properties.lon/lat` or `properties.centroid` [lon, lat] when the
 * writer gave one, else the area
 * centroid of a (Multi)Polygon's outer rings, the mean vertex of a line, or the point itself.
 */
export function anomalyAnchorLonLat(f: FeatureLike): [number, number] | undefined {
  const p = f.properties ?? {};
  const anchor = p.anchor as { lon?: unknown; lat?: unknown } | undefined;
  if (anchor && typeof anchor.lon === 'number' && typeof anchor.lat === 'number') return [anchor.lon, anchor.lat];
  if (typeof p.lon === 'number' && typeof p.lat === 'number') return [p.lon, p.lat];
  // screening writes the cell-weighted centroid over depth as properties.centroid [lon, lat]
  const c = p.centroid;
  if (Array.isArray(c) && typeof c[0] === 'number' && typeof c[1] === 'number') return [c[0], c[1]];
  const g = f.geometry;
  if (!g || !g.coordinates) return undefined;
  switch (g.type) {
    case 'Point': {
      const c = g.coordinates as Coord;
      return [c[0]!, c[1]!];
    }
    case 'MultiPoint':
    case 'LineString': {
      const m = meanOf(g.coordinates as Coord[]);
      return [m.x, m.y];
    }
    case 'MultiLineString': {
      const m = meanOf((g.coordinates as Coord[][]).flat());
      return [m.x, m.y];
    }
    case 'Polygon':
    case 'MultiPolygon': {
      const polys = g.type === 'Polygon' ? [g.coordinates as Coord[][]] : (g.coordinates as Coord[][][]);
      let sx = 0;
      let sy = 0;
      let sa = 0;
      for (const poly of polys) {
        const c = ringCentroid(poly[0] ?? []);
        const w = Math.abs(c.a) || 1e-30;
        sx += c.x * w;
        sy += c.y * w;
        sa += w;
      }
      return sa > 0 ? [sx / sa, sy / sa] : undefined;
    }
    default:
      return undefined;
  }
}
