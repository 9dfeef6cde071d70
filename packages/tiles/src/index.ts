export { writeTiles, type TileOptions } from './write-tiles';
export { readTilesManifest, manifestDir, ownerTile, type TileLine, type TileEntry, type TilesManifest } from './manifest';
export { tracesInBox, tileOf, tileId, type Box } from './grid';
