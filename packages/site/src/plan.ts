import { readFile } from 'node:fs/promises';
import { kinks } from '@turf/turf';
import { z } from 'zod';
import { InputError } from '@lamina/errors';
import { pointFromWgs84 } from './crs';
import { describe, InputProblems, jsonPath, parseJson, type Problem, zodProblems } from './problems';
import type { Crs, Geometry, PlanFeature, PlanKind, Position } from './types';

export const PLAN_KINDS = ['building', 'wall', 'fence', 'post', 'tree', 'column', 'overhead', 'other'] as const satisfies readonly PlanKind[];

/** Geometry types each kind may carry; `other` takes any supported type. */
export const KIND_GEOMETRY: Record<PlanKind, readonly Geometry['type'][]> = {
  building: ['Polygon', 'MultiPolygon'],
  wall: ['LineString'],
  fence: ['LineString'],
  post: ['Point'],
  tree: ['Point'],
  column: ['Point'],
  overhead: ['LineString', 'Point'],
  other: ['Point', 'LineString', 'Polygon', 'MultiLineString', 'MultiPolygon'],
};

const num = z.number({ error: (iss) => `expected a number, found ${describe(iss.input)}` });
const lonLat = z
  .array(num, { error: (iss) => `expected a position [lon, lat], found ${describe(iss.input)}` })
  .min(2, { error: 'expected a position [lon, lat] (WGS84 degrees), found fewer than 2 numbers' })
  .max(3, { error: 'expected a position [lon, lat] or [lon, lat, height], found more than 3 numbers' })
  .superRefine((p, ctx) => {
    const [lon, lat] = p as [number, number];
    const hint = Math.abs(lon) > 360 || Math.abs(lat) > 360 ? ' (these look like projected coordinates; RFC 7946 GeoJSON is WGS84 lon/lat)' : '';
    if (!(lon >= -180 && lon <= 180)) ctx.addIssue({ code: 'custom', path: [0], message: `expected a longitude in [-180, 180], found ${lon}${hint}` });
    if (!(lat >= -90 && lat <= 90)) ctx.addIssue({ code: 'custom', path: [1], message: `expected a latitude in [-90, 90], found ${lat}${hint}` });
  });
const lineCoords = z.array(lonLat, { error: (iss) => `expected an array of positions, found ${describe(iss.input)}` }).min(2, { error: 'expected a line of at least 2 positions' });
const ring = z
  .array(lonLat, { error: (iss) => `expected a ring (array of positions), found ${describe(iss.input)}` })
  .min(4, { error: 'expected a closed ring of at least 4 positions' })
  .superRefine((r, ctx) => {
    const a = r[0];
    const b = r[r.length - 1];
    if (a && b && (a[0] !== b[0] || a[1] !== b[1])) {
      ctx.addIssue({ code: 'custom', path: [r.length - 1], message: `expected a closed ring (last position equal to the first), found [${a.join(', ')}] ... [${b.join(', ')}]` });
    }
  });
const polyCoords = z.array(ring, { error: (iss) => `expected an array of rings, found ${describe(iss.input)}` }).min(1, { error: 'expected at least one ring' });

const GEOMETRY_SCHEMAS = {
  Point: lonLat,
  LineString: lineCoords,
  Polygon: polyCoords,
  MultiLineString: z.array(lineCoords).min(1, { error: 'expected at least one line' }),
  MultiPolygon: z.array(polyCoords).min(1, { error: 'expected at least one polygon' }),
} as const;
type GeometryType = keyof typeof GEOMETRY_SCHEMAS;

const featureSchema = z.looseObject({
  type: z.literal('Feature', { error: (iss) => `expected "Feature", found ${describe(iss.input)}` }),
  id: z.union([z.string(), z.number()], { error: (iss) => `expected a string or number id, found ${describe(iss.input)}` }).optional(),
  geometry: z.unknown(),
  properties: z.looseObject(
    {
      kind: z.enum(PLAN_KINDS, {
        error: (iss) => `${iss.input === undefined ? 'missing' : `found ${describe(iss.input)}`}: expected one of ${PLAN_KINDS.join(', ')}`,
      }),
      heightM: z.number({ error: (iss) => `expected a height in metres, found ${describe(iss.input)}` }).positive({ error: (iss) => `expected a height > 0 m, found ${String(iss.input)}` }).optional(),
      postSpacingM: z.number({ error: (iss) => `expected a post spacing in metres, found ${describe(iss.input)}` }).positive({ error: (iss) => `expected a post spacing > 0 m, found ${String(iss.input)}` }).optional(),
      id: z.union([z.string(), z.number()], { error: (iss) => `expected a string or number id, found ${describe(iss.input)}` }).optional(),
    },
    { error: (iss) => `expected a properties object with "kind", found ${describe(iss.input)}` },
  ),
});

