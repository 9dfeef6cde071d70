export { writeTiles, readTilesManifest, manifestDir, tracesInBox, tileOf, tileId, ownerTile, type TileOptions, type TileLine, type TileEntry, type TilesManifest, type Box } from './tiles';
