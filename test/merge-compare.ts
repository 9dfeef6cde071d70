// What `lamina merge` must give against the tiles it merges and against the untiled run of the same site
// (same --velocity): shared by test/batch-engines.test.ts and test/merge.test.ts.
import { execFileSync } from 'node:child_process';
import { readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { expect } from 'vitest';
import type { SlicesJson, TileEntry, TilesManifest } from '@lamina/contracts';
import { GDAL_ENV, PYTHON, tempDir } from '@lamina/test-utils';

/** Whether site-CRS point (x, y) lies in a tile's core (results there belong to the tile). */
const inCore = (t: TileEntry, x: number, y: number): boolean => x >= t.core[0] && x < t.core[2] && y >= t.core[1] && y < t.core[3];
type Feature = { properties: Record<string, unknown> & { id: string; depthTopM: number; depthBottomM: number; centroid?: [number, number]; class?: string } };

const json = <T>(file: string): T => JSON.parse(readFileSync(file, 'utf8')) as T;

const rasters = new Map<string, Float64Array[]>();
/** Every band of a raster as GDAL's Python bindings read it (float64, row-major), one Python run per file. */
function bands(path: string): Float64Array[] {
  const had = rasters.get(path);
  if (had) return had;
  const raw = join(tempDir(), 'bands.f64');
  const py = `from osgeo import gdal\nds=gdal.Open(${JSON.stringify(path)})\nds.ReadAsArray().astype('<f8').tofile(${JSON.stringify(raw)})\nprint(ds.RasterCount, ds.RasterXSize * ds.RasterYSize)`;
  const [n, cells] = execFileSync(PYTHON, ['-c', py], { env: GDAL_ENV, encoding: 'utf8' }).trim().split(' ').map(Number) as [number, number];
  const b = readFileSync(raw);
  rmSync(join(raw, '..'), { recursive: true, force: true });
  const all = new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
  const out = Array.from({ length: n }, (_, k) => all.subarray(k * cells, (k + 1) * cells));
  rasters.set(path, out);
  return out;
}
const band = (path: string, b: number): Float64Array => bands(path)[b - 1]!;

/** What to add to a (row, col) of grid `from` to find the same cell in grid `to` (same cell size, origins on the same grid lines). */
const offset = (from: SlicesJson, to: SlicesJson): [number, number] => [Math.round((to.originY - from.originY) / to.cellSize), Math.round((from.originX - to.originX) / to.cellSize)];

/**
 * The mosaic against the tiles: every cell whose centre lies in a tile's core holds that tile's own value,
 * bit for bit (both read with GDAL's Python bindings, Debian's GDAL: an outside reader of our COGs), and
 * cells no core owns are nodata. Returns the ids of the tiles whose lines are all whole (no trace range):
 * their core cells must equal the untiled run too.
 */
export function expectMosaicOfCores(tilesDir: string, mergedDir: string): string[] {
  const m = json<TilesManifest>(join(tilesDir, 'tiles.json'));
  const merged = json<SlicesJson>(join(mergedDir, 'slices.json'));
  const owned = new Uint8Array(merged.width * merged.height);
  const whole: string[] = [];
  for (const [b, s] of merged.slices.entries()) {
    const mosaic = band(join(mergedDir, 'slices.tif'), s.band);
    for (const t of m.tiles) {
      const tj = json<SlicesJson>(join(tilesDir, `${t.dir}-out`, 'slices.json'));
      const values = band(join(tilesDir, `${t.dir}-out`, 'slices.tif'), tj.slices[b]!.band);
      const [dr, dc] = offset(tj, merged);
      let cells = 0;
      for (let r = 0; r < tj.height; r++)
        for (let c = 0; c < tj.width; c++) {
          const x = tj.originX + (c + 0.5) * tj.cellSize;
          const y = tj.originY - (r + 0.5) * tj.cellSize;
          if (!inCore(t, x, y)) continue;
          const k = (r + dr) * merged.width + (c + dc);
          expect(mosaic[k], `${t.id} slice ${b} cell ${r},${c}`).toBe(values[r * tj.width + c]);
          owned[k] = 1;
          cells++;
        }
      if (b === 0 && cells > 0 && t.lines.every((l) => l.traces === undefined)) whole.push(t.id);
    }
    for (let k = 0; k < owned.length; k++) if (!owned[k]) expect(mosaic[k]).toBe(merged.nodata);
  }
  return whole;
}

export interface Comparison {
  /** Cells of the cores of whole-line tiles, all equal to the untiled run. */
  equalCells: number;
  /** Elsewhere (tiles of line pieces): median and largest |merged - untiled| / |untiled| over valid cells. */
  medianRelative: number;
  maxRelative: number;
  /** Untiled utilities and targets, and the merged ones matched to them. */
  objects: number;
}

/** Objects the comparison checks: utilities and targets (by the anomaly id targets.geojson gives). */
function objects(dir: string): Feature[] {
  const a = json<{ features: Feature[] }>(join(dir, 'anomalies.geojson')).features;
  const targets = new Set(json<{ features: { properties: Record<string, unknown> }[] }>(join(dir, 'targets.geojson')).features.map((f) => String(f.properties.anomalyId ?? f.properties.id)));
  return a.filter((f) => f.properties.class === 'utility' || targets.has(f.properties.id));
}

/**
 * The merge against the untiled run of the same site with the same velocity model:
 * - the grid is the same (origin, cell, size, depth windows);
 * - cells in the cores of tiles that hold whole lines are equal bit for bit: such a tile sees every trace
 *   the untiled run sees within its search radius, processed alike. A tile of line pieces processes each
 *   piece on its own (the time-zero pick, the mean trace of background removal and the migration run over
 *   the piece), so its values differ: measured and returned, not held to a tolerance;
 * - utilities and targets: one merged object for each untiled one, same class, anchor within one cell in
 *   plan and top and bottom within one slice.
 */
export function compareWithUntiled(tilesDir: string, mergedDir: string, untiledDir: string, wholeTiles: string[]): Comparison {
  const a = json<SlicesJson>(join(mergedDir, 'slices.json'));
  const u = json<SlicesJson>(join(untiledDir, 'slices.json'));
  for (const k of ['originX', 'originY', 'cellSize', 'width', 'height', 'nodata'] as const) expect(a[k], k).toBe(u[k]);
  expect(a.slices.map((s) => [s.topM, s.bottomM])).toEqual(u.slices.map((s) => [s.topM, s.bottomM]));
  const m = json<TilesManifest>(join(tilesDir, 'tiles.json'));
  const whole = m.tiles.filter((t) => wholeTiles.includes(t.id));
  let equalCells = 0;
  const rel: number[] = [];
  for (const s of a.slices) {
    const A = band(join(mergedDir, 'slices.tif'), s.band);
    const U = band(join(untiledDir, 'slices.tif'), s.band);
    for (let r = 0; r < a.height; r++)
      for (let c = 0; c < a.width; c++) {
        const k = r * a.width + c;
        const x = a.originX + (c + 0.5) * a.cellSize;
        const y = a.originY - (r + 0.5) * a.cellSize;
        if (whole.some((t) => inCore(t, x, y))) {
          expect(A[k], `slice ${s.band} cell ${r},${c}`).toBe(U[k]);
          equalCells++;
        } else if (A[k] !== a.nodata && U[k] !== u.nodata && U[k] !== 0) rel.push(Math.abs(A[k]! - U[k]!) / Math.abs(U[k]!));
      }
  }
  rel.sort((p, q) => p - q);
  const thickness = Math.max(...a.slices.map((s) => s.bottomM - s.topM));
  const metres = (p: [number, number], q: [number, number]) => Math.hypot((p[0] - q[0]) * 111_320 * Math.cos((p[1] * Math.PI) / 180), (p[1] - q[1]) * 110_574);
  const mine = objects(mergedDir);
  const theirs = objects(untiledDir);
  expect(mine.length, `merged utilities and targets ${mine.map((f) => f.properties.id).join(', ')}`).toBe(theirs.length);
  const left = [...mine];
  for (const t of theirs) {
    const i = left.findIndex(
      (f) =>
        f.properties.class === t.properties.class &&
        metres(f.properties.centroid!, t.properties.centroid!) <= a.cellSize * a.metresPerUnit &&
        Math.abs(f.properties.depthTopM - t.properties.depthTopM) <= thickness &&
        Math.abs(f.properties.depthBottomM - t.properties.depthBottomM) <= thickness,
    );
    expect(i, `untiled ${t.properties.id} (${t.properties.class}) has a merged counterpart`).toBeGreaterThanOrEqual(0);
    left.splice(i, 1);
  }
  return { equalCells, medianRelative: rel[rel.length >> 1] ?? 0, maxRelative: rel[rel.length - 1] ?? 0, objects: theirs.length };
}
