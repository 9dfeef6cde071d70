export { encodeCog, type CogOptions, type CogCrs } from './cog';
export { encodeCogFile, RawBands, type RowSource } from './cog-file';
export { readGeoTiff, type GeoTiffRaster } from './read';
