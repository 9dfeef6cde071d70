import { pointFromWgs84, pointToWgs84 } from '@lamina/site';
import type { Crs } from '@lamina/site';
import { APWA_COLOURS, type UtilityType } from './apwa';
import type { AnomalyFeature, VelocityInfo } from './folder';
import type { Decision } from './review';
import { depthErrorModel, depthUncertainty, velocityErrorMPerNs, type DepthErrorModel } from './depth-error';

/**
 * Depths in feet use the international foot (0.3048 m exactly): depths are lengths below the surface,
 * not grid coordinates, and the US survey foot (1200/3937 m) is deprecated for new work since 2023
 * (NIST/NGS Federal Register notice, 2020). The difference is 2 ppm, 0.006 mm at 3 m.
 */
export const FOOT_M = 0.3048;

export type Geometry =
  | { type: 'Point'; coordinates: number[] }
  | { type: 'LineString'; coordinates: number[][] }
  | { type: 'Polygon'; coordinates: number[][][] }
  | { type: 'MultiPolygon'; coordinates: number[][][][] };

/** One exported target, with its geometry both in WGS84 (lon, lat) and in the site CRS (x, y). */
export interface Target {
  id: string;
  kind: 'linear' | 'compact';
  origin: 'subsurface';
  /** The screening's origin, when the user relabelled it. */
  screenedOrigin: 'subsurface' | 'above-ground';
  /**
   * The screening's probability that the anomaly is an above-ground (air-wave) reflection, 0..1 (its
   * naive-Bayes verdict; anomalies.geojson `pAboveGround`). Low for targets; null when not recorded.
   */
  pAboveGround: number | null;
  /** The detection's class of the anomaly (utility, structure, ...); null in files without classes. */
  class: string | null;
  /** Strength of the anomaly above its slice's noise level, dB; null when not recorded. */
  strengthDb: number | null;
  depthTopM: number;
  depthBottomM: number;
  /** Depth uncertainty of the top, m (`depthUncertainty`: velocity spread, slice thickness, pulse); null when nothing is known. */
  depthUncertaintyM: number | null;
  /** Same at the bottom of the depth range. */
  depthBottomUncertaintyM: number | null;
  utilityType: UtilityType | null;
  apwaColour: string | null;
  apwaColourName: string | null;
  label: string | null;
  /**
   * `accepted` when review.json accepts it; `candidate` otherwise (found and screened, not yet reviewed):
   * only an accepted target can be quality level B.
   */
  decision: 'accepted' | 'candidate';
  note: string | null;
  reviewedAt: string | null;
  reviewedBy: string | null;
  wgs84: Geometry;
  site: Geometry;
  /** Plan outline of the anomaly (WGS84), when the plan geometry is something else (a centreline). */
  outlineWgs84: Geometry | null;
  /** Centroid in the site CRS and WGS84. */
  centroidXY: [number, number];
  centroidLonLat: [number, number];
  /**
   * Depth of the top at each centreline vertex (linear targets), m: the shallowest slice member whose
   * outline holds the vertex, else the target's top. A sloping pipe gets a sloping profile.
   */
  vertexDepthsM: number[] | null;
  /** Plan length of the centreline (linear targets), m. */
  lengthM: number | null;
}

/** Why an anomaly is not a target (`class`: its class is clutter or layer, or it is an echo of another). */
export interface Dropped {
  id: string;
  reason: 'rejected' | 'above-ground' | 'relabelled above-ground' | 'class';
  anomaly: AnomalyFeature;
}

/** Classes of anomalies.geojson that become targets without review. */
export const TARGET_CLASSES: readonly string[] = ['utility', 'structure'];

const isPositions = (v: unknown): v is number[][] => Array.isArray(v) && v.every((p) => Array.isArray(p) && typeof p[0] === 'number' && typeof p[1] === 'number');

function mapGeometry(g: Geometry, f: (p: number[]) => number[]): Geometry {
  switch (g.type) {
    case 'Point':
      return { type: 'Point', coordinates: f(g.coordinates) };
    case 'LineString':
      return { type: 'LineString', coordinates: g.coordinates.map(f) };
    case 'Polygon':
      return { type: 'Polygon', coordinates: g.coordinates.map((r) => r.map(f)) };
    case 'MultiPolygon':
      return { type: 'MultiPolygon', coordinates: g.coordinates.map((pl) => pl.map((r) => r.map(f))) };
  }
}

