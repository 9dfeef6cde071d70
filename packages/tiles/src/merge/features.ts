/** GeoJSON of the merge written a feature per line (as the pipeline writes it, so readers stream it), and lon/lat <-> site geometry. */
import { open } from 'node:fs/promises';
import type { Crs } from '@lamina/site';
import { pointFromWgs84, pointToWgs84 } from '@lamina/site';
import type { Pt, Ring } from './clip';

export interface FeatureWriter {
  add(feature: unknown): Promise<void>;
  close(): Promise<void>;
}

/** A FeatureCollection file: `head`'s members, then one feature per line; buffered to about 1 MB a write. */
export async function featureWriter(path: string, head: Record<string, unknown> = {}): Promise<FeatureWriter> {
  const fh = await open(path, 'w');
  const h = JSON.stringify({ type: 'FeatureCollection', ...head, features: undefined });
  let pending = `${h.slice(0, -1)}${h.length > 2 ? ',' : ''}"features":[`;
  let n = 0;
  const flush = async () => {
    await fh.write(pending);
    pending = '';
  };
  return {
    add: async (f) => {
      pending += (n++ > 0 ? ',\n' : '\n') + JSON.stringify(f);
      if (pending.length >= 1 << 20) await flush();
    },
    close: async () => {
      try {
        pending += '\n]}\n';
        await flush();
      } finally {
        await fh.close();
      }
    },
  };
}

const round8 = (v: number): number => Math.round(v * 1e8) / 1e8;

/** Polygons of a Polygon or MultiPolygon geometry (lon/lat) in site coordinates; other geometries give none. */
export function polygonsOf(geometry: unknown, crs: Crs): Ring[][] {
  const g = geometry as { type?: string; coordinates?: unknown } | null | undefined;
  const polys = g?.type === 'Polygon' ? [g.coordinates] : g?.type === 'MultiPolygon' ? (g.coordinates as unknown[]) : [];
  return (polys as number[][][][]).map((p) => p.map((ring) => ring.map(([lon, lat]) => pointFromWgs84(crs, lon!, lat!) as Pt)));
}

/** Site polygons back to a GeoJSON MultiPolygon (rings closed, lon/lat to 8 decimals as the pipeline writes them). */
export function multiPolygonOf(polygons: Ring[][], crs: Crs): { type: 'MultiPolygon'; coordinates: number[][][][] } {
  return { type: 'MultiPolygon', coordinates: polygons.map((p) => p.map((ring) => [...ring, ring[0]!].map(([x, y]) => lonLat(crs, x, y)))) };
}

/** Polylines of a LineString or MultiLineString (lon/lat) in site coordinates. */
export function linesOf(geometry: unknown, crs: Crs): Pt[][] {
  const g = geometry as { type?: string; coordinates?: unknown } | null | undefined;
  const lines = g?.type === 'LineString' ? [g.coordinates] : g?.type === 'MultiLineString' ? (g.coordinates as unknown[]) : [];
  return (lines as number[][][]).map((l) => l.map(([lon, lat]) => pointFromWgs84(crs, lon!, lat!) as Pt));
}

export function lonLat(crs: Crs, x: number, y: number): [number, number] {
  const [lon, lat] = pointToWgs84(crs, x, y);
  return [round8(lon), round8(lat)];
}

/** The head of a FeatureCollection written a feature per line (its first line), without `features`. */
export async function headOf(file: string): Promise<Record<string, unknown>> {
  // the head is the first line: a few hundred bytes are enough, the features are not read
  const fh = await open(file, 'r').catch(() => undefined);
  if (!fh) return {};
  const buf = Buffer.alloc(1 << 16);
  const { bytesRead } = await fh.read(buf, 0, buf.length, 0).finally(() => fh.close());
  const text = buf.subarray(0, bytesRead).toString('utf8');
  const line = text.slice(0, Math.max(0, text.indexOf('\n')));
  try {
    const { features: _, ...head } = JSON.parse(line.endsWith('"features":[') ? `${line}]}` : '{}') as Record<string, unknown>;
    return head;
  } catch {
    return {};
  }
}
