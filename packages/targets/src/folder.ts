import { createReadStream } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createInterface } from 'node:readline';
import { join } from 'node:path';
import { InputError } from '@lamina/errors';
import { resolveCrs } from '@lamina/site';
import type { Crs } from '@lamina/site';
import type { SiteIdentity } from './review';

/** What export needs from run.json (written by the pipeline); other fields are carried but not required. */
export interface RunInfo {
  createdAt?: string;
  toolVersion?: string;
  /** Depth of the near-surface (direct- and ground-wave) zone, m (run.json `nearSurfaceM`). */
  nearSurfaceM?: number;
  site: {
    name: string;
    crs: Crs;
    antenna?: { frequencyMHz?: number; separationM?: number };
    extentWgs84?: [number, number, number, number];
    extentSite?: [number, number, number, number];
    surveyDate?: string;
    /** site.json's `survey` block as run.json carries it (checked when site.json was loaded). */
    survey?: SurveyMeta;
  };
  identity: SiteIdentity;
  lines: { id: string; traces?: number; lengthM?: number }[];
  /** The processing steps as run.json records them (step name, parameters, result), for the method statement. */
  recipeSteps?: { step: string; params: Record<string, unknown>; result?: Record<string, unknown> }[];
}

/** Survey metadata (site.json `survey`, see @lamina/site's surveySchema). */
export interface SurveyMeta {
  date?: string;
  endDate?: string;
  operator?: string;
  client?: string;
  equipment?: string;
  antennaSerial?: string;
  positioning?: { method?: string; accuracyM?: number };
  groundConditions?: string;
  notes?: string;
}

export interface AnomalyFeature {
  type: 'Feature';
  geometry: { type: string; coordinates: unknown } | null;
  properties: Record<string, unknown> & {
    id: string;
    depthTopM: number;
    depthBottomM: number;
    origin: 'subsurface' | 'above-ground';
    confidence: number;
    evidence: EvidenceItem[];
  };
}

export interface EvidenceItem {
  test?: string;
  featureId?: string | null;
  measured?: unknown;
  expected?: unknown;
  tolerance?: unknown;
  units?: string;
  passed?: boolean;
  detail?: string;
}

export interface VelocityInfo {
  velocityMPerNs: number;
  permittivity?: number;
  spreadMPerNs?: number;
  fitCount?: number;
  raw: Record<string, unknown>;
}

export interface SliceInfo {
  index: number;
  band: number;
  topM: number;
  bottomM: number;
  stats?: { p2?: number; p98?: number; min?: number; max?: number; validCount?: number };
}

export interface SlicesInfo {
  file: string;
  width: number;
  height: number;
  nodata?: number;
  originX?: number;
  originY?: number;
  cellSize?: number;
  /** The gridding parameters slices.json records (method, power, radius, line and trace spacing, ...). */
  gridding?: Record<string, unknown>;
  slices: SliceInfo[];
}

export async function readJsonFile(file: string, options: { optional?: boolean } = {}): Promise<unknown> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') {
      if (options.optional) return undefined;
      throw new InputError(file, 'expected this file of a processed output folder, found none');
    }
    throw e;
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(file, `expected JSON, found a parse error (${(e as Error).message})`);
  }
}

const isObj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const num = (v: unknown): number | undefined => (typeof v === 'number' && Number.isFinite(v) ? v : undefined);

function need<T>(file: string, field: string, v: T | undefined, expected: string, found: unknown): T {
  if (v === undefined) throw new InputError(file, `expected ${expected}, found ${JSON.stringify(found) ?? 'nothing'}`, { field });
  return v;
}

function bbox(v: unknown): [number, number, number, number] | undefined {
  return Array.isArray(v) && v.length === 4 && v.every((x) => typeof x === 'number' && Number.isFinite(x)) ? (v as [number, number, number, number]) : undefined;
}

