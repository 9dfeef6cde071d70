import { join } from 'node:path';
import { lockFolder, type StagedFile } from '@lamina/atomic';
import { readRun, readSlicesInfo, readVelocity, streamAnomalies } from './folder';
import type { ExportContext } from './formats';
import { folderDepthError } from './depth-error';
import { preloadGpkg } from './gpkg';
import { readMapBackground } from './report-map';
import { readReview } from './review';
import { decisionsById, isDropped, targetOf } from './targets';
import { sliceThumbnails, THUMBNAIL_SIZE, type Thumbnail } from './thumbnails';
import { csvWriter, dxfWriter, geoJsonWriter, gpkgWriter, reportWriter, type TargetFileWriter } from './writers';

export interface ExportOptions {
  /** Export time written into the files. @default new Date() */
  now?: Date;
  /** Long side of the slice thumbnails in report.html, pixels; 0 leaves them out. @default 240 */
  thumbnailSize?: number;
  /**
   * The thumbnails, already made from this folder's slices.tif by `sliceThumbnails` with `thumbnailSize`
   * (a caller that made them while it did other work). @default made here
   */
  thumbnails?: Thumbnail[];
  /**
   * Hold the folder's write lock (shared with `process` and the viewer's review saves) while exporting;
   * `process` exports into its own stage and passes false. @default true
   */
  lock?: boolean;
  /**
   * run.json, anomalies.geojson, velocity.json and slices.json were written by the caller in this process
   * (`process` exporting into its own stage): not checked against their schemas again (`ReadOptions` of
   * folder.ts; the same files either way). review.json is always checked. @default false
   */
  ownFiles?: boolean;
}

export interface ExportResult {
  /** Files written, relative to the output folder. */
  files: string[];
  /** Number of targets (in every file). */
  targets: number;
  /** Of them, accepted in review (quality level B); the others are candidates. */
  accepted: number;
  /** Anomalies flagged above-ground (by screening or relabelled in review), left out. */
  aboveGround: number;
  /** Anomalies rejected in review, left out. */
  rejected: number;
  /** Anomalies left out by their class (clutter, layer) or as echoes of another, unless accepted in review. */
  notTargetClass: number;
  /** Review decisions whose anomaly id is not in anomalies.geojson (kept in review.json, not applied). */
  unmatchedDecisions: number;
}

export const EXPORT_FILES = ['targets.geojson', 'targets.gpkg', 'targets.csv', 'targets.dxf', 'report.html'] as const;

/**
 * Export the target layer of a processed output folder: reads run.json, anomalies.geojson, review.json
 * (missing: no decisions), velocity.json and slices.json/slices.tif, and writes targets.geojson,
 * targets.gpkg, targets.csv, targets.dxf and report.html, each staged beside its path and all renamed
 * into place at the end (an input error writes nothing). Anomalies are read, turned into targets and
 * appended to the files one at a time; what stays per anomaly is its id, its report row, and (in sql.js)
 * the GeoPackage being built.
 */
export async function exportTargets(outDir: string, options: ExportOptions = {}): Promise<ExportResult> {
  if (options.lock === false) return exportUnlocked(outDir, options);
  const lock = await lockFolder(outDir, { what: 'lamina export', waitMs: 120_000 });
  try {
    return await exportUnlocked(outDir, options);
  } finally {
    await lock.release();
  }
}

async function exportUnlocked(outDir: string, options: ExportOptions): Promise<ExportResult> {
  const now = options.now ?? new Date();
  // sql.js compiles while the inputs and the thumbnails are read
  preloadGpkg();
  const read = { trusted: options.ownFiles === true };
  const run = await readRun(outDir, read);
  const anomalies = streamAnomalies(outDir, read);
  const writers: TargetFileWriter[] = [];
  const staged: StagedFile[] = [];
  try {
    // The first step checks the whole file (every input error of anomalies.geojson is thrown here, before
    // velocity.json and the rest are read, as when it was read whole).
    const first = await anomalies.next();
    const velocity = await readVelocity(outDir, read);
    const review = await readReview(join(outDir, 'review.json'), run.identity);
    const slices = await readSlicesInfo(outDir, read);
    const freq = run.site.antenna?.frequencyMHz;
    const ctx: ExportContext = {
      siteName: run.site.name,
      crs: run.site.crs,
      method: `GPR, ${freq !== undefined ? `${freq} MHz, ` : ''}depth slices`,
      surveyDate: run.site.surveyDate ?? null,
      ...(run.site.survey ? { survey: run.site.survey } : {}),
      exportDate: now.toISOString(),
    };
    const thumbs = options.thumbnails ?? (slices && (options.thumbnailSize ?? THUMBNAIL_SIZE) > 0 ? await sliceThumbnails(outDir, slices, { maxSize: options.thumbnailSize ?? THUMBNAIL_SIZE }) : []);

    const byId = decisionsById(review.decisions);
    const depthError = folderDepthError(velocity, slices, freq);
    const matched = new Set<string>();
    const counts = { anomalies: 0, targets: 0, accepted: 0, aboveGround: 0, rejected: 0, notTargetClass: 0 };
    // Same order as EXPORT_FILES; the report comes last.
    const makers = [geoJsonWriter, gpkgWriter, csvWriter, dxfWriter] as const;
    for (let i = 0; i < makers.length; i++) writers.push(await makers[i]!(join(outDir, EXPORT_FILES[i]!), ctx));
    const report = reportWriter(join(outDir, 'report.html'), run.site.crs);
    for (let step = first; !step.done; step = await anomalies.next()) {
      const a = step.value;
      counts.anomalies++;
      if (byId.has(a.properties.id)) matched.add(a.properties.id);
      const r = targetOf(a, byId, velocity, run.site.crs, depthError);
      if (r === null) continue;
      report.add(r);
      if (isDropped(r)) {
        if (r.reason === 'rejected') counts.rejected++;
        else if (r.reason === 'class') counts.notTargetClass++;
        else counts.aboveGround++;
        continue;
      }
      counts.targets++;
      if (r.decision === 'accepted') counts.accepted++;
      for (const w of writers) await w.add(r);
    }
    const unmatchedDecisions = review.decisions.filter((d) => !matched.has(d.anomalyId)).length;
    for (const w of writers) staged.push(await w.finish());
    writers.length = 0;
    const background = await readMapBackground(outDir, run.site.crs);
    staged.push(await report.finish({ run, velocity, thumbnails: thumbs, ctx, unmatchedDecisions, ...(slices ? { slices } : {}), background }, counts.anomalies, counts.notTargetClass));
    for (const s of staged) await s.commit();
    return { files: [...EXPORT_FILES], targets: counts.targets, accepted: counts.accepted, aboveGround: counts.aboveGround, rejected: counts.rejected, notTargetClass: counts.notTargetClass, unmatchedDecisions };
  } catch (e) {
    await Promise.all([...writers.map((w) => w.abort()), ...staged.map((s) => s.abort())]);
    throw e;
  } finally {
    await anomalies.return();
  }
}