const ringArea = (r: number[][]) => {
  let a = 0;
  for (let i = 0; i + 1 < r.length; i++) a += r[i]![0]! * r[i + 1]![1]! - r[i + 1]![0]! * r[i]![1]!;
  return a / 2;
};
const orient = (r: number[][], ccw: boolean) => ((ringArea(r) > 0) === ccw ? r : [...r].reverse());

/** RFC 7946 section 3.1.6 right-hand rule: exterior rings counterclockwise, holes clockwise. */
export function rightHandRule(g: Geometry): Geometry {
  const poly = (p: number[][][]) => p.map((r, i) => orient(r, i === 0));
  if (g.type === 'Polygon') return { type: 'Polygon', coordinates: poly(g.coordinates) };
  if (g.type === 'MultiPolygon') return { type: 'MultiPolygon', coordinates: g.coordinates.map(poly) };
  return g;
}

function asGeometry(v: unknown): Geometry | undefined {
  if (typeof v !== 'object' || v === null) return undefined;
  const g = v as { type?: unknown; coordinates?: unknown };
  const c = g.coordinates;
  if (g.type === 'Point' && Array.isArray(c) && typeof c[0] === 'number' && typeof c[1] === 'number') return { type: 'Point', coordinates: c as number[] };
  if (g.type === 'LineString' && isPositions(c) && c.length >= 2) return { type: 'LineString', coordinates: c };
  if (g.type === 'Polygon' && Array.isArray(c) && c.length > 0 && c.every(isPositions)) return rightHandRule({ type: 'Polygon', coordinates: c as number[][][] });
  if (g.type === 'MultiPolygon' && Array.isArray(c) && c.length > 0 && c.every((pl) => Array.isArray(pl) && pl.every(isPositions))) return rightHandRule({ type: 'MultiPolygon', coordinates: c as number[][][][] });
  return undefined;
}

function allPositions(g: Geometry): number[][] {
  switch (g.type) {
    case 'Point':
      return [g.coordinates];
    case 'LineString':
      return g.coordinates;
    case 'Polygon':
      return g.coordinates.flat();
    case 'MultiPolygon':
      return g.coordinates.flat(2);
  }
}

/** Area-weighted centroid of the outer rings (site CRS), else the mean of the vertices. */
function centroidOf(g: Geometry): [number, number] {
  const rings = g.type === 'Polygon' ? [g.coordinates[0]!] : g.type === 'MultiPolygon' ? g.coordinates.map((p) => p[0]!) : [];
  let a = 0, cx = 0, cy = 0;
  for (const r of rings) {
    for (let i = 0; i + 1 < r.length; i++) {
      const [x0, y0] = r[i]! as [number, number];
      const [x1, y1] = r[i + 1]! as [number, number];
      const w = x0 * y1 - x1 * y0;
      a += w;
      cx += (x0 + x1) * w;
      cy += (y0 + y1) * w;
    }
  }
  if (Math.abs(a) > 0) return [cx / (3 * a), cy / (3 * a)];
  if (g.type === 'LineString') return pointAlong(g.coordinates, 0.5);
  const pts = allPositions(g);
  return [pts.reduce((s, p) => s + p[0]!, 0) / pts.length, pts.reduce((s, p) => s + p[1]!, 0) / pts.length];
}

/** The point at fraction `f` of a polyline's length (a label position that lies on the line). */
export function pointAlong(c: number[][], f: number): [number, number] {
  const total = polylineLength(c);
  let want = total * f;
  for (let i = 0; i + 1 < c.length; i++) {
    const [x0, y0] = c[i]! as [number, number];
    const [x1, y1] = c[i + 1]! as [number, number];
    const d = Math.hypot(x1 - x0, y1 - y0);
    if (want <= d && d > 0) return [x0 + ((x1 - x0) * want) / d, y0 + ((y1 - y0) * want) / d];
    want -= d;
  }
  const last = c[c.length - 1]!;
  return [last[0]!, last[1]!];
}

export function polylineLength(c: number[][]): number {
  let s = 0;
  for (let i = 0; i + 1 < c.length; i++) s += Math.hypot(c[i + 1]![0]! - c[i]![0]!, c[i + 1]![1]! - c[i]![1]!);
  return s;
}

const round = (v: number, d: number) => Math.round(v * 10 ** d) / 10 ** d;

/** Review decisions keyed by anomaly id (a later decision for the same id wins). */
export function decisionsById(decisions: Decision[]): Map<string, Decision> {
  return new Map(decisions.map((d) => [d.anomalyId, d]));
}

export const isDropped = (r: Target | Dropped): r is Dropped => 'reason' in r;

