import { mkdir, readFile, rename, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { encodeCog, readGeoTiff, type CogCrs, type CogOptions } from '@lamina/cog';
import { InputError } from '@lamina/errors';
import { checkContract, parseJsonText, slicesSchema, type SliceStatsJson, type SlicesJson } from '@lamina/contracts';
import type { GriddingInfo, Slice, SliceGrid, SliceStack } from './stack';
import { sliceStats, type SliceStats } from './stats';

// The content of slices.json is a contract (the anomalies, screening, targets and viewer read it):
// slicesSchema in @lamina/contracts.
export type { SlicesJson };

type NullableStats = SliceStatsJson;

export const SLICES_TIF = 'slices.tif';
export const SLICES_JSON = 'slices.json';

export interface WriteSlicesOptions {
  /** @default 256 */
  tileSize?: number;
  /** zlib level. @default 1 (float mantissas hardly compress; level 6 saved about 1 % more and took longer) */
  level?: number;
}

/** `EPSG:nnnn` (any case) to its number. */
export function epsgOf(crs: string): number | undefined {
  const m = /^\s*EPSG:(\d+)\s*$/i.exec(crs);
  return m ? Number(m[1]) : undefined;
}

function cogCrs(grid: SliceGrid): CogCrs {
  const epsg = epsgOf(grid.crs);
  const geographic = grid.isGeographic ?? /\+proj=(longlat|latlong)\b/.test(grid.crs);
  const crs: CogCrs = { geographic, metresPerUnit: grid.metresPerUnit ?? 1 };
  if (epsg !== undefined) crs.epsg = epsg;
  else crs.citation = grid.crs;
  return crs;
}

/** GDAL's band statistics items; none for a band without valid cells (GDAL then computes nothing either). */
function gdalStats(s: SliceStats | undefined, cells: number): Record<string, string> {
  if (!s || !(s.validCount > 0) || ![s.min, s.max, s.mean, s.std].every(Number.isFinite)) return {};
  return {
    STATISTICS_MINIMUM: String(s.min),
    STATISTICS_MAXIMUM: String(s.max),
    STATISTICS_MEAN: String(s.mean),
    STATISTICS_STDDEV: String(s.std),
    STATISTICS_VALID_PERCENT: String((100 * s.validCount) / cells),
  };
}

function describe(topM: number, bottomM: number): string {
  return `depth ${topM.toFixed(3)}-${bottomM.toFixed(3)} m`;
}

/** Write `slices.tif` (multi-band Float32 COG) and `slices.json` into `outDir`, each via a temporary file and rename. */
export async function writeSlices(stack: SliceStack, outDir: string, options: WriteSlicesOptions = {}): Promise<SlicesJson> {
  const g = stack.grid;
  checkNodata(g);
  const scratch = new Float32Array(g.width * g.height);
  const stats = stack.slices.map((s) => s.stats ?? sliceStats(s.values, g.nodata, scratch));
  const tif = await encodeCog(
    stack.slices.map((s) => s.values),
    g.width,
    g.height,
    slicesCogOptions(g, stack.slices, stack.gridding, options, stats),
  );
  return writeSlicesFiles(outDir, slicesJsonOf(g, stack.slices, stats, stack.gridding), (tmp) => writeFile(tmp, tif));
}

/** What slices.tif and slices.json say of a slice besides its values. */
export type SliceDepth = Pick<Slice, 'index' | 'topM' | 'bottomM'>;

export function checkNodata(g: SliceGrid): void {
  if (!Number.isFinite(g.nodata)) throw new Error(`nodata must be a finite number (JSON has no NaN), found ${g.nodata}`);
}

/**
 * The COG options of slices.tif: grid, CRS, band descriptions ("depth 0.500-0.625 m", what a GIS lists
 * instead of "Band 5") and metadata, with each band's statistics under the names GDAL reads as the band's
 * own (STATISTICS_MINIMUM, ...: gdalinfo shows them and a GIS stretches by them without a scan).
 */
export function slicesCogOptions(g: SliceGrid, slices: SliceDepth[], gridding: GriddingInfo | undefined, options: WriteSlicesOptions, stats?: SliceStats[]): CogOptions {
  return {
    originX: g.originX,
    originY: g.originY,
    pixelSize: g.cellSize,
    crs: cogCrs(g),
    nodata: g.nodata,
    descriptions: slices.map((s) => describe(s.topM, s.bottomM)),
    bandMetadata: slices.map((s, k) => ({ TOP_M: String(s.topM), BOTTOM_M: String(s.bottomM), ...gdalStats(stats?.[k], g.width * g.height) })),
    metadata: { SLICE_VALUE: gridding?.mode ?? 'mean-square', DEPTH_UNIT: 'metre' },
    tileSize: options.tileSize ?? 256,
    level: options.level ?? 1,
  };
}

export function slicesJsonOf(g: SliceGrid, slices: SliceDepth[], stats: SliceStats[], gridding: GriddingInfo | undefined): SlicesJson {
  return {
    version: 1,
    file: SLICES_TIF,
    crs: g.crs,
    epsg: epsgOf(g.crs) ?? null,
    metresPerUnit: g.metresPerUnit ?? 1,
    isGeographic: g.isGeographic ?? false,
    originX: g.originX,
    originY: g.originY,
    cellSize: g.cellSize,
    width: g.width,
    height: g.height,
    nodata: g.nodata,
    gridding: gridding ?? null,
    slices: slices.map((s, k) => ({
      index: s.index,
      band: k + 1,
      topM: s.topM,
      bottomM: s.bottomM,
      stats: nullable(stats[k]!),
    })),
  };
}

/** slices.tif (written by `writeTif` to the temporary name it is given), then slices.json; each renamed into place. */
export async function writeSlicesFiles(outDir: string, json: SlicesJson, writeTif: (tmp: string) => Promise<unknown>): Promise<SlicesJson> {
  await mkdir(outDir, { recursive: true });
  await replaceWith(join(outDir, SLICES_TIF), writeTif);
  await replaceWith(join(outDir, SLICES_JSON), (tmp) => writeFile(tmp, `${JSON.stringify(json, null, 2)}\n`));
  return json;
}

function nullable(s: SliceStats): NullableStats {
  const out = {} as NullableStats;
  for (const [k, v] of Object.entries(s) as [keyof SliceStats, number][]) out[k] = Number.isFinite(v) ? v : null;
  return out;
}

async function replaceWith(path: string, write: (tmp: string) => Promise<unknown>) {
  const tmp = `${path}.${process.pid}.tmp`;
  try {
    await write(tmp);
    await rename(tmp, path);
  } catch (e) {
    await rm(tmp, { force: true });
    throw e;
  }
}

/** Read and check slices.json. */
export async function readSlicesJson(dir: string): Promise<SlicesJson> {
  const path = join(dir, SLICES_JSON);
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    throw new InputError(path, `expected JSON, found ${(e as Error).message}`);
  }
  return checkContract(slicesSchema, parseJsonText(text, path), path);
}

