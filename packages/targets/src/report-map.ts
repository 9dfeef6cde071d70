/**
 * What the plan maps of report.html draw, gathered from the output folder: survey lines and the site
 * plan (lines.geojson, plan.geojson, both WGS84, brought into the site CRS), shapes of targets and
 * flagged anomalies as they stream past, the map frame (extent, true north) and the depth ranges of the
 * maps. Shapes are decimated to a bounded number of vertices so the report stays small on large sites.
 */
import { join } from 'node:path';
import { pointFromWgs84, pointToWgs84, type Crs } from '@lamina/site';
import { streamFeatures } from './folder';
import type { MapFrame, MapPlanFeature, Shape } from './plan-map';
import type { Geometry } from './targets';
import { isObj } from './text';

/** Most vertices kept per drawn shape (ring or polyline); more are decimated, ends kept. */
export const MAX_MAP_VERTICES = 400;

const isPos = (p: unknown): p is number[] => Array.isArray(p) && typeof p[0] === 'number' && typeof p[1] === 'number' && Number.isFinite(p[0]) && Number.isFinite(p[1]);

function decimate(path: number[][], max = MAX_MAP_VERTICES): number[][] {
  if (path.length <= max) return path;
  const stride = Math.ceil((path.length - 1) / (max - 1));
  const out: number[][] = [];
  for (let i = 0; i < path.length - 1; i += stride) out.push(path[i]!);
  out.push(path[path.length - 1]!);
  return out;
}

/** A GeoJSON geometry as a drawable shape, positions mapped by `to` (identity for site-CRS geometry). */
export function shapeOf(g: unknown, to: (p: number[]) => number[] = (p) => p): Shape | null {
  if (!isObj(g)) return null;
  const c = g.coordinates;
  const path = (v: unknown) => (Array.isArray(v) ? decimate(v.filter(isPos).map(to)) : []);
  switch (g.type) {
    case 'Point':
      return isPos(c) ? { type: 'point', at: to(c) } : null;
    case 'MultiPoint':
      return Array.isArray(c) && isPos(c[0]) ? { type: 'point', at: to(c[0]) } : null;
    case 'LineString': {
      const p = path(c);
      return p.length >= 2 ? { type: 'line', path: p } : p.length === 1 ? { type: 'point', at: p[0]! } : null;
    }
    case 'MultiLineString': {
      // drawn as its longest part (plan features are rarely split; anomalies never are)
      const parts = Array.isArray(c) ? c.map(path).sort((a, b) => b.length - a.length) : [];
      return parts[0] && parts[0].length >= 2 ? { type: 'line', path: parts[0] } : null;
    }
    case 'Polygon': {
      const rings = Array.isArray(c) ? c.map(path).filter((r) => r.length >= 3) : [];
      return rings.length ? { type: 'area', rings } : null;
    }
    case 'MultiPolygon': {
      const rings = Array.isArray(c) ? c.flatMap((pl) => (Array.isArray(pl) ? pl.map(path) : [])).filter((r) => r.length >= 3) : [];
      return rings.length ? { type: 'area', rings } : null;
    }
    default:
      return null;
  }
}

/** A target's site-CRS geometry as a shape. */
export const targetShape = (g: Geometry): Shape | null => shapeOf(g);

/** Positions from WGS84 to the site CRS. */
export const fromWgs84 = (crs: Crs) => (p: number[]): number[] => pointFromWgs84(crs, p[0]!, p[1]!);

export interface MapBackground {
  lines: number[][][];
  plan: MapPlanFeature[];
}

/** lines.geojson and plan.geojson of the folder in the site CRS (either may be missing). */
export async function readMapBackground(outDir: string, crs: Crs): Promise<MapBackground> {
  const to = fromWgs84(crs);
  // a feature at a time: lines.geojson holds every trace position of the survey
  const lines: number[][][] = [];
  for await (const f of streamFeatures(join(outDir, 'lines.geojson'))) {
    const s = isObj(f) ? shapeOf(f.geometry, to) : null;
    if (s?.type === 'line') lines.push(s.path);
  }
  const plan: MapPlanFeature[] = [];
  for await (const f of streamFeatures(join(outDir, 'plan.geojson'))) {
    if (!isObj(f)) continue;
    const p = isObj(f.properties) ? f.properties : {};
    const s = shapeOf(f.geometry, to);
    if (s) plan.push({ id: String(p.id ?? f.id ?? ''), kind: String(p.kind ?? 'other'), shape: s });
  }
  return { lines, plan };
}

/**
 * Bearing of true north from grid north at (x, y), degrees clockwise: the direction in the CRS of a
 * short step north in WGS84 (grid convergence; 0 for a geographic CRS drawn as is).
 */
export function trueNorthDeg(crs: Crs, x: number, y: number): number {
  const [lon, lat] = pointToWgs84(crs, x, y);
  const [nx, ny] = pointFromWgs84(crs, lon, Math.min(89.9, lat + 1e-4));
  const deg = (Math.atan2(nx - x, ny - y) * 180) / Math.PI;
  return Number.isFinite(deg) ? deg : 0;
}

/** The map frame: the union of the site extent and the survey lines, padded by 3 %. */
export function mapFrame(crs: Crs, extentSite: [number, number, number, number] | undefined, background: MapBackground): MapFrame | null {
  let [x0, y0, x1, y1] = extentSite ?? [Infinity, Infinity, -Infinity, -Infinity];
  for (const l of background.lines) {
    for (const p of l) {
      x0 = Math.min(x0, p[0]!);
      y0 = Math.min(y0, p[1]!);
      x1 = Math.max(x1, p[0]!);
      y1 = Math.max(y1, p[1]!);
    }
  }
  if (!(x1 > x0) || !(y1 > y0)) return null;
  const pad = 0.03 * Math.max(x1 - x0, y1 - y0);
  const bbox: [number, number, number, number] = [x0 - pad, y0 - pad, x1 + pad, y1 + pad];
  const unitName = crs.units === 'm' ? 'm' : crs.units === 'us-ft' ? 'US survey ft' : crs.units === 'ft' ? 'ft' : 'degree';
  return { bbox, metresPerUnit: crs.metresPerUnit, unitName, northDeg: crs.isGeographic ? 0 : trueNorthDeg(crs, (x0 + x1) / 2, (y0 + y1) / 2) };
}

/**
 * Depth ranges of the per-depth maps: the sliced depth span cut into `count` ranges of equal thickness,
 * their bounds rounded to 0.1 m (the ranges are for reading, not for computing); none when the span is
 * under 0.3 m.
 */
export function mapDepthRanges(slices: { topM: number; bottomM: number }[], count = 3): [number, number][] {
  if (!slices.length) return [];
  const top = Math.min(...slices.map((s) => s.topM));
  const bottom = Math.max(...slices.map((s) => s.bottomM));
  if (!(bottom - top >= 0.3)) return [];
  const edges = Array.from({ length: count + 1 }, (_, i) => (i === 0 ? top : i === count ? bottom : Math.round((top + ((bottom - top) * i) / count) * 10) / 10));
  const out: [number, number][] = [];
  for (let i = 0; i < count; i++) if (edges[i + 1]! > edges[i]!) out.push([edges[i]!, edges[i + 1]!]);
  return out;
}