const collectionSchema = z.looseObject({
  type: z.literal('FeatureCollection', { error: (iss) => `expected "FeatureCollection", found ${describe(iss.input)}` }),
  features: z.array(z.unknown(), { error: (iss) => `expected an array of features, found ${describe(iss.input)}` }),
});

function checkGeometry(g: unknown, kind: PlanKind, path: (string | number)[], problems: Problem[]): Geometry | undefined {
  if (g === null || typeof g !== 'object' || Array.isArray(g)) {
    problems.push({ path: jsonPath(path), message: `expected a geometry object, found ${describe(g)}` });
    return undefined;
  }
  const type = (g as { type?: unknown }).type;
  const allowed = KIND_GEOMETRY[kind];
  if (typeof type !== 'string' || !(type in GEOMETRY_SCHEMAS)) {
    problems.push({ path: jsonPath([...path, 'type']), message: `expected a geometry type ${allowed.join(' or ')} for kind "${kind}", found ${describe(type)}` });
    return undefined;
  }
  if (!allowed.includes(type as GeometryType)) {
    problems.push({ path: jsonPath([...path, 'type']), message: `expected ${allowed.join(' or ')} for kind "${kind}", found ${type}` });
    return undefined;
  }
  const r = GEOMETRY_SCHEMAS[type as GeometryType].safeParse((g as { coordinates?: unknown }).coordinates);
  if (!r.success) {
    problems.push(...zodProblems(r.error, [...path, 'coordinates']));
    return undefined;
  }
  const geometry = { type, coordinates: trim2(r.data) } as Geometry;
  if (geometry.type === 'Polygon' || geometry.type === 'MultiPolygon') {
    // Repeated consecutive vertices are common in drawn plans and are not crossings.
    const polys = geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates;
    const simple = polys.map((poly) => poly.map(dedupe));
    if (simple.some((poly) => poly.some((r) => r.length < 4))) {
      problems.push({ path: jsonPath([...path, 'coordinates']), message: 'expected a footprint with area, found a ring of fewer than 3 distinct corners' });
      return undefined;
    }
    for (let j = 0; j < simple.length; j++) {
      const k = kinks({ type: 'Polygon', coordinates: simple[j] as Position[][] });
      const p = k.features[0]?.geometry.coordinates;
      if (p) {
        const more = k.features.length > 1 ? ` and ${k.features.length - 1} more crossing${k.features.length > 2 ? 's' : ''}` : '';
        const at = geometry.type === 'MultiPolygon' ? [...path, 'coordinates', j] : [...path, 'coordinates'];
        problems.push({ path: jsonPath(at), message: `expected a simple footprint, found a self-intersection near [${(p[0] as number).toFixed(7)}, ${(p[1] as number).toFixed(7)}]${more}` });
        return undefined;
      }
    }
  }
  return geometry;
}

function dedupe(ring: Position[]): Position[] {
  return ring.filter((p, i) => i === 0 || p[0] !== ring[i - 1]?.[0] || p[1] !== ring[i - 1]?.[1]);
}

/** Drop heights: plan geometry is 2D. */
function trim2(c: unknown): unknown {
  if (Array.isArray(c) && typeof c[0] === 'number') return [c[0], c[1]];
  return (c as unknown[]).map(trim2);
}

function project(g: Geometry, crs: Crs): Geometry {
  const p = (q: Position): Position => pointFromWgs84(crs, q[0], q[1]);
  switch (g.type) {
    case 'Point':
      return { type: 'Point', coordinates: p(g.coordinates) };
    case 'LineString':
      return { type: 'LineString', coordinates: g.coordinates.map(p) };
    case 'Polygon':
      return { type: 'Polygon', coordinates: g.coordinates.map((r) => r.map(p)) };
    case 'MultiLineString':
      return { type: 'MultiLineString', coordinates: g.coordinates.map((r) => r.map(p)) };
    case 'MultiPolygon':
      return { type: 'MultiPolygon', coordinates: g.coordinates.map((poly) => poly.map((r) => r.map(p))) };
  }
}

export interface ParsePlanOptions {
  /** Site CRS to project the geometry into; without it `geometry` is the WGS84 geometry. */
  crs?: Crs;
}

/**
 * Validate a parsed plan GeoJSON (RFC 7946 FeatureCollection, WGS84) and return its features with ids
 * and geometry in the site CRS. Collects every problem and throws one `InputProblems` naming the file
 * and the first JSON path. An empty collection is valid.
 */
