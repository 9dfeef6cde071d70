/** slices.tif of a merge: the tiles' cores side by side on their common grid, through a raw file on disk. */
import { closeSync, openSync, writeSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { encodeCogFile, RawBands, readGeoTiff } from '@lamina/cog';
import type { SlicesJson } from '@lamina/contracts';
import { InputError } from '@lamina/errors';
import { shownPath } from '@lamina/site';
import { sliceStatsOfRows, slicesCogOptions, slicesJsonOf, writeSlicesFiles, type SliceStats } from '@lamina/slices';
import { SCREEN_INPUTS } from '@lamina/pipeline';
import { tileOf } from '../grid';
import type { MergeInputs, MergeTile } from './inputs';

/** A tile's cells that its core owns: columns [c0, c1) and rows [r0, r1) of its grid, and where its origin sits on the common grid. */
interface CoreCells {
  tile: MergeTile;
  /** Global column of the tile's first column (origin / cell). */
  gx: number;
  /** Global row line of the tile's top edge (originY / cell; rows count down from it). */
  gy: number;
  c0: number;
  c1: number;
  r0: number;
  r1: number;
}

/** The cells whose centres lie in the tile's core (the rule of `ownerTile`: every cell centre has one owner). */
function coreCells(tile: MergeTile, size: number): CoreCells {
  const s = tile.slices;
  const cell = s.cellSize;
  const gx = Math.round(s.originX / cell);
  const gy = Math.round(s.originY / cell);
  const { col, row } = tile.entry;
  const ownsCol = (c: number) => tileOf((gx + c + 0.5) * cell, 0, size)[0] === col;
  const ownsRow = (r: number) => tileOf(0, (gy - r - 0.5) * cell, size)[1] === row;
  let c0 = 0;
  while (c0 < s.width && !ownsCol(c0)) c0++;
  let c1 = c0;
  while (c1 < s.width && ownsCol(c1)) c1++;
  let r0 = 0;
  while (r0 < s.height && !ownsRow(r0)) r0++;
  let r1 = r0;
  while (r1 < s.height && ownsRow(r1)) r1++;
  return { tile, gx, gy, c0, c1, r0, r1 };
}

export interface MosaicResult {
  json: SlicesJson;
  /** Cells of the mosaic (width x height) and how many the tiles' cores filled. */
  cells: number;
  /**
   * With `keep`: the mosaic's raw band-sequential files, left for the caller to read and remove: the
   * slices, and the slices before background removal when every tile wrote them (`SCREEN_INPUTS.before`).
   */
  raw?: { slices: RawBands; before?: RawBands };
}

export interface MosaicOptions {
  /** Keep the raw mosaic (and mosaic the tiles' stacks before background removal too): `MosaicResult.raw`. @default false */
  keep?: boolean;
}

/** A tile's stack before background removal as it wrote it (band-sequential raw Float32 of its grid), or undefined when it has none. */
async function readBefore(tile: MergeTile, bands: number): Promise<Float32Array[] | undefined> {
  const file = join(tile.outDir, SCREEN_INPUTS.before);
  const b = await readFile(file).catch(() => undefined);
  if (!b) return undefined;
  const cells = tile.slices.width * tile.slices.height;
  if (b.byteLength !== cells * bands * 4) throw new InputError(shownPath(file), `expected ${cells * bands * 4} bytes (${tile.slices.width} x ${tile.slices.height} cells, ${bands} slices: slices.json), found ${b.byteLength}`);
  const all = new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
  return Array.from({ length: bands }, (_, k) => all.subarray(k * cells, (k + 1) * cells));
}

/**
 * Writes slices.tif and slices.json of the merged survey into `outDir`: each tile's core cells (its grid
 * starts at its own extent, but all tiles share the cell size and grid lines) are copied into a raw
 * band-sequential file in `scratchDir`, one tile at a time; the statistics and the COG are then made from
 * that file a strip of rows at a time (`encodeCogFile`). Held: one tile's raster while it is copied, then
 * one COG tile row of the mosaic. Cells no core covers are nodata.
 */
export async function writeMosaic(inputs: MergeInputs, outDir: string, scratchDir: string, options: MosaicOptions = {}): Promise<MosaicResult> {
  const first = inputs.tiles[0]!.slices;
  const cell = first.cellSize;
  const cores = inputs.tiles.map((t) => coreCells(t, inputs.manifest.sizeUnits)).filter((c) => c.c1 > c.c0 && c.r1 > c.r0);
  if (cores.length === 0) throw new InputError(shownPath(join(inputs.dir, 'tiles.json')), 'expected tiles whose grids cover their cores, found none');
  const left = Math.min(...cores.map((c) => c.gx + c.c0));
  const right = Math.max(...cores.map((c) => c.gx + c.c1));
  const top = Math.max(...cores.map((c) => c.gy - c.r0));
  const bottom = Math.min(...cores.map((c) => c.gy - c.r1));
  const width = right - left;
  const height = top - bottom;
  const bands = first.slices.length;
  const raw = RawBands.create(join(scratchDir, 'mosaic.f32'), width, height, bands, first.nodata);
  let before: RawBands | undefined = options.keep ? RawBands.create(join(scratchDir, 'mosaic-before.f32'), width, height, bands, first.nodata) : undefined;
  let kept = false;
  /** Copies a tile's core cells of every band (values[k]: slice k of the tile's grid) into a raw mosaic. */
  const copy = (to: RawBands, c: CoreCells, values: (k: number) => Float32Array) => {
    const fd = openSync(to.path, 'r+');
    try {
      const s = c.tile.slices;
      const col = c.gx + c.c0 - left;
      for (let b = 0; b < bands; b++) {
        const v = values(b);
        for (let row = c.r0; row < c.r1; row++) {
          const span = v.subarray(row * s.width + c.c0, row * s.width + c.c1);
          const at = ((b * height + (top - (c.gy - row))) * width + col) * 4;
          writeSync(fd, new Uint8Array(span.buffer, span.byteOffset, span.byteLength), 0, span.byteLength, at);
        }
      }
    } finally {
      closeSync(fd);
    }
  };
  try {
    for (const c of cores) {
      const file = join(c.tile.outDir, c.tile.slices.file);
      const r = await readGeoTiff(new Uint8Array(await readFile(file)));
      const s = c.tile.slices;
      if (r.width !== s.width || r.height !== s.height || r.bands.length < bands) {
        throw new InputError(shownPath(file), `expected ${s.width} x ${s.height} cells and ${bands} bands (slices.json), found ${r.width} x ${r.height} and ${r.bands.length}`);
      }
      copy(raw, c, (b) => r.bands[s.slices[b]!.band - 1]!);
      if (!before) continue;
      // a tile without the stack before background removal (processed by `lamina process`): no second mosaic
      const bb = await readBefore(c.tile, bands);
      if (bb) copy(before, c, (b) => bb[b]!);
      else {
        before.remove();
        before = undefined;
      }
    }
    const grid = { crs: first.crs, originX: left * cell, originY: top * cell, cellSize: cell, width, height, nodata: first.nodata, metresPerUnit: first.metresPerUnit, isGeographic: first.isGeographic };
    const stats: SliceStats[] = [];
    for (let b = 0; b < bands; b++) stats.push(await sliceStatsOfRows(raw, b, first.nodata));
    const depths = first.slices.map((s) => ({ index: s.index, topM: s.topM, bottomM: s.bottomM }));
    const gridding = first.gridding ? { ...first.gridding, traceCount: inputs.manifest.traces, lineCount: new Set(inputs.manifest.tiles.flatMap((t) => t.lines.map((l) => l.source))).size } : undefined;
    const cog = slicesCogOptions(grid, depths, gridding, {}, stats);
    const json = slicesJsonOf(grid, depths, stats, gridding);
    await writeSlicesFiles(outDir, json, (tmp) => encodeCogFile(raw, cog, tmp));
    kept = options.keep === true;
    return { json, cells: width * height, ...(kept ? { raw: { slices: raw, ...(before ? { before } : {}) } } : {}) };
  } finally {
    if (!kept) {
      raw.remove();
      before?.remove();
    }
  }
}
