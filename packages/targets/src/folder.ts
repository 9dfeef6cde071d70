import { createReadStream } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createInterface } from 'node:readline';
import { join } from 'node:path';
import { InputError } from '@lamina/errors';
import { resolveCrs } from '@lamina/site';
import type { Crs } from '@lamina/site';
import { anomaliesSchema, checkContract, runSchema, slicesSchema, velocitySchema } from '@lamina/contracts';
import type { AnomalyFeature as AnomalyFeatureJson, Box, EvidenceRow, SliceEntry, RunLine, SiteIdentity, SlicesJson, SurveyJson, VelocityJson } from '@lamina/contracts';

/** What export needs from run.json (its contract: `runSchema` in @lamina/contracts), the CRS resolved. */
export interface RunInfo {
  createdAt?: string;
  toolVersion?: string;
  /** Depth of the near-surface (direct- and ground-wave) zone, m (run.json `nearSurfaceM`). */
  nearSurfaceM?: number;
  site: {
    name: string;
    crs: Crs;
    antenna?: { frequencyMHz?: number; separationM?: number };
    extentWgs84?: Box;
    extentSite?: Box;
    surveyDate?: string;
    /** site.json's `survey` block as run.json carries it (checked when site.json was loaded). */
    survey?: SurveyMeta;
  };
  identity: SiteIdentity;
  lines: RunLine[];
  /** What ran, step by step, as run.json's `log` records it (name, parameters, result): the method statement. */
  recipeSteps?: { step: string; params: Record<string, unknown>; result?: Record<string, unknown> }[];
}

/** Survey metadata (site.json `survey`, carried in run.json: surveySchema in @lamina/contracts). */
export type SurveyMeta = SurveyJson;

export type { EvidenceRow as EvidenceItem, SlicesJson as SlicesInfo, SliceEntry as SliceInfo };

/** An anomaly as read (the contract's feature, `evidence` an empty list where the file has none). */
export type AnomalyFeature = AnomalyFeatureJson & { properties: { evidence: EvidenceRow[] } };

/** velocity.json's site figures (non-finite ones absent) and the file as it is. */
export interface VelocityInfo {
  velocityMPerNs: number;
  permittivity?: number;
  spreadMPerNs?: number;
  /** Standard uncertainty of the site velocity itself (velocity.json `site.uncertaintyMPerNs`; older files lack it). */
  uncertaintyMPerNs?: number;
  fitCount?: number;
  raw: VelocityJson;
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
const num = (v: number | null | undefined): number | undefined => (typeof v === 'number' && Number.isFinite(v) ? v : undefined);

/**
 * How the folder's files are read. `trusted`: they were written by the caller itself in this process
 * (`lamina process` exporting into its own stage), from objects of the contracts' types, so they are not
 * checked against their schemas again; `checkContract` returns the very object it is given, so what is
 * read is the same. The other checks (unique ids, depth order, the CRS) still run. @default checked
 */
export interface ReadOptions {
  trusted?: boolean;
}

/** `checkContract`, or the object as it is for a trusted file. */
function contract<S extends Parameters<typeof checkContract>[0]>(schema: S, json: unknown, file: string, options: ReadOptions, at?: string): ReturnType<typeof checkContract<S>> {
  return options.trusted ? (json as ReturnType<typeof checkContract<S>>) : checkContract(schema, json, file, at !== undefined ? { at } : {});
}

export async function readRun(outDir: string, options: ReadOptions = {}): Promise<RunInfo> {
  const file = join(outDir, 'run.json');
  const j = contract(runSchema, await readJsonFile(file), file, options);
  const site = j.site;
  const c = site.crs;
  // proj4 first (it is what the run actually used); the code names the CRS in outputs.
  const def = c.proj4 ?? c.input!;
  const resolved = resolveCrs(def, { file, field: 'site.crs.proj4' });
  const crs: Crs = { ...resolved, input: c.input ?? resolved.input, ...(c.code ? { code: c.code } : {}) };
  if (c.metresPerUnit !== undefined && Math.abs(c.metresPerUnit - crs.metresPerUnit) > 1e-12) {
    throw new InputError(file, `expected metresPerUnit ${crs.metresPerUnit} from the proj4 definition, found ${c.metresPerUnit}`, { field: 'site.crs.metresPerUnit' });
  }
  const antenna = site.antenna ?? {};
  const survey = site.survey;
  const surveyDate = survey?.date ?? site.surveyDate ?? site.date;
  return {
    ...(j.createdAt !== undefined ? { createdAt: j.createdAt } : {}),
    ...(j.tool ? { toolVersion: j.tool.version } : {}),
    ...(j.nearSurfaceM !== undefined ? { nearSurfaceM: j.nearSurfaceM } : {}),
    site: {
      name: site.name,
      crs,
      antenna: { ...(antenna.frequencyMHz !== undefined ? { frequencyMHz: antenna.frequencyMHz } : {}), ...(antenna.separationM !== undefined ? { separationM: antenna.separationM } : {}) },
      ...(site.extentWgs84 ? { extentWgs84: site.extentWgs84 } : {}),
      ...(site.extentSite ? { extentSite: site.extentSite } : {}),
      ...(surveyDate ? { surveyDate } : {}),
      ...(survey ? { survey } : {}),
    },
    identity: j.identity,
    lines: (j.lines ?? []).map((l) => ({ id: l.id, ...(l.traces !== undefined ? { traces: l.traces } : {}), ...(l.lengthM !== undefined ? { lengthM: l.lengthM } : {}) })),
    ...(j.log?.length ? { recipeSteps: j.log.map((e) => ({ step: e.step, params: e.params ?? {}, ...(e.result ? { result: e.result } : {}) })) } : {}),
  };
}

/**
 * The parsed lines of a FeatureCollection laid out one feature per line, as the pipeline writes it
 * (`{"type":...,"features":[`, then a feature per line, then `]}`): first the head object, then each
 * feature; returns false (after yielding what it could) when the file is laid out otherwise, is not
 * JSON line by line, or is missing. The file's text is never held whole.
 */
async function* featureLines(file: string): AsyncGenerator<{ head: Record<string, unknown> } | { feature: unknown }, boolean> {
  const input = createReadStream(file, { encoding: 'utf8' });
  const lines = createInterface({ input, crlfDelay: Infinity });
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
    // closing readline leaves its input open: destroy it, or an early return keeps the file open (a
    // mounted output folder then cannot be unmounted)
    lines.close();
    input.destroy();
  }
  return head && ended;
}