export async function readRun(outDir: string): Promise<RunInfo> {
  const file = join(outDir, 'run.json');
  const j = await readJsonFile(file);
  if (!isObj(j)) throw new InputError(file, 'expected a JSON object', { field: '(root)' });
  const site = need(file, 'site', isObj(j.site) ? j.site : undefined, 'an object', j.site);
  const name = need(file, 'site.name', typeof site.name === 'string' ? site.name : undefined, 'a string', site.name);
  const c = need(file, 'site.crs', isObj(site.crs) ? site.crs : undefined, 'an object', site.crs);
  // proj4 first (it is what the run actually used); the code names the CRS in outputs.
  const def = typeof c.proj4 === 'string' ? c.proj4 : typeof c.input === 'string' ? c.input : undefined;
  need(file, 'site.crs.proj4', def, 'a proj4 string', c.proj4);
  const resolved = resolveCrs(def!, { file, field: 'site.crs.proj4' });
  const code = typeof c.code === 'string' ? c.code : undefined;
  const crs: Crs = { ...resolved, input: typeof c.input === 'string' ? c.input : resolved.input, ...(code ? { code } : {}) };
  const mpu = num(c.metresPerUnit);
  if (mpu !== undefined && Math.abs(mpu - crs.metresPerUnit) > 1e-12) {
    throw new InputError(file, `expected metresPerUnit ${crs.metresPerUnit} from the proj4 definition, found ${mpu}`, { field: 'site.crs.metresPerUnit' });
  }
  const id = need(file, 'identity', isObj(j.identity) ? j.identity : undefined, 'the site identity object', j.identity);
  const extent = need(file, 'identity.extent', bbox(id.extent), '[west, south, east, north]', id.extent);
  const identity: SiteIdentity = {
    name: need(file, 'identity.name', typeof id.name === 'string' ? id.name : undefined, 'a string', id.name),
    crs: need(file, 'identity.crs', typeof id.crs === 'string' ? id.crs : undefined, 'a string', id.crs),
    extent,
  };
  const antenna = isObj(site.antenna) ? site.antenna : {};
  const lines = Array.isArray(j.lines) ? j.lines.filter(isObj).map((l) => ({ id: String(l.id), traces: num(l.traces), lengthM: num(l.lengthM) })) : [];
  const tool = isObj(j.tool) ? j.tool : {};
  const survey = isObj(site.survey) ? (site.survey as SurveyMeta) : undefined;
  const surveyDate = typeof survey?.date === 'string' ? survey.date : typeof site.surveyDate === 'string' ? site.surveyDate : typeof site.date === 'string' ? site.date : undefined;
  return {
    ...(typeof j.createdAt === 'string' ? { createdAt: j.createdAt } : {}),
    ...(typeof tool.version === 'string' ? { toolVersion: tool.version } : {}),
    ...(num(j.nearSurfaceM) !== undefined ? { nearSurfaceM: num(j.nearSurfaceM) } : {}),
    site: {
      name,
      crs,
      antenna: { ...(num(antenna.frequencyMHz) !== undefined ? { frequencyMHz: num(antenna.frequencyMHz) } : {}), ...(num(antenna.separationM) !== undefined ? { separationM: num(antenna.separationM) } : {}) },
      ...(bbox(site.extentWgs84) ? { extentWgs84: bbox(site.extentWgs84) } : {}),
      ...(bbox(site.extentSite) ? { extentSite: bbox(site.extentSite) } : {}),
      ...(surveyDate ? { surveyDate } : {}),
      ...(survey ? { survey } : {}),
    },
    identity,
    lines: lines.map((l) => ({ id: l.id, ...(l.traces !== undefined ? { traces: l.traces } : {}), ...(l.lengthM !== undefined ? { lengthM: l.lengthM } : {}) })),
    ...(isObj(j.recipe) && Array.isArray(j.recipe.steps)
      ? { recipeSteps: j.recipe.steps.filter(isObj).filter((st) => typeof st.step === 'string').map((st) => ({ step: st.step as string, params: isObj(st.params) ? st.params : {}, ...(isObj(st.result) ? { result: st.result } : {}) })) }
      : {}),
  };
}

/**
 * The parsed lines of a FeatureCollection laid out one feature per line, as the pipeline writes it
 * (`{"type":...,"features":[`, then a feature per line, then `]}`): first the head object, then each
 * feature; returns false (after yielding what it could) when the file is laid out otherwise, is not
 * JSON line by line, or is missing. The file's text is never held whole.
 */
