/** `lamina merge`: one output folder for a tiled survey, of the same contract as `lamina process`. */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { lockFolder, stageFolder, type FolderLock } from '@lamina/atomic';
import type { SiteIdentity } from '@lamina/contracts';
import { shownPath } from '@lamina/site';
import { exportTargets, streamFeatures, type ExportResult } from '@lamina/targets';
import { mergeAnomalies, type AnomalyMerge } from './anomalies';
import { mergeLines, mergePlan, mergeVelocity, mergedRun } from './folder';
import { readMergeInputs } from './inputs';
import { writeMosaic } from './mosaic';
import { mergeOverlays } from './overlays';
import { mergeReview } from './review';
import { canRescreen, rescreen } from './rescreen';

export interface MergeOptions {
  /** Time written into run.json and the exports. @default new Date() */
  now?: Date;
  /** Stage name of each step as it starts, for progress. @default none */
  onStep?: (step: string) => void;
  /**
   * Screen the merged survey again as one run (`rescreen`) when every tile wrote its screening inputs
   * (`lamina process-tile` does); false, or tiles without them, keep the tiles' anomalies, each once,
   * pieces joined across core edges (`mergeAnomalies`). @default true
   */
  rescreen?: boolean;
  /** Memory for one screened band (`lamina process --band-memory`). @default 384 MiB */
  screenBandBytes?: number;
  /** How far a screened band reaches past its core, m (`lamina process --band-overlap`). @default as `process` */
  bandOverlapM?: number;
}

/** Features of the interfaces and forecast files the screening wrote (run.json counts). */
async function countOverlays(dir: string): Promise<{ interfaces: number; forecast: number }> {
  const count = async (f: string) => {
    let n = 0;
    for await (const _ of streamFeatures(join(dir, f))) n++;
    return n;
  };
  return { interfaces: await count('interfaces.geojson'), forecast: await count('forecast.geojson') };
}

export interface MergeSummary {
  outDir: string;
  tiles: number;
  /** Cells of slices.tif (width x height). */
  cells: number;
  width: number;
  height: number;
  slices: number;
  anomalies: number;
  /** Objects joined from pieces of two or more tiles (0 when screened again). */
  joined: number;
  /** The merged survey was screened again as one run (`MergeOptions.rescreen`). */
  rescreened: boolean;
  decisions: number;
  unmatchedDecisions: number;
  exported: ExportResult;
}

const union = (boxes: [number, number, number, number][]): [number, number, number, number] => [
  Math.min(...boxes.map((b) => b[0])),
  Math.min(...boxes.map((b) => b[1])),
  Math.max(...boxes.map((b) => b[2])),
  Math.max(...boxes.map((b) => b[3])),
];

/**
 * Merges the tile outputs of `tilesPath` (tiles.json or its folder; each tile processed into the
 * `<tile>-out` folder beside it) into `outDir`: slices.tif a mosaic of the tiles' cores, anomalies each
 * once under `<tile id>/<id>` (joined pieces: the first piece's id), interfaces, forecast, review
 * decisions carried over, velocity.json, lines, plan, radargrams and run.json, then the targets and the
 * report through `exportTargets`. Written into a stage folder beside `outDir` and renamed into place at
 * the end, as `process` does (a refused or failed merge leaves `outDir` as it was).
 */
export async function runMerge(tilesPath: string, outDir: string, options: MergeOptions = {}): Promise<MergeSummary> {
  const now = options.now ?? new Date();
  const step = options.onStep ?? (() => {});
  const inputs = await readMergeInputs(tilesPath);
  const runLock = await lockFolder(outDir, { kind: 'run', what: 'lamina merge', shown: shownPath(outDir) });
  let writeLock: FolderLock | undefined;
  const stage = await stageFolder(outDir).catch(async (e: unknown) => {
    await runLock.release();
    throw e;
  });
  try {
    const identity: SiteIdentity = { name: inputs.manifest.site.name, crs: inputs.tiles[0]!.run.identity.crs, extent: union(inputs.tiles.map((t) => t.run.identity.extent)) };
    const extentSite = union(inputs.tiles.map((t) => t.run.site.extentSite ?? (t.entry.core as [number, number, number, number])));
    step('slices');
    const again = (options.rescreen ?? true) && (await canRescreen(inputs));
    const mosaic = await writeMosaic(inputs, stage.path, stage.path, { keep: again });
    let anomalies: AnomalyMerge;
    let overlays: { interfaces: number; forecast: number };
    let hyperbolas: number;
    let nearSurfaceM: number | undefined;
    try {
      step('lines, radargrams, velocity');
      hyperbolas = await mergeVelocity(inputs, stage.path);
      step('anomalies');
      const raw = mosaic.raw;
      if (raw?.before) {
        const s = await rescreen(inputs, stage.path, mosaic.json, { slices: raw.slices, before: raw.before, ...(raw.directions ? { directions: raw.directions } : {}) }, join(stage.path, 'velocity.json'), {
          ...(options.screenBandBytes !== undefined ? { screenBandBytes: options.screenBandBytes } : {}),
          ...(options.bandOverlapM !== undefined ? { bandOverlapM: options.bandOverlapM } : {}),
        });
        // ids as the untiled run numbers them: the tiles' decisions find their anomaly by place and depth
        anomalies = { ids: new Map(), cut: new Set(), anchored: s.anchored, count: s.anomalies, joined: 0 };
        overlays = await countOverlays(stage.path);
        nearSurfaceM = s.nearSurfaceM;
      } else {
        anomalies = await mergeAnomalies(inputs, stage.path);
        overlays = await mergeOverlays(inputs, anomalies, stage.path);
      }
    } finally {
      mosaic.raw?.slices.remove();
      mosaic.raw?.before?.remove();
      for (const d of mosaic.raw?.directions ?? []) d.raw.remove();
    }
    const lines = await mergeLines(inputs, stage.path);
    const plan = await mergePlan(inputs, stage.path);
    const counts = { anomalies: anomalies.count, joined: anomalies.joined, interfaces: overlays.interfaces, forecast: overlays.forecast, lines, planFeatures: plan, hyperbolas };
    const run = mergedRun(inputs, identity, extentSite, now, counts, nearSurfaceM);
    await writeFile(join(stage.path, 'run.json'), `${JSON.stringify(run, null, 1)}\n`);
    step('review, targets');
    writeLock = await lockFolder(outDir, { what: 'lamina merge', waitMs: 120_000, shown: shownPath(outDir) });
    const review = await mergeReview(inputs, anomalies, identity, join(outDir, 'review.json'), join(stage.path, 'review.json'));
    const exported = await exportTargets(stage.path, { now, lock: false });
    await stage.commit();
    await writeLock.release();
    await runLock.release();
    return {
      outDir,
      tiles: inputs.tiles.length,
      cells: mosaic.cells,
      width: mosaic.json.width,
      height: mosaic.json.height,
      slices: mosaic.json.slices.length,
      anomalies: anomalies.count,
      joined: anomalies.joined,
      rescreened: nearSurfaceM !== undefined,
      decisions: review.decisions,
      unmatchedDecisions: review.unmatched,
      exported,
    };
  } catch (e) {
    await stage.abort().catch(() => {});
    await writeLock?.release();
    await runLock.release();
    throw e;
  }
}
