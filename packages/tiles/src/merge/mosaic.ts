/** slices.tif of a merge: the tiles' cores side by side on their common grid (and the margin around them), through a raw file on disk. */
import { closeSync, openSync, writeSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { encodeCogFile, RawBands, readGeoTiff } from '@lamina/cog';
import type { SlicesJson } from '@lamina/contracts';
import { InputError } from '@lamina/errors';
import { shownPath } from '@lamina/site';
import { angleDiff, sliceStatsOfRows, slicesCogOptions, slicesJsonOf, writeSlicesFiles, type SliceStats } from '@lamina/slices';
import { SCREEN_INPUTS, type ScreenLinesJson } from '@lamina/pipeline';
import { tileOf } from '../grid';
import type { MergeInputs, MergeTile } from './inputs';

/** A tile's grid on the common grid and which of its cells it gives the mosaic. */
interface CoreCells {
  tile: MergeTile;
  /** Global column of the tile's first column (origin / cell). */
  gx: number;
  /** Global row line of the tile's top edge (originY / cell; rows count down from it). */
  gy: number;
  /** 1 where the tile gives the cell (row-major, the tile's grid). */
  owned: Uint8Array;
  /** Rows [r0, r1) that hold an owned cell. */
  r0: number;
  r1: number;
}

/**
 * The cells of each tile's grid that the mosaic takes from it: those whose centres lie in its core (the
 * rule of `ownerTile`), and those whose centres lie in the square of a tile that does not exist (no trace
 * in its core) but within the grid of existing tiles: from the one whose core is nearest (the first in
 * tiles.json on a tie). So the mosaic covers what the untiled grid covers (the traces' box grown by the
 * gridding margin) also where that margin reaches into an empty tile square.
 */
function coreCells(inputs: MergeInputs): CoreCells[] {
  const size = inputs.manifest.sizeUnits;
  const cell = inputs.tiles[0]!.slices.cellSize;
  const at = new Map(inputs.tiles.map((t, i) => [`${t.entry.col},${t.entry.row}`, i]));
  const geo = inputs.tiles.map((t) => ({ gx: Math.round(t.slices.originX / cell), gy: Math.round(t.slices.originY / cell), w: t.slices.width, h: t.slices.height }));
  // tiles whose grids may reach into a tile square: its neighbours as far as the widest grid reaches
  const reach = Math.max(1, ...inputs.tiles.map((t) => Math.ceil(Math.max(t.slices.width, t.slices.height) * cell / size)));
  const nearest = (x: number, y: number, tc: number, tr: number): number => {
    let best = -1, bestD = Infinity;
    for (let dc = -reach; dc <= reach; dc++)
      for (let dr = -reach; dr <= reach; dr++) {
        const i = at.get(`${tc + dc},${tr + dr}`);
        if (i === undefined) continue;
        const g = geo[i]!;
        const c = Math.floor(x / cell) - g.gx, r = g.gy - Math.ceil(y / cell);
        if (c < 0 || c >= g.w || r < 0 || r >= g.h) continue;
        const k = inputs.tiles[i]!.entry.core;
        const d = Math.hypot(Math.max(k[0]! - x, 0, x - k[2]!), Math.max(k[1]! - y, 0, y - k[3]!));
        if (d < bestD || (d === bestD && i < best)) {
          bestD = d;
          best = i;
        }
      }
    return best;
  };
  return inputs.tiles.map((tile, i) => {
    const { gx, gy, w, h } = geo[i]!;
    const owned = new Uint8Array(w * h);
    let r0 = h, r1 = 0;
    for (let r = 0; r < h; r++)
      for (let c = 0; c < w; c++) {
        const x = (gx + c + 0.5) * cell, y = (gy - r - 0.5) * cell;
        const [tc, tr] = tileOf(x, y, size);
        const mine = tc === tile.entry.col && tr === tile.entry.row ? true : at.has(`${tc},${tr}`) ? false : nearest(x, y, tc, tr) === i;
        if (!mine) continue;
        owned[r * w + c] = 1;
        r0 = Math.min(r0, r);
        r1 = Math.max(r1, r + 1);
      }
    return { tile, gx, gy, owned, r0, r1 };
  });
}

export interface MosaicResult {
  json: SlicesJson;
  /** Cells of the mosaic (width x height) and how many the tiles' cores filled. */
  cells: number;
  /**
   * With `keep`: the mosaic's raw band-sequential files, left for the caller to read and remove: the
   * slices, and the slices before background removal when every tile wrote them (`SCREEN_INPUTS.before`).
   */
  raw?: { slices: RawBands; before?: RawBands; directions?: { azimuthDeg: number; raw: RawBands }[] };
}

export interface MosaicOptions {
  /** Keep the raw mosaic (and mosaic the tiles' stacks before background removal too): `MosaicResult.raw`. @default false */
  keep?: boolean;
}

/** A tile's stack before background removal as it wrote it (band-sequential raw Float32 of its grid), or undefined when it has none. */
async function readBefore(tile: MergeTile, bands: number): Promise<Float32Array[] | undefined> {
  return readTileStack(tile, SCREEN_INPUTS.before, bands);
}

/** A stack a tile wrote beside its slices (band-sequential raw Float32 of its grid), or undefined when it has none. */
async function readTileStack(tile: MergeTile, name: string, bands: number): Promise<Float32Array[] | undefined> {
  const file = join(tile.outDir, name);
  const b = await readFile(file).catch(() => undefined);
  if (!b) return undefined;
  const cells = tile.slices.width * tile.slices.height;
  if (b.byteLength !== cells * bands * 4) throw new InputError(shownPath(file), `expected ${cells * bands * 4} bytes (${tile.slices.width} x ${tile.slices.height} cells, ${bands} slices: slices.json), found ${b.byteLength}`);
  const all = new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
  return Array.from({ length: bands }, (_, k) => all.subarray(k * cells, (k + 1) * cells));
}

/** The direction stacks a tile wrote (`ScreenLinesJson.directions`): none when it wrote none. */
async function tileDirections(tile: MergeTile): Promise<{ azimuthDeg: number; file: string }[]> {
  const text = await readFile(join(tile.outDir, SCREEN_INPUTS.lines), 'utf8').catch(() => undefined);
  return text ? ((JSON.parse(text) as ScreenLinesJson).directions ?? []) : [];
}

/**
 * Writes slices.tif and slices.json of the merged survey into `outDir`: each tile's core cells (its grid
 * starts at its own extent, but all tiles share the cell size and grid lines) are copied into a raw
 * band-sequential file in `scratchDir`, one tile at a time; the statistics and the COG are then made from
 * that file a strip of rows at a time (`encodeCogFile`). Held: one tile's raster while it is copied, then
 * one COG tile row of the mosaic. The mosaic is the box of the tiles' grids; a cell in the square of a tile
 * that does not exist comes from the nearest existing core's tile (`coreCells`); cells no tile gives are nodata.
 */
export async function writeMosaic(inputs: MergeInputs, outDir: string, scratchDir: string, options: MosaicOptions = {}): Promise<MosaicResult> {
  const first = inputs.tiles[0]!.slices;
  const cell = first.cellSize;
  const cores = coreCells(inputs).filter((c) => c.r1 > c.r0);
  if (cores.length === 0) throw new InputError(shownPath(join(inputs.dir, 'tiles.json')), 'expected tiles whose grids cover their cores, found none');
  // the box of the tiles' grids: the untiled run's grid (the traces' box grown by the gridding margin)
  const left = Math.min(...cores.map((c) => c.gx));
  const right = Math.max(...cores.map((c) => c.gx + c.tile.slices.width));
  const top = Math.max(...cores.map((c) => c.gy));
  const bottom = Math.min(...cores.map((c) => c.gy - c.tile.slices.height));
  const width = right - left;
  const height = top - bottom;
  const bands = first.slices.length;
  const raw = RawBands.create(join(scratchDir, 'mosaic.f32'), width, height, bands, first.nodata);
  let before: RawBands | undefined = options.keep ? RawBands.create(join(scratchDir, 'mosaic-before.f32'), width, height, bands, first.nodata) : undefined;
  // a survey in two directions: each direction's own stack, matched by the azimuth of its lines (the
  // first tile holding both directions names them; a tile holding one direction only gives the other
  // nothing: no trace of it lies within the search radius of its cells)
  const tileDirs = options.keep ? await Promise.all(cores.map((c) => tileDirections(c.tile))) : [];
  const named = tileDirs.find((d) => d.length === 2) ?? [];
  const directions = named.map((d, k) => ({ azimuthDeg: d.azimuthDeg, raw: RawBands.create(join(scratchDir, `mosaic-direction-${k}.f32`), width, height, bands, first.nodata) }));
  let kept = false;
  /** Copies a tile's core cells of every band (values[k]: slice k of the tile's grid) into a raw mosaic. */
  const copy = (to: RawBands, c: CoreCells, values: (k: number) => Float32Array) => {
    const fd = openSync(to.path, 'r+');
    try {
      const w = c.tile.slices.width;
      for (let b = 0; b < bands; b++) {
        const v = values(b);
        for (let row = c.r0; row < c.r1; row++)
          for (let c0 = 0; c0 < w; ) {
            if (!c.owned[row * w + c0]) {
              c0++;
              continue;
            }
            let c1 = c0;
            while (c1 < w && c.owned[row * w + c1]) c1++;
            const span = v.subarray(row * w + c0, row * w + c1);
            const at = ((b * height + (top - (c.gy - row))) * width + (c.gx + c0 - left)) * 4;
            writeSync(fd, new Uint8Array(span.buffer, span.byteOffset, span.byteLength), 0, span.byteLength, at);
            c0 = c1;
          }
      }
    } finally {
      closeSync(fd);
    }
  };
  try {
    for (const [i, c] of cores.entries()) {
      const file = join(c.tile.outDir, c.tile.slices.file);
      const r = await readGeoTiff(new Uint8Array(await readFile(file)));
      const s = c.tile.slices;
      if (r.width !== s.width || r.height !== s.height || r.bands.length < bands) {
        throw new InputError(shownPath(file), `expected ${s.width} x ${s.height} cells and ${bands} bands (slices.json), found ${r.width} x ${r.height} and ${r.bands.length}`);
      }
      copy(raw, c, (b) => r.bands[s.slices[b]!.band - 1]!);
      for (const d of directions) {
        const own = tileDirs[i]!.find((t) => angleDiff(t.azimuthDeg, d.azimuthDeg) < 45);
        const values = own && (await readTileStack(c.tile, own.file, bands));
        if (values) copy(d.raw, c, (b) => values[b]!);
      }
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
    return { json, cells: width * height, ...(kept ? { raw: { slices: raw, ...(before ? { before } : {}), ...(directions.length > 0 ? { directions } : {}) } } : {}) };
  } finally {
    if (!kept) {
      raw.remove();
      before?.remove();
      for (const d of directions) d.raw.remove();
    }
  }
}
