import type { Crs, PlanFeature } from '@lamina/site';
import { pointToWgs84 } from '@lamina/site';
import { DiskStack, writeSlicesFromDisk, type GriddingInfo, type SliceDepth, type SliceGrid } from '@lamina/slices';
import { siteForecast, type FeatureCollection, type ScreenOptions } from '@lamina/screening';
import { readSlicesInfo, sliceThumbnails, type Thumbnail } from '@lamina/targets';
import type { VelocityReport } from '@lamina/velocity';

/**
 * The outputs that depend on the gridded stack but not on screening: slices.tif and slices.json (from the
 * stack on disk), report.html's slice thumbnails (from those files, as `exportTargets` makes them) and the
 * forecast of the loci. A run screening its grid in one band hands them to a worker while it screens, so
 * a core that would wait makes them; the results are those of the same functions run in turn.
 */
export interface SideOutputsTask {
  kind: 'sideOutputs';
  stageDir: string;
  /** The stack on disk (`DiskStack.create`'s path, grid and slices), complete. */
  disk: { path: string; grid: SliceGrid; slices: SliceDepth[] };
  gridding: GriddingInfo | undefined;
  /** `exportTargets`' thumbnail size (0: none). */
  thumbnailSize: number;
  forecast: {
    plan: PlanFeature[];
    velocity: VelocityReport;
    crs: Crs;
    /** Surveyed cells of the whole grid. */
    surveyed: Uint8Array;
    options: Pick<ScreenOptions, 'antennaFrequencyMHz' | 'antennaSeparationM'>;
  };
}

export interface SideOutputsResult {
  thumbnails: Thumbnail[];
  forecast: FeatureCollection;
}

export async function sideOutputs(task: SideOutputsTask): Promise<SideOutputsResult> {
  const { grid, slices } = task.disk;
  const disk = DiskStack.open(task.disk.path, grid, slices);
  try {
    await writeSlicesFromDisk(disk, task.stageDir, task.gridding);
  } finally {
    disk.close();
  }
  const info = task.thumbnailSize > 0 ? await readSlicesInfo(task.stageDir) : undefined;
  const thumbnails = info ? await sliceThumbnails(task.stageDir, info, { maxSize: task.thumbnailSize }) : [];
  return { thumbnails, forecast: gridForecast(task.forecast, grid, slices) };
}

/** forecast.geojson on the slices' grid, from what `SideOutputsTask.forecast` holds. */
export function gridForecast(f: SideOutputsTask['forecast'], grid: SliceGrid, slices: SliceDepth[]): FeatureCollection {
  const toWgs84 = (x: number, y: number) => pointToWgs84(f.crs, x, y);
  // (the forecast takes the lines only to make a grid of its own; it is given the slices' grid)
  return siteForecast(f.plan, f.velocity, [], { grid, slices }, f.surveyed, toWgs84, f.crs.metresPerUnit, f.options);
}
