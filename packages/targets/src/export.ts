import { join } from 'node:path';
import { stageFile, type StagedFile } from '@lamina/atomic';
import { readAnomalies, readRun, readSlicesInfo, readVelocity } from './folder';
import { TARGET_FIELDS, targetProperties, targetsCsv, targetsDxf, targetsGeoJson, type ExportContext } from './formats';
import { writeGpkg, type GpkgLayer, type GpkgSrs } from './gpkg';
import { reportHtml } from './report';
import { readReview } from './review';
import { buildTargets, type Target } from './targets';
import { sliceThumbnails } from './thumbnails';
import { crsToWkt, WGS84_WKT } from './wkt';

export interface ExportOptions {
  /** Export time written into the files. @default new Date() */
  now?: Date;
  /** Long side of the slice thumbnails in report.html, pixels; 0 leaves them out. @default 240 */
  thumbnailSize?: number;
}

export interface ExportResult {
  /** Files written, relative to the output folder. */
  files: string[];
  /** Number of targets (in every file). */
  targets: number;
  /** Anomalies flagged above-ground (by screening or relabelled in review), left out. */
  aboveGround: number;
  /** Anomalies rejected in review, left out. */
  rejected: number;
  /** Review decisions whose anomaly id is not in anomalies.geojson (kept in review.json, not applied). */
  unmatchedDecisions: number;
}

export const EXPORT_FILES = ['targets.geojson', 'targets.gpkg', 'targets.csv', 'targets.dxf', 'report.html'] as const;

/** srs_id for a site CRS without an EPSG code (GeoPackage user-defined range). */
export const CUSTOM_SRS_ID = 100000;

/**
 * Export the target layer of a processed output folder: reads run.json, anomalies.geojson, review.json
 * (missing: no decisions), velocity.json and slices.json/slices.tif, and writes targets.geojson,
 * targets.gpkg, targets.csv, targets.dxf and report.html, each atomically, after all of them have been
 * built (an input error writes nothing).
 */
export async function exportTargets(outDir: string, options: ExportOptions = {}): Promise<ExportResult> {
  const now = options.now ?? new Date();
  const run = await readRun(outDir);
  const anomalies = await readAnomalies(outDir);
  const velocity = await readVelocity(outDir);
  const review = await readReview(join(outDir, 'review.json'), run.identity);
  const slices = await readSlicesInfo(outDir);
  const { targets, dropped } = buildTargets(anomalies, review.decisions, velocity, run.site.crs);
  const ids = new Set(anomalies.map((a) => a.properties.id));
  const unmatchedDecisions = review.decisions.filter((d) => !ids.has(d.anomalyId)).length;

  const freq = run.site.antenna?.frequencyMHz;
  const ctx: ExportContext = {
    siteName: run.site.name,
    crs: run.site.crs,
    method: `GPR, ${freq !== undefined ? `${freq} MHz, ` : ''}depth slices`,
    surveyDate: run.site.surveyDate ?? null,
    exportDate: now.toISOString(),
  };
  const thumbs = slices && (options.thumbnailSize ?? 240) > 0 ? await sliceThumbnails(outDir, slices, { maxSize: options.thumbnailSize ?? 240 }) : [];

  // Each file is built and written to a temp file in turn (only one in memory), then all are renamed.
  const contents: [string, () => string | Uint8Array | Promise<Uint8Array>][] = [
    ['targets.geojson', () => targetsGeoJson(targets, ctx)],
    ['targets.gpkg', () => targetsGpkg(targets, ctx)],
    ['targets.csv', () => targetsCsv(targets, ctx)],
    ['targets.dxf', () => targetsDxf(targets, ctx)],
    ['report.html', () => reportHtml({ run, velocity, targets, dropped, anomalies, thumbnails: thumbs, ctx, unmatchedDecisions })],
  ];
  const staged: StagedFile[] = [];
  try {
    for (const [name, build] of contents) staged.push(await stageFile(join(outDir, name), await build()));
    for (const s of staged) await s.commit();
  } catch (e) {
    await Promise.all(staged.map((s) => s.abort()));
    throw e;
  }
  return {
    files: contents.map(([n]) => n),
    targets: targets.length,
    aboveGround: dropped.filter((d) => d.reason !== 'rejected').length,
    rejected: dropped.filter((d) => d.reason === 'rejected').length,
    unmatchedDecisions,
  };
}

/** targets.gpkg: layer `targets` in the site CRS and `targets_wgs84` in EPSG:4326, same attributes. */
export async function targetsGpkg(targets: Target[], ctx: ExportContext): Promise<Uint8Array> {
  const code = ctx.crs.code ? /^EPSG:(\d+)$/i.exec(ctx.crs.code)?.[1] : undefined;
  const siteSrs: GpkgSrs = code
    ? { srsId: Number(code), name: ctx.crs.code!, organization: 'EPSG', organizationId: Number(code), definition: crsToWkt(ctx.crs), description: ctx.crs.proj4 }
    : { srsId: CUSTOM_SRS_ID, name: 'Lamina site CRS', organization: 'NONE', organizationId: CUSTOM_SRS_ID, definition: crsToWkt(ctx.crs), description: ctx.crs.proj4 };
  const wgs: GpkgSrs = { srsId: 4326, name: 'WGS 84 geodetic', organization: 'EPSG', organizationId: 4326, definition: WGS84_WKT, description: 'longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid' };
  const fields = TARGET_FIELDS.map(([name, type]) => ({ name, type }));
  const names = TARGET_FIELDS.map(([name]) => name);
  const rows = targets.map((t) => {
    const p = targetProperties(t, ctx);
    return names.map((n) => p[n] ?? null);
  });
  const layer = (name: string, srsId: number, geom: (t: Target) => Target['site'], description: string): GpkgLayer => ({
    name,
    srsId,
    description,
    geometryType: 'GEOMETRY',
    fields,
    features: targets.map((t, i) => ({ geometry: geom(t), values: rows[i]! })),
  });
  return writeGpkg(
    [wgs, siteSrs],
    [
      layer('targets', siteSrs.srsId, (t) => t.site, `GPR targets of ${ctx.siteName} in the site CRS (radar finds are not a locate)`),
      layer('targets_wgs84', 4326, (t) => t.wgs84, `GPR targets of ${ctx.siteName} in WGS 84 (radar finds are not a locate)`),
    ],
    { timestamp: ctx.exportDate },
  );
}
