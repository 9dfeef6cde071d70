/** tiles.json: what `lamina tiles` writes and how a batch engine reads it. */
import { readFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { InputError } from '@lamina/errors';
import { shownPath } from '@lamina/site';
import { tileOf, type Box } from './grid';

export interface TileLine {
  /** Line id in the tile site. */
  id: string;
  /** Line id in the original site. */
  source: string;
  /** SEG-Y file as written in the tile site.json. */
  file: string;
  /** First and last trace of the original line (0-based, inclusive). */
  first: number;
  last: number;
  /** For a piece: the `traces` range of the file written into the tile's site.json (0-based, inclusive). */
  traces?: [number, number];
}

export interface TileEntry {
  id: string;
  /** Folder relative to the manifest. */
  dir: string;
  col: number;
  row: number;
  /** The tile square in site CRS units: results inside it belong to this tile. */
  core: Box;
  /** The square grown by the overlap: traces inside it are in the tile. */
  bounds: Box;
  traces: number;
  lines: TileLine[];
  planFeatures: number;
  /** The one command that processes the tile (run from the manifest's folder). */
  command: string;
}

export interface TilesManifest {
  version: 1;
  site: { name: string; dir: string; crs: string; units: string; metresPerUnit: number };
  sizeM: number;
  overlapM: number;
  planMarginM: number;
  /** Tile (col, row) covers x in [col * size, (col + 1) * size), y likewise, in site CRS units. */
  sizeUnits: number;
  traces: number;
  tiles: TileEntry[];
}

/** The tile of a manifest that owns a point (site CRS units): use it to keep one copy of an anomaly seen by two tiles. */
export function ownerTile(manifest: TilesManifest, x: number, y: number): TileEntry | undefined {
  const [c, r] = tileOf(x, y, manifest.sizeUnits);
  return manifest.tiles.find((t) => t.col === c && t.row === r);
}

/** Reads a tiles.json manifest. */
export async function readTilesManifest(path: string): Promise<TilesManifest> {
  const file = path.endsWith('.json') ? path : join(path, 'tiles.json');
  let m: unknown;
  try {
    m = JSON.parse(await readFile(file, 'utf8'));
  } catch (e) {
    throw new InputError(shownPath(file), `expected a tiles.json manifest, found ${e instanceof SyntaxError ? 'invalid JSON' : 'no readable file'}`);
  }
  if (typeof m !== 'object' || m === null || (m as { version?: unknown }).version !== 1 || !Array.isArray((m as { tiles?: unknown }).tiles)) {
    throw new InputError(shownPath(file), 'expected a tiles.json manifest of version 1 with a "tiles" array', { field: 'version' });
  }
  return m as TilesManifest;
}

export const manifestDir = (path: string): string => (path.endsWith('.json') ? dirname(path) : path);
