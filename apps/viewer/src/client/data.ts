/** The output folder as the viewer reads it (contracts in DEVELOPERS.md), fetched from /data/. */

export interface FeatureCollection {
  type: 'FeatureCollection';
  features: Feature[];
}
export interface Feature {
  type: 'Feature';
  id?: string | number;
  geometry: { type: string; coordinates: unknown } | null;
  properties: Record<string, unknown> | null;
}

export interface RunJson {
  site: {
    name: string;
    crs: { input?: string; code?: string; proj4: string; units?: string; metresPerUnit?: number };
    antenna?: { frequencyMHz?: number; separationM?: number };
    extentWgs84?: [number, number, number, number];
    extentSite?: [number, number, number, number];
  };
  identity?: { name: string; crs: string; extent: [number, number, number, number] };
}

export interface SliceInfo {
  index: number;
  band: number;
  topM: number;
  bottomM: number;
  stats?: { p2?: number; p98?: number; min?: number; max?: number; mean?: number; [k: string]: number | undefined };
}
export interface SlicesJson {
  slices: SliceInfo[];
  nodata?: number | null;
  [k: string]: unknown;
}

export interface Hyperbola {
  line: string;
  trace: number;
  x: number;
  y: number;
  t0Ns: number;
  velocityMPerNs: number;
  depthM?: number;
  /** Fitted radius of the target, m (0 or absent: a point). */
  radiusM?: number;
  origin?: string;
  picks?: { offsetM: number[]; timeNs: number[] };
  flags?: string[];
}
export interface VelocityJson {
  site?: { velocityMPerNs?: number; permittivity?: number; spreadMPerNs?: number };
  model?: { kind?: string; layers?: { topM: number; bottomM: number; velocityMPerNs: number }[] };
  hyperbolas?: Hyperbola[];
}

export interface RadargramLine {
  id: string;
  file: string;
  nTraces: number;
  nSamples: number;
  dtNs: number;
  timeZeroNs?: number;
  traceStep?: number;
  x: number[];
  y: number[];
  lon: number[];
  lat: number[];
}

export interface Config {
  basemap: string | null;
  utilityTypes: string[];
  apwa: Record<string, { name: string; hex: string; meaning: string }>;
  cautions: string[];
}

export interface Evidence {
  test?: string;
  featureId?: string | null;
  measured?: unknown;
  expected?: unknown;
  tolerance?: unknown;
  units?: string;
  passed?: boolean;
  detail?: string;
}

export const EMPTY_FC: FeatureCollection = { type: 'FeatureCollection', features: [] };

export function dataUrl(name: string): string {
  return `data/${name.split('/').map(encodeURIComponent).join('/')}`;
}

async function get(name: string): Promise<Response | undefined> {
  const r = await fetch(dataUrl(name), { cache: 'no-store' });
  if (r.status === 404) return undefined;
  if (!r.ok) throw new Error(`${name}: HTTP ${r.status}`);
  return r;
}

/** JSON file of the output folder; `fallback` when the file is absent (a stage not run yet). */
export async function getJson<T>(name: string, fallback: T): Promise<T>;
export async function getJson<T>(name: string): Promise<T | undefined>;
export async function getJson<T>(name: string, fallback?: T): Promise<T | undefined> {
  const r = await get(name);
  if (!r) return fallback;
  return (await r.json()) as T;
}

export async function getBytes(name: string): Promise<ArrayBuffer | undefined> {
  const r = await get(name);
  return r ? r.arrayBuffer() : undefined;
}

/** A feature's id: `properties.id`, else `feature.id`. */
export function featureId(f: Feature): string {
  return String(f.properties?.id ?? f.id ?? '');
}

/** Give every feature a string `properties.id` and the top-level numeric id maplibre needs for feature state. */
export function normaliseIds(fc: FeatureCollection): FeatureCollection {
  return {
    type: 'FeatureCollection',
    features: (fc.features ?? []).map((f, i) => ({ ...f, id: i, properties: { ...(f.properties ?? {}), id: featureId(f) || `f${i}` } })),
  };
}