async function* featureLines(file: string): AsyncGenerator<{ head: Record<string, unknown> } | { feature: unknown }, boolean> {
  const lines = createInterface({ input: createReadStream(file, { encoding: 'utf8' }), crlfDelay: Infinity });
  let head = false;
  let ended = false;
  try {
    for await (const line of lines) {
      if (ended) {
        if (line.trim() !== '') return false;
      } else if (!head) {
        if (!line.startsWith('{') || !line.endsWith('"features":[')) return false;
        const h: unknown = JSON.parse(line + ']}');
        if (!isObj(h)) return false;
        head = true;
        yield { head: h };
      } else if (line === ']}') ended = true;
      else yield { feature: JSON.parse(line.endsWith(',') ? line.slice(0, -1) : line) };
    }
  } catch {
    return false;
  } finally {
    lines.close();
  }
  return head && ended;
}

/** Checks one feature of anomalies.geojson (index `i`; `ids` the ids before it) as readAnomalies does. */
function anomalyOf(file: string, f: unknown, i: number, ids: Set<string>): AnomalyFeature {
  const at = `features[${i}]`;
  if (!isObj(f) || !isObj(f.properties)) throw new InputError(file, 'expected a Feature with properties', { field: at });
  const p = f.properties;
  const id = need(file, `${at}.properties.id`, typeof p.id === 'string' && p.id.length > 0 ? p.id : undefined, 'a non-empty string', p.id);
  if (ids.has(id)) throw new InputError(file, `expected unique anomaly ids, found "${id}" twice`, { field: `${at}.properties.id` });
  ids.add(id);
  const top = need(file, `${at}.properties.depthTopM`, num(p.depthTopM), 'a depth in metres', p.depthTopM);
  const bottom = need(file, `${at}.properties.depthBottomM`, num(p.depthBottomM), 'a depth in metres', p.depthBottomM);
  if (bottom < top) throw new InputError(file, `expected depthBottomM >= depthTopM (${top}), found ${bottom}`, { field: `${at}.properties.depthBottomM` });
  const origin = p.origin === 'subsurface' || p.origin === 'above-ground' ? p.origin : undefined;
  need(file, `${at}.properties.origin`, origin, '"subsurface" or "above-ground"', p.origin);
  const confidence = need(file, `${at}.properties.confidence`, num(p.confidence), 'a number in 0..1', p.confidence);
  const evidence = Array.isArray(p.evidence) ? (p.evidence.filter(isObj) as EvidenceItem[]) : [];
  const geometry = isObj(f.geometry) && typeof f.geometry.type === 'string' ? (f.geometry as AnomalyFeature['geometry']) : null;
  return { type: 'Feature', geometry, properties: { ...p, id, depthTopM: top, depthBottomM: bottom, origin: origin!, confidence, evidence } };
}

const collectionError = (file: string, j: unknown) =>
  new InputError(file, `expected a GeoJSON FeatureCollection, found ${JSON.stringify(isObj(j) ? j.type : typeof j)}`, { field: 'type' });

/**
 * The anomalies of anomalies.geojson one at a time, checked as `readAnomalies` checks them (same errors,
 * same order). A file laid out a feature per line is read twice, a line at a time: the first pass checks
 * the layout and every feature (so every input error is thrown before the first anomaly is yielded, and
 * a layout that breaks late still falls back to the whole-file read as before), the second yields.
 * Held: one feature and the set of ids (for uniqueness). Other layouts are read whole.
 */
