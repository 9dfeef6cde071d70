import { z } from 'zod';
import { bbox, num } from './common';

export const tileLineSchema = z.object({
  /** Line id in the tile site. */
  id: z.string(),
  /** Line id in the original site. */
  source: z.string(),
  /** SEG-Y file as written in the tile site.json. */
  file: z.string(),
  /** First and last trace of the original line (0-based, inclusive). */
  first: num,
  last: num,
  /** For a piece: the `traces` range of the file written into the tile's site.json (0-based, inclusive). */
  traces: z.tuple([num, num]).optional(),
  /**
   * For a piece: the traces of the file processed with it (site.json `context`), so time-zero, background
   * removal and migration see what the untiled run sees; absent in manifests written before it.
   */
  context: z.tuple([num, num]).optional(),
});
export type TileLine = z.infer<typeof tileLineSchema>;

export const tileEntrySchema = z.object({
  id: z.string(),
  /** Folder relative to the manifest. */
  dir: z.string(),
  col: num,
  row: num,
  /** The tile square in site CRS units: results inside it belong to this tile. */
  core: bbox,
  /** The square grown by the overlap: traces inside it are in the tile. */
  bounds: bbox,
  traces: num,
  lines: z.array(tileLineSchema),
  planFeatures: num,
  /** The one command that processes the tile (run from the manifest's folder). */
  command: z.string(),
});
export type TileEntry = z.infer<typeof tileEntrySchema>;

/** tiles.json: a site split into tile sites (written by @lamina/tiles). */
export const tilesSchema = z.object({
  version: z.literal(1, { error: 'expected a tiles.json manifest of version 1' }),
  site: z.object({ name: z.string(), dir: z.string(), crs: z.string(), units: z.string(), metresPerUnit: num }),
  sizeM: num,
  overlapM: num,
  planMarginM: num,
  /** Tile (col, row) covers x in [col * size, (col + 1) * size), y likewise, in site CRS units. */
  sizeUnits: num,
  traces: num,
  /** The survey's velocity.json beside tiles.json, used by every tile (`lamina tiles --velocity`); absent: each tile fits its own. */
  velocity: z.string().optional(),
  /** The survey's depth windows beside tiles.json (`lamina velocity` writes them beside velocity.json), used by every tile. */
  windows: z.string().optional(),
  /** Metres of line processed beyond a piece at each end; absent: the whole line (`lamina tiles --line-context`). */
  lineContextM: num.optional(),
  /** Without `lineContextM`: memory for a line's processing, MiB; a longer line is processed in a stretch of that size around each piece. */
  lineMemoryMiB: num.optional(),
  tiles: z.array(tileEntrySchema),
});
export type TilesManifest = z.infer<typeof tilesSchema>;
