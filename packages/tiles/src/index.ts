export { writeTiles, readTilesManifest, manifestDir, tracesInBox, tileOf, tileId, ownerTile, type TileOptions, type TileLine, type TileEntry, type TilesManifest, type Box } from './tiles';
export { SURVEY_VELOCITY } from './tiles';
export { ENGINES, JOB_FILES, ARRAY_INDEX_VARIABLES, arrayIndexFromEnv, jobFile, tileMemoryMiB, type Engine, type JobOptions } from './jobs';
