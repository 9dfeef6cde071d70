// What `lamina merge` must give against the tiles it merges and against the untiled run of the same site
// (same --velocity): shared by test/batch-engines.test.ts and test/merge.test.ts.
import { execFileSync } from 'node:child_process';
import { readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { expect } from 'vitest';
import type { SlicesJson, TileEntry, TilesManifest } from '@lamina/contracts';
import { resolveCrs, pointFromWgs84 } from '@lamina/site';
import { GDAL_ENV, PYTHON, tempDir } from '@lamina/test-utils';

/** Whether site-CRS point (x, y) lies in a tile's core (results there belong to the tile). */
const inCore = (t: TileEntry, x: number, y: number): boolean => x >= t.core[0] && x < t.core[2] && y >= t.core[1] && y < t.core[3];
type Feature = { properties: Record<string, unknown> & { id: string; depthTopM: number; depthBottomM: number; centroid?: [number, number]; class?: string; origin?: string } };

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


/**
 * The mosaic against the tiles: every cell whose centre lies in a tile's core holds that tile's own value,
 * bit for bit (both read with GDAL's Python bindings, Debian's GDAL: an outside reader of our COGs); a cell
 * whose centre lies in the square of a tile that does not exist holds the value of the tile with the
 * nearest core whose grid covers it (the gridding margin of the survey's edge), else nodata. Returns the
 * number of tiles that own cells and hold line pieces (trace ranges).
 */
export function expectMosaicOfCores(tilesDir: string, mergedDir: string): number {
  const m = json<TilesManifest>(join(tilesDir, 'tiles.json'));
  const merged = json<SlicesJson>(join(mergedDir, 'slices.json'));
  const tiles = m.tiles.map((t) => ({ t, j: json<SlicesJson>(join(tilesDir, `${t.dir}-out`, 'slices.json')) }));
  const exists = new Set(m.tiles.map((t) => `${t.col},${t.row}`));
  let pieced = 0;
  for (const [b, s] of merged.slices.entries()) {
    const mosaic = band(join(mergedDir, 'slices.tif'), s.band);
    const values = tiles.map(({ t, j }) => band(join(tilesDir, `${t.dir}-out`, 'slices.tif'), j.slices[b]!.band));
    for (let r = 0; r < merged.height; r++)
      for (let c = 0; c < merged.width; c++) {
        const x = merged.originX + (c + 0.5) * merged.cellSize;
        const y = merged.originY - (r + 0.5) * merged.cellSize;
        // tiles whose grid holds the cell, nearest core first
        const covering = tiles
          .map(({ t, j }, i) => ({ t, j, i, tc: c + Math.round((merged.originX - j.originX) / j.cellSize), tr: r + Math.round((j.originY - merged.originY) / j.cellSize) }))
          .filter((q) => q.tc >= 0 && q.tc < q.j.width && q.tr >= 0 && q.tr < q.j.height)
          .map((q) => ({ ...q, d: Math.hypot(Math.max(q.t.core[0] - x, 0, x - q.t.core[2]), Math.max(q.t.core[1] - y, 0, y - q.t.core[3])) }))
          .sort((p, q) => p.d - q.d || p.i - q.i);
        const own = covering.find((q) => inCore(q.t, x, y));
        const square = `${Math.floor(x / m.sizeUnits)},${Math.floor(y / m.sizeUnits)}`;
        const from = own ?? (exists.has(square) ? undefined : covering[0]);
        const k = r * merged.width + c;
        expect(mosaic[k], `slice ${b} cell ${r},${c}`).toBe(from ? values[from.i]![from.tr * from.j.width + from.tc] : merged.nodata);
      }
    if (b === 0) pieced = tiles.filter(({ t }) => t.lines.some((l) => l.traces !== undefined)).length;
  }
  return pieced;
}

export interface Comparison {
  /** Valid cells of the mosaic (all slices), each equal to the untiled run's. */
  equalCells: number;
  /** Anomalies of the untiled run, each matched by one merged anomaly (and none left over). */
  anomalies: number;
  /** Of those, utilities and targets (what a surveyor acts on). */
  objects: number;
  /** Untiled anomalies whose centroid lies within one cell of a tile's core edge (matched like the rest). */
  atEdges: number;
}

/** Anomalies of a folder, with whether each is a utility or a target (by the anomaly id targets.geojson gives). */
function anomaliesOf(dir: string): (Feature & { object: boolean })[] {
  const a = json<{ features: Feature[] }>(join(dir, 'anomalies.geojson')).features;
  const targets = new Set(json<{ features: { properties: Record<string, unknown> }[] }>(join(dir, 'targets.geojson')).features.map((f) => String(f.properties.anomalyId ?? f.properties.id)));
  return a.map((f) => ({ ...f, object: f.properties.class === 'utility' || targets.has(f.properties.id) }));
}

/**
 * The merge against the untiled run of the same site with the same velocity model:
 * - the grid is the same (origin, cell, size, depth windows: the survey's windows.json, cut once);
 * - every cell is equal bit for bit, also in tiles made of line pieces: a piece is processed with its whole
 *   line (site.json `context`), so time-zero, background removal and migration see what the untiled run
 *   sees, and the overlap holds every trace within the gridding's search of a core cell;
 * - every anomaly, on core edges and corners too, once: a merged anomaly of the same class and origin,
 *   centroid within one cell in plan, top and bottom within one slice, one to one, and utilities and targets
 *   alike (the merge screens the mosaic again as one run: the noise law of each slice, the scores before
 *   background removal and the lines are the survey's, as in the untiled run).
 */
export function compareWithUntiled(mergedDir: string, untiledDir: string, tilesDir: string): Comparison {
  const a = json<SlicesJson>(join(mergedDir, 'slices.json'));
  const u = json<SlicesJson>(join(untiledDir, 'slices.json'));
  for (const k of ['originX', 'originY', 'cellSize', 'width', 'height', 'nodata'] as const) expect(a[k], k).toBe(u[k]);
  expect(a.slices.map((s) => [s.topM, s.bottomM])).toEqual(u.slices.map((s) => [s.topM, s.bottomM]));
  let equalCells = 0;
  for (const s of a.slices) {
    const A = band(join(mergedDir, 'slices.tif'), s.band);
    const U = band(join(untiledDir, 'slices.tif'), s.band);
    for (let k = 0; k < A.length; k++) {
      expect(A[k], `slice ${s.band} cell ${Math.floor(k / a.width)},${k % a.width}`).toBe(U[k]);
      if (A[k] !== a.nodata) equalCells++;
    }
  }
  const thickness = Math.max(...a.slices.map((s) => s.bottomM - s.topM));
  const cellM = a.cellSize * a.metresPerUnit;
  const metres = (p: [number, number], q: [number, number]) => Math.hypot((p[0] - q[0]) * 111_320 * Math.cos((p[1] * Math.PI) / 180), (p[1] - q[1]) * 110_574);
  const m = json<TilesManifest>(join(tilesDir, 'tiles.json'));
  const crs = resolveCrs(m.site.crs);
  // distance of a point to the nearest core edge of the tile grid, m
  const toEdge = (lonLat: [number, number]): number => {
    const [x, y] = pointFromWgs84(crs, lonLat[0], lonLat[1]);
    const d = (v: number) => Math.min(((v % m.sizeUnits) + m.sizeUnits) % m.sizeUnits, m.sizeUnits - (((v % m.sizeUnits) + m.sizeUnits) % m.sizeUnits));
    return Math.min(d(x), d(y)) * m.site.metresPerUnit;
  };
  const theirs = anomaliesOf(untiledDir);
  const left = anomaliesOf(mergedDir);
  expect(left.length, 'anomalies, merged against untiled').toBe(theirs.length);
  for (const t of theirs) {
    const p = t.properties;
    const i = left.findIndex(
      (f) =>
        f.properties.class === p.class &&
        f.properties.origin === p.origin &&
        f.object === t.object &&
        metres(f.properties.centroid!, p.centroid!) <= cellM &&
        Math.abs(f.properties.depthTopM - p.depthTopM) <= thickness &&
        Math.abs(f.properties.depthBottomM - p.depthBottomM) <= thickness,
    );
    expect(i, `untiled ${p.id} (${p.class}, ${p.depthTopM}-${p.depthBottomM} m, ${toEdge(p.centroid!).toFixed(2)} m from a core edge) has one merged counterpart`).toBeGreaterThanOrEqual(0);
    left.splice(i, 1);
  }
  return { equalCells, anomalies: theirs.length, objects: theirs.filter((t) => t.object).length, atEdges: theirs.filter((t) => toEdge(t.properties.centroid!) <= cellM).length };
}
