import type { Outline } from '@lamina/anomalies';

export type ToWgs84 = (x: number, y: number) => [number, number];

export interface GeoJsonFeature {
  type: 'Feature';
  id?: string;
  geometry: GeoJsonGeometry | null;
  properties: Record<string, unknown>;
}
export type GeoJsonGeometry =
  | { type: 'Point'; coordinates: number[] }
  | { type: 'LineString'; coordinates: number[][] }
  | { type: 'Polygon'; coordinates: number[][][] }
  | { type: 'MultiPolygon'; coordinates: number[][][][] };
export interface FeatureCollection {
  type: 'FeatureCollection';
  features: GeoJsonFeature[];
  [k: string]: unknown;
}

const round = (v: number) => Math.round(v * 1e8) / 1e8;
const pt = (p: [number, number], to: ToWgs84): number[] => to(p[0], p[1]).map(round);

/** An outline (site CRS) as a WGS84 GeoJSON geometry. The projection keeps ring orientation for conformal site CRSs. */
export function outlineToWgs84(o: Outline, to: ToWgs84): GeoJsonGeometry {
  if (o.type === 'Polygon') return { type: 'Polygon', coordinates: o.coordinates.map((r) => r.map((p) => pt(p, to))) };
  return { type: 'MultiPolygon', coordinates: o.coordinates.map((poly) => poly.map((r) => r.map((p) => pt(p, to)))) };
}

export function lineToWgs84(coords: [number, number][], to: ToWgs84): GeoJsonGeometry {
  return { type: 'LineString', coordinates: coords.map((p) => pt(p, to)) };
}

export function pointToWgs84(p: [number, number], to: ToWgs84): GeoJsonGeometry {
  return { type: 'Point', coordinates: pt(p, to) };
}