export function parsePlan(value: unknown, file: string, options: ParsePlanOptions = {}): PlanFeature[] {
  const problems: Problem[] = [];
  const top = collectionSchema.safeParse(value);
  if (!top.success) throw new InputProblems(file, zodProblems(top.error));
  const crsMember = (top.data as { crs?: { properties?: { name?: unknown } } }).crs;
  if (crsMember !== undefined) {
    const name = String(crsMember?.properties?.name ?? '');
    if (!/CRS84$|EPSG:+4326$/i.test(name)) {
      problems.push({ path: 'crs', message: `expected WGS84 lon/lat (RFC 7946 has no "crs" member), found a crs named ${describe(name)}` });
    }
  }
  const features: PlanFeature[] = [];
  const pending: { f: Omit<PlanFeature, 'id'>; id?: string; path: string }[] = [];
  top.data.features.forEach((raw, i) => {
    const path = ['features', i];
    const r = featureSchema.safeParse(raw);
    if (!r.success) {
      problems.push(...zodProblems(r.error, path));
      return;
    }
    const props = r.data.properties;
    const kind = props.kind;
    if (props.postSpacingM !== undefined && kind !== 'fence') {
      problems.push({ path: jsonPath([...path, 'properties', 'postSpacingM']), message: `expected postSpacingM only on a fence, found it on kind "${kind}"` });
    }
    if (kind === 'overhead' && props.heightM === undefined) {
      problems.push({ path: jsonPath([...path, 'properties', 'heightM']), message: 'missing: an overhead feature needs heightM, its height above the ground in metres' });
    }
    const wgs84 = checkGeometry(r.data.geometry, kind, [...path, 'geometry'], problems);
    if (!wgs84) return;
    const rawId = r.data.id ?? props.id;
    const f: Omit<PlanFeature, 'id'> = {
      kind,
      ...(props.heightM !== undefined ? { heightM: props.heightM } : {}),
      ...(props.postSpacingM !== undefined ? { postSpacingM: props.postSpacingM } : {}),
      properties: props as Record<string, unknown>,
      wgs84,
      geometry: options.crs ? project(wgs84, options.crs) : wgs84,
    };
    pending.push({ f, ...(rawId !== undefined ? { id: String(rawId) } : {}), path: jsonPath([...path, r.data.id !== undefined ? 'id' : 'properties']) });
  });
  const taken = new Map<string, string>();
  for (const p of pending) {
    if (p.id === undefined) continue;
    const prev = taken.get(p.id);
    if (prev !== undefined) problems.push({ path: p.path, message: `expected a unique feature id, found "${p.id}" again (first at ${prev})` });
    else taken.set(p.id, p.path);
  }
  if (problems.length) throw new InputProblems(file, problems);
  const counters = new Map<string, number>();
  for (const p of pending) {
    let id = p.id;
    if (id === undefined) {
      let n = counters.get(p.f.kind) ?? 0;
      do id = `${p.f.kind}-${++n}`;
      while (taken.has(id));
      counters.set(p.f.kind, n);
      taken.set(id, p.path);
    }
    features.push({ id, ...p.f });
  }
  return features;
}

/** Read and validate a plan file (see `parsePlan`). `displayName` is used in messages. */
export async function readPlan(path: string, displayName: string, options: ParsePlanOptions = {}): Promise<PlanFeature[]> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch {
    throw new InputError(displayName, 'expected a plan GeoJSON file, found no readable file');
  }
  return parsePlan(parseJson(text, displayName), displayName, options);
}

function* vertices(g: Geometry): Generator<Position> {
  switch (g.type) {
    case 'Point':
      yield g.coordinates;
      break;
    case 'LineString':
      yield* g.coordinates;
      break;
    case 'Polygon':
    case 'MultiLineString':
      for (const r of g.coordinates) yield* r;
      break;
    case 'MultiPolygon':
      for (const p of g.coordinates) for (const r of p) yield* r;
      break;
  }
}

export interface PlanNearOptions {
  /** Largest allowed gap between the survey and the nearest plan vertex, metres. @default 1000 */
  maxGapM?: number;
}

/**
 * A plan none of whose vertices lies within `maxGapM` of the survey's extent was almost surely drawn in
 * another CRS or with lon/lat swapped; throws an `InputError` naming the plan file and the gap.
 * @param bbox survey extent `[minX, minY, maxX, maxY]` in site CRS units
 */
export function checkPlanNearSurvey(plan: readonly PlanFeature[], bbox: readonly [number, number, number, number], metresPerUnit: number, file: string, options: PlanNearOptions = {}): void {
  if (plan.length === 0) return;
  const [x0, y0, x1, y1] = bbox;
  let best = Infinity;
  for (const f of plan) {
    for (const v of vertices(f.geometry)) {
      const dx = Math.max(x0 - v[0], 0, v[0] - x1);
      const dy = Math.max(y0 - v[1], 0, v[1] - y1);
      const d = Math.hypot(dx, dy) * metresPerUnit;
      if (d < best) best = d;
    }
  }
  const limit = options.maxGapM ?? 1000;
  if (!(best <= limit)) {
    const km = Number.isFinite(best) ? `${(best / 1000).toFixed(1)} km` : 'an unmeasurable distance';
    throw new InputError(file, `expected plan features near the survey lines (within ${limit} m), found the nearest ${km} away; is the plan in WGS84 lon/lat order (RFC 7946)?`);
  }
}
