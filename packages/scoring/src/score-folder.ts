import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { InputError } from '@lamina/errors';
import { pointFromWgs84, resolveCrs } from '@lamina/site';
import type { VelocityModel } from '@lamina/velocity';
import type { FeatureCollection } from '@lamina/screening';
import { scoreRun, type ScoreOptions, type ScoreReport, type ScoreTruth } from './score';

function readJson(file: string): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch {
    throw new InputError(file, 'expected a readable file, found none');
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(file, `expected JSON, found a parse error (${(e as Error).message})`);
  }
}

function collection(file: string): FeatureCollection {
  const v = readJson(file) as { type?: unknown; features?: unknown };
  if (v?.type !== 'FeatureCollection' || !Array.isArray(v.features)) throw new InputError(file, `expected a GeoJSON FeatureCollection, found ${JSON.stringify(v?.type)}`, { field: 'type' });
  return v as FeatureCollection;
}

/** Reads and checks the parts of a simulator's truth.json that scoring uses. */
export function readScoreTruth(file: string): ScoreTruth {
  const t = readJson(file) as Partial<ScoreTruth>;
  if (typeof t.crs !== 'string') throw new InputError(file, `expected a CRS string, found ${JSON.stringify(t.crs)}`, { field: 'crs' });
  if (typeof t.metresPerUnit !== 'number' || !(t.metresPerUnit > 0)) throw new InputError(file, `expected a positive number, found ${JSON.stringify(t.metresPerUnit)}`, { field: 'metresPerUnit' });
  if (!t.soil || !(typeof t.soil.velocityMPerNs === 'number' && t.soil.velocityMPerNs > 0)) throw new InputError(file, 'expected a positive soil velocity', { field: 'soil.velocityMPerNs' });
  if (!Array.isArray(t.buried)) throw new InputError(file, 'expected an array', { field: 'buried' });
  if (!Array.isArray(t.aboveGround)) throw new InputError(file, 'expected an array', { field: 'aboveGround' });
  t.buried.forEach((b, i) => {
    if (!b.center && !(b.from && b.to)) throw new InputError(file, 'expected from/to or center', { field: `buried[${i}]` });
    for (const k of ['topDepthM', 'bottomDepthM'] as const)
      if (b[k] !== undefined && !(typeof b[k] === 'number' && Number.isFinite(b[k]))) throw new InputError(file, `expected a number, found ${JSON.stringify(b[k])}`, { field: `buried[${i}].${k}` });
  });
  t.aboveGround.forEach((a, i) => {
    if (!a.center && !(a.from && a.to)) throw new InputError(file, 'expected from/to or center', { field: `aboveGround[${i}]` });
  });
  return t as ScoreTruth;
}

export interface FolderScore {
  report: ScoreReport;
  truth: ScoreTruth;
  /** targets.geojson when the folder has one, else null (buried recall then counts no targets). */
  targetsFile: string | null;
}

/**
 * Scores the output folder of `lamina process` against a truth.json, as `lamina score` does:
 * targets.geojson and anomalies.geojson (WGS84) brought into the truth's CRS, and the folder's own
 * velocity.json model as `runModel` (the air-wave radius of a depth label follows the model that gave it),
 * and lines.geojson as the survey (buried recall over the surveyed length, full length beside it).
 */
export function scoreFolder(outDir: string, truthFile: string, options: Omit<ScoreOptions, 'runModel' | 'survey' | 'runPermittivity'> = {}): FolderScore {
  const truth = readScoreTruth(truthFile);
  const crs = resolveCrs(truth.crs, { file: truthFile, field: 'crs' });
  const aFile = join(outDir, 'anomalies.geojson');
  const tFile = join(outDir, 'targets.geojson');
  if (!existsSync(aFile)) throw new InputError(aFile, 'expected the anomalies of a processed folder, found no file');
  const anomalies = collection(aFile);
  const targets = existsSync(tFile) ? collection(tFile) : undefined;
  const vFile = join(outDir, 'velocity.json');
  const velocity = existsSync(vFile) ? (readJson(vFile) as { model?: VelocityModel; site?: { permittivity?: unknown } }) : undefined;
  const runModel = velocity?.model;
  const runPermittivity = typeof velocity?.site?.permittivity === 'number' ? velocity.site.permittivity : undefined;
  const from = (lon: number, lat: number) => pointFromWgs84(crs, lon, lat);
  const lFile = join(outDir, 'lines.geojson');
  const lines = existsSync(lFile)
    ? collection(lFile).features.flatMap((f) => {
        const g = f.geometry as { type?: string; coordinates?: unknown } | null;
        return g?.type === 'LineString' && Array.isArray(g.coordinates) ? [(g.coordinates as number[][]).map((c) => from(c[0]!, c[1]!))] : [];
      })
    : [];
  const report = scoreRun(targets, anomalies, truth, from, { ...options, ...(runModel ? { runModel } : {}), ...(runPermittivity !== undefined ? { runPermittivity } : {}), ...(lines.length ? { survey: { lines } } : {}) });
  return { report, truth, targetsFile: targets ? tFile : null };
}
