/** What a caller asks of a COG (CogOptions, CogCrs) and what the writer derives from it (CogSettings, LevelSize). */

/** How the file's CRS is declared in its GeoKeys. */
export interface CogCrs {
  /** EPSG code of the CRS, if it has one. */
  epsg?: number;
  /** True for a geographic CRS (degrees); selects GeographicTypeGeoKey over ProjectedCSTypeGeoKey. */
  geographic?: boolean;
  /** For a user-defined projected CRS: metres per linear unit (1, 1200/3937 US survey foot, 0.3048 foot). */
  metresPerUnit?: number;
  /** Free text stored in GTCitationGeoKey (e.g. the proj4 string of a user-defined CRS). */
  citation?: string;
}

export interface CogOptions {
  /** Top-left corner of the top-left pixel, CRS units. */
  originX: number;
  originY: number;
  /** Pixel size in CRS units (positive; rows run north to south). */
  pixelSize: number;
  crs: CogCrs;
  /** Written as GDAL_NODATA; padding of edge tiles and empty overview cells. */
  nodata?: number;
  /** One per band, shown by GDAL as the band description. */
  descriptions?: string[];
  /** Extra per-band metadata items (GDAL_METADATA `<Item name sample>`), one record per band. */
  bandMetadata?: Record<string, string>[];
  /** Dataset-level metadata items (GDAL_METADATA `<Item name>`). */
  metadata?: Record<string, string>;
  /** @default 256 (a multiple of 16, as TIFF requires) */
  tileSize?: number;
  /** 1 none, 3 floating-point predictor. @default 3 */
  predictor?: 1 | 3;
  /** zlib level 1-9. @default 6 */
  level?: number;
  /** Build internal overviews (2x2 mean ignoring nodata) until the image fits one tile. @default true */
  overviews?: boolean;
}

/** Width and height of one level of the pyramid (full resolution first). */
export interface LevelSize {
  width: number;
  height: number;
}

/** The options that shape the bytes, with their defaults applied once. */
export interface CogSettings {
  tileSize: number;
  predictor: 1 | 3;
  level: number;
  nodata: number;
}
