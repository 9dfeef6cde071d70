/** tiles.json: what `lamina tiles` writes and how a batch engine reads it (tilesSchema in @lamina/contracts). */
import { readFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { checkContract, tilesSchema, type TileEntry, type TileLine, type TilesManifest } from '@lamina/contracts';
import { InputError } from '@lamina/errors';
import { shownPath } from '@lamina/site';
import { tileOf } from './grid';

export type { TileLine, TileEntry, TilesManifest };

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
  return checkContract(tilesSchema, m, shownPath(file));
}

export const manifestDir = (path: string): string => (path.endsWith('.json') ? dirname(path) : path);