/**
 * One anomaly as a target, or why it is dropped; null when it has no plan position at all (nothing a
 * map or CAD file could show). A target is an anomaly whose origin (the user's relabel if any, else the
 * screening's) is subsurface and whose decision is not `reject`. Decisions are looked up by anomaly id
 * (the pipeline re-keys review.json to the current ids on every run).
 */
export function targetOf(
  a: AnomalyFeature,
  decisions: Map<string, Decision>,
  velocity: VelocityInfo,
  crs: Crs,
  depthError: DepthErrorModel = depthErrorModel(velocity.velocityMPerNs, velocityErrorMPerNs(velocity), [], undefined),
): Target | Dropped | null {
  const toSite = (p: number[]) => pointFromWgs84(crs, p[0]!, p[1]!) as number[];
  const p = a.properties;
  const d = decisions.get(p.id);
  const origin = d?.origin ?? p.origin;
  if (d?.decision === 'reject') return { id: p.id, reason: 'rejected', anomaly: a };
  if (origin === 'above-ground') {
    return { id: p.id, reason: d?.origin === 'above-ground' && p.origin !== 'above-ground' ? 'relabelled above-ground' : 'above-ground', anomaly: a };
  }
  // a class outside the target classes, or an echo of another anomaly, is a target only when accepted
  // in review (files without `class` are screened as before)
  const notTarget = (typeof p.class === 'string' && !TARGET_CLASSES.includes(p.class)) || typeof p.echoOf === 'string';
  if (notTarget && d?.decision !== 'accept') return { id: p.id, reason: 'class', anomaly: a };
  const centreline = asGeometry(p.centreline);
  const outline = asGeometry(a.geometry);
  const kind: Target['kind'] = p.kind === 'linear' && centreline?.type === 'LineString' ? 'linear' : 'compact';
  let wgs84: Geometry | undefined = kind === 'linear' ? centreline : outline;
  if (!wgs84) {
    const c = Array.isArray(p.centroid) && typeof p.centroid[0] === 'number' && typeof p.centroid[1] === 'number' ? (p.centroid as number[]) : undefined;
    if (!c) return null;
    wgs84 = { type: 'Point', coordinates: c };
  }
  const site = mapGeometry(wgs84, toSite);
  const given = Array.isArray(p.centroid) && typeof p.centroid[0] === 'number' && typeof p.centroid[1] === 'number' ? (p.centroid as [number, number]) : undefined;
  let centroidXY: [number, number];
  let centroidLonLat: [number, number];
  if (kind === 'compact' && given) {
    centroidLonLat = [given[0], given[1]];
    centroidXY = toSite(given) as [number, number];
  } else {
    centroidXY = kind === 'linear' ? pointAlong((site as { coordinates: number[][] }).coordinates, 0.5) : centroidOf(site);
    centroidLonLat = pointToWgs84(crs, centroidXY[0], centroidXY[1]);
  }
  const ut = d?.utilityType ?? null;
  const colour = ut ? APWA_COLOURS[ut] : null;
  return {
    id: p.id,
    kind,
    origin: 'subsurface',
    screenedOrigin: p.origin,
    pAboveGround: pAboveGroundOf(p),
    class: typeof p.class === 'string' ? p.class : null,
    strengthDb: typeof p.strengthDb === 'number' && Number.isFinite(p.strengthDb) ? p.strengthDb : null,
    depthTopM: p.depthTopM,
    depthBottomM: p.depthBottomM,
    depthUncertaintyM: depthUncertainty(p.depthTopM, depthError),
    depthBottomUncertaintyM: depthUncertainty(p.depthBottomM, depthError),
    utilityType: ut,
    apwaColour: colour?.hex ?? null,
    apwaColourName: colour?.name ?? null,
    label: d?.label ?? null,
    decision: d?.decision === 'accept' ? 'accepted' : 'candidate',
    note: d?.note ?? null,
    reviewedAt: d?.updatedAt ?? null,
    reviewedBy: d?.by ?? null,
    wgs84,
    site,
    outlineWgs84: kind === 'linear' && outline ? outline : null,
    vertexDepthsM: kind === 'linear' && wgs84.type === 'LineString' ? vertexDepths(wgs84.coordinates, p.members, p.depthTopM) : null,
    centroidXY,
    centroidLonLat,
    lengthM: kind === 'linear' ? round(polylineLength((site as { coordinates: number[][] }).coordinates) * crs.metresPerUnit, 3) : null,
  };
}

