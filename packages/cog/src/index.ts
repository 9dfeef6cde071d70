export { encodeCog } from './cog';
export type { CogOptions, CogCrs } from './options';
export { encodeCogFile, RawBands, type RowSource } from './cog-file';
export { readGeoTiff, type GeoTiffRaster } from './read';
export { floatUnpredict, useNodeInflate } from './tile-decode';