/**
 * The features of a GeoJSON FeatureCollection one at a time: streamed when the file is laid out a feature
 * per line (as the pipeline writes lines.geojson and anomalies.geojson), read whole otherwise; nothing for
 * a missing file. Unchecked: for drawing, not for the contract.
 */
export async function* streamFeatures(file: string): AsyncGenerator<unknown, void> {
  let streamed = 0;
  const scan = featureLines(file);
  let step = await scan.next();
  for (; !step.done; step = await scan.next()) {
    if ('feature' in step.value) {
      streamed++;
      yield step.value.feature;
    }
  }
  if (step.value) return;
  // another layout (or no file): whole, skipping what was already yielded
  const j = await readJsonFile(file, { optional: true });
  if (isObj(j) && Array.isArray(j.features)) yield* j.features.slice(streamed);
}

const featureSchema = anomaliesSchema.shape.features.element;

/** Checks one feature of anomalies.geojson (index `i`; `ids` the ids before it) as readAnomalies does. */
function anomalyOf(file: string, f: unknown, i: number, ids: Set<string>, options: ReadOptions): AnomalyFeature {
  const at = `features[${i}]`;
  const a = contract(featureSchema, f, file, options, at);
  const p = a.properties;
  if (ids.has(p.id)) throw new InputError(file, `expected unique anomaly ids, found "${p.id}" twice`, { field: `${at}.properties.id` });
  ids.add(p.id);
  if (p.depthBottomM < p.depthTopM) throw new InputError(file, `expected depthBottomM >= depthTopM (${p.depthTopM}), found ${p.depthBottomM}`, { field: `${at}.properties.depthBottomM` });
  return { ...a, type: 'Feature', properties: { ...p, evidence: p.evidence ?? [] } };
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
export async function* streamAnomalies(outDir: string, options: ReadOptions = {}): AsyncGenerator<AnomalyFeature, void> {
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
        anomalyOf(file, v.feature, n++, ids, options);
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
    yield* j.features.map((f, i) => anomalyOf(file, f, i, seen, options));
    return;
  }
  if (headType !== 'FeatureCollection') throw collectionError(file, { type: headType });
  if (firstError !== undefined) throw firstError;
  ids.clear();
  let i = 0;
  const again = featureLines(file);
  try {
    let s = await again.next();
    for (; !s.done; s = await again.next()) if ('feature' in s.value) yield anomalyOf(file, s.value.feature, i++, ids, options);
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
export async function readVelocity(outDir: string, options: ReadOptions = {}): Promise<VelocityInfo> {
  const file = join(outDir, 'velocity.json');
  const j = contract(velocitySchema, await readJsonFile(file), file, options);
  const spread = num(j.site.spreadMPerNs);
  const k = num(j.site.permittivity);
  const n = num(j.site.fitCount);
  const u = num(j.site.uncertaintyMPerNs);
  return {
    velocityMPerNs: j.site.velocityMPerNs,
    ...(k !== undefined ? { permittivity: k } : {}),
    ...(spread !== undefined ? { spreadMPerNs: Math.abs(spread) } : {}),
    ...(u !== undefined ? { uncertaintyMPerNs: Math.abs(u) } : {}),
    ...(n !== undefined ? { fitCount: n } : {}),
    raw: j,
  };
}

/** slices.json; missing is allowed (the report then has no thumbnails). */
export async function readSlicesInfo(outDir: string, options: ReadOptions = {}): Promise<SlicesJson | undefined> {
  const file = join(outDir, 'slices.json');
  const j = await readJsonFile(file, { optional: true });
  return j === undefined ? undefined : contract(slicesSchema, j, file, options);
}