export async function* streamAnomalies(outDir: string): AsyncGenerator<AnomalyFeature, void> {
  const file = join(outDir, 'anomalies.geojson');
  let headType: unknown;
  let firstError: unknown;
  let n = 0;
  const ids = new Set<string>();
  const scan = featureLines(file);
  let step = await scan.next();
  for (; !step.done; step = await scan.next()) {
    const v = step.value;
    if ('head' in v) headType = v.head.type;
    else if (firstError === undefined) {
      try {
        anomalyOf(file, v.feature, n++, ids);
      } catch (e) {
        firstError = e;
      }
    }
  }
  if (!step.value) {
    const j = await readJsonFile(file);
    if (!isObj(j) || j.type !== 'FeatureCollection' || !Array.isArray(j.features)) throw collectionError(file, j);
    // Whole in memory already: check every feature before yielding the first, as for the line layout.
    const seen = new Set<string>();
    yield* j.features.map((f, i) => anomalyOf(file, f, i, seen));
    return;
  }
  if (headType !== 'FeatureCollection') throw collectionError(file, { type: headType });
  if (firstError !== undefined) throw firstError;
  ids.clear();
  let i = 0;
  const again = featureLines(file);
  try {
    let s = await again.next();
    for (; !s.done; s = await again.next()) if ('feature' in s.value) yield anomalyOf(file, s.value.feature, i++, ids);
    if (!s.value || i !== n) throw new InputError(file, `expected the file unchanged while it was read, found ${i} features where there were ${n}`);
  } finally {
    await again.return(false); // closes the file when the caller stops early
  }
}

/** Every anomaly of anomalies.geojson (see streamAnomalies for the checks). */
export async function readAnomalies(outDir: string): Promise<AnomalyFeature[]> {
  const out: AnomalyFeature[] = [];
  for await (const a of streamAnomalies(outDir)) out.push(a);
  return out;
}

/** velocity.json; a missing file is an error (depths and their uncertainty come from it). */
export async function readVelocity(outDir: string): Promise<VelocityInfo> {
  const file = join(outDir, 'velocity.json');
  const j = await readJsonFile(file);
  if (!isObj(j) || !isObj(j.site)) throw new InputError(file, 'expected an object with "site"', { field: 'site' });
  const v = num(j.site.velocityMPerNs);
  if (v === undefined || !(v > 0)) throw new InputError(file, `expected a positive velocity in m/ns, found ${JSON.stringify(j.site.velocityMPerNs)}`, { field: 'site.velocityMPerNs' });
  const spread = num(j.site.spreadMPerNs);
  const k = num(j.site.permittivity);
  const n = num(j.site.fitCount);
  return { velocityMPerNs: v, ...(k !== undefined ? { permittivity: k } : {}), ...(spread !== undefined ? { spreadMPerNs: Math.abs(spread) } : {}), ...(n !== undefined ? { fitCount: n } : {}), raw: j };
}

/** slices.json; missing is allowed (the report then has no thumbnails). */
export async function readSlicesInfo(outDir: string): Promise<SlicesInfo | undefined> {
  const file = join(outDir, 'slices.json');
  const j = await readJsonFile(file, { optional: true });
  if (j === undefined) return undefined;
  if (!isObj(j) || !Array.isArray(j.slices)) throw new InputError(file, 'expected an object with a "slices" array', { field: 'slices' });
  const width = need(file, 'width', num(j.width), 'a width in cells', j.width);
  const height = need(file, 'height', num(j.height), 'a height in cells', j.height);
  const slices = j.slices.map((s, i): SliceInfo => {
    if (!isObj(s)) throw new InputError(file, 'expected an object', { field: `slices[${i}]` });
    const topM = need(file, `slices[${i}].topM`, num(s.topM), 'a depth in metres', s.topM);
    const bottomM = need(file, `slices[${i}].bottomM`, num(s.bottomM), 'a depth in metres', s.bottomM);
    const st = isObj(s.stats) ? s.stats : undefined;
    return {
      index: num(s.index) ?? i,
      band: num(s.band) ?? i + 1,
      topM,
      bottomM,
      ...(st ? { stats: { p2: num(st.p2), p98: num(st.p98), min: num(st.min), max: num(st.max), validCount: num(st.validCount) } } : {}),
    };
  });
  return {
    file: typeof j.file === 'string' ? j.file : 'slices.tif',
    width,
    height,
    ...(num(j.nodata) !== undefined ? { nodata: num(j.nodata) } : {}),
    ...(num(j.originX) !== undefined ? { originX: num(j.originX) } : {}),
    ...(num(j.originY) !== undefined ? { originY: num(j.originY) } : {}),
    ...(num(j.cellSize) !== undefined ? { cellSize: num(j.cellSize) } : {}),
    ...(isObj(j.gridding) ? { gridding: j.gridding } : {}),
    slices,
  };
}
