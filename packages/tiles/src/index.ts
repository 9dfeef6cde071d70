export { writeTiles, type TileOptions } from './write-tiles';
export { readTilesManifest, manifestDir, ownerTile, type TileLine, type TileEntry, type TilesManifest } from './manifest';
export { tracesInBox, tileOf, tileId, type Box } from './grid';
export { SURVEY_VELOCITY, LINE_BYTES_PER_SAMPLE } from './write-tiles';
export { ENGINES, JOB_FILES, ARRAY_INDEX_VARIABLES, arrayIndexFromEnv, jobFile, tileMemoryMiB, type Engine, type JobOptions } from './jobs';
export { runMerge, type MergeOptions, type MergeSummary } from './merge/merge';