/**
 * P(above-ground) of an anomaly: its `pAboveGround`, else from `confidence` (the probability of the
 * screened origin) in files written before pAboveGround was.
 */
function pAboveGroundOf(p: AnomalyFeature['properties']): number | null {
  if (typeof p.pAboveGround === 'number' && Number.isFinite(p.pAboveGround)) return p.pAboveGround;
  if (!Number.isFinite(p.confidence)) return null;
  return round(p.origin === 'above-ground' ? p.confidence : 1 - p.confidence, 6);
}

/** Split anomalies into targets and dropped ones (`targetOf` for each; those without position are left out). */
export function buildTargets(
  anomalies: AnomalyFeature[],
  decisions: Decision[],
  velocity: VelocityInfo,
  crs: Crs,
  depthError?: DepthErrorModel,
): { targets: Target[]; dropped: Dropped[] } {
  const byId = decisionsById(decisions);
  const targets: Target[] = [];
  const dropped: Dropped[] = [];
  for (const a of anomalies) {
    const r = targetOf(a, byId, velocity, crs, depthError);
    if (r === null) continue;
    if (isDropped(r)) dropped.push(r);
    else targets.push(r);
  }
  return { targets, dropped };
}

function ringsOf(g: Geometry): number[][][] {
  return g.type === 'Polygon' ? g.coordinates : g.type === 'MultiPolygon' ? g.coordinates.flat() : [];
}

/** Even-odd point in polygon over all rings (holes included). */
function insideRings(px: number, py: number, rings: number[][][]): boolean {
  let odd = false;
  for (const r of rings) {
    for (let i = 0, j = r.length - 1; i < r.length; j = i++) {
      const a = r[i]!, b = r[j]!;
      const xi = a[0]!, yi = a[1]!, xj = b[0]!, yj = b[1]!;
      if (yi > py !== yj > py && px < ((xj - xi) * (py - yi)) / (yj - yi) + xi) odd = !odd;
    }
  }
  return odd;
}

/**
 * Each vertex's depth: the shallowest top of the members whose outline holds it (a finite one), else
 * `fallback`. The members are tried shallowest first, and a vertex outside a member's rings' vertical
 * extent crosses none of its edges (each edge test asks for one end above the vertex and one at or below
 * it), so it skips that member: the same depths as testing every member.
 */
function vertexDepths(line: number[][], members: unknown, fallback: number): number[] {
  const ms = Array.isArray(members)
    ? members.flatMap((m) => {
        const o = typeof m === 'object' && m !== null ? (m as { topM?: unknown; outline?: unknown }) : {};
        const g = asGeometry(o.outline);
        if (typeof o.topM !== 'number' || !g) return [];
        const rings = ringsOf(g);
        let y0 = Infinity, y1 = -Infinity;
        for (const r of rings) for (const q of r) {
          y0 = Math.min(y0, q[1]!);
          y1 = Math.max(y1, q[1]!);
        }
        return [{ topM: o.topM, rings, y0, y1 }];
      })
    : [];
  // (a top that is NaN or +Infinity is never the shallowest; -Infinity, the shallowest of all, gives the fallback)
  const sorted = ms.filter((m) => m.topM < Infinity).sort((a, b) => a.topM - b.topM);
  return line.map((p) => {
    const px = p[0]!, py = p[1]!;
    for (const m of sorted) {
      if (py < m.y0 || py >= m.y1) continue;
      if (insideRings(px, py, m.rings)) return Number.isFinite(m.topM) ? m.topM : fallback;
    }
    return fallback;
  });
}

/** An envelope grown one geometry at a time (`extend`), read with `bounds()`. */
export interface EnvelopeAcc {
  extend(g: Geometry): void;
  /** [minX, minY, maxX, maxY], undefined before any position. */
  bounds(): [number, number, number, number] | undefined;
}

export function envelopeAcc(): EnvelopeAcc {
  let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
  return {
    extend(g) {
      for (const p of allPositions(g)) {
        x0 = Math.min(x0, p[0]!);
        y0 = Math.min(y0, p[1]!);
        x1 = Math.max(x1, p[0]!);
        y1 = Math.max(y1, p[1]!);
      }
    },
    bounds: () => (x0 <= x1 ? [x0, y0, x1, y1] : undefined),
  };
}

/** Envelope [minX, minY, maxX, maxY] of geometries. */
export function envelope(gs: Geometry[]): [number, number, number, number] | undefined {
  const acc = envelopeAcc();
  for (const g of gs) acc.extend(g);
  return acc.bounds();
}

export { allPositions };