/** Read slices.json + slices.tif (with the `geotiff` package) back into a stack. */
export async function readSlices(dir: string): Promise<SliceStack> {
  const json = await readSlicesJson(dir);
  const tifPath = join(dir, json.file ?? SLICES_TIF);
  const r = await readGeoTiff(new Uint8Array(await readFile(tifPath)));
  if (r.width !== json.width || r.height !== json.height) {
    throw new InputError(tifPath, `expected ${json.width} x ${json.height} cells (slices.json), found ${r.width} x ${r.height}`);
  }
  const grid: SliceGrid = {
    crs: json.crs,
    originX: json.originX,
    originY: json.originY,
    cellSize: json.cellSize,
    width: json.width,
    height: json.height,
    nodata: json.nodata,
    metresPerUnit: json.metresPerUnit ?? 1,
    isGeographic: json.isGeographic ?? false,
  };
  const scratch = new Float32Array(r.width * r.height);
  const slices = json.slices.map((s, k) => {
    const values = r.bands[s.band - 1];
    if (!values) throw new InputError(tifPath, `expected band ${s.band}, found ${r.bands.length} bands`, { field: `slices[${k}].band` });
    return { index: s.index, topM: s.topM, bottomM: s.bottomM, values, stats: sliceStats(values, json.nodata, scratch) };
  });
  const stack: SliceStack = { grid, slices };
  if (json.gridding) stack.gridding = json.gridding;
  return stack;
}
