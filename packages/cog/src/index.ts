export { encodeCog, type CogOptions, type CogCrs } from './cog';
export { readGeoTiff, type GeoTiffRaster } from './read';
