/** The output folder as the viewer reads it (contracts in @lamina/contracts), fetched from /data/. */

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

// The files' own shapes are the contracts of @lamina/contracts, imported as types only (no zod in the
// bundle): the viewer trusts what `lamina process` wrote, the server checks what it changes.
export type { RunJson, SliceEntry as SliceInfo, SlicesJson, VelocityHyperbola as Hyperbola, VelocityJson, RadargramIndex, RadargramLine, EvidenceRow as Evidence } from '@lamina/contracts';

export interface Config {
  basemap: string | null;
  utilityTypes: string[];
  apwa: Record<string, { name: string; hex: string; meaning: string }>;
  cautions: string[];
  /** The cautions in one line (CAUTION of @lamina/constants), always on screen. */
  caution?: string;
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
