import { fromArrayBuffer } from 'geotiff';

/** A GeoTIFF read back with the `geotiff` package (a second implementation, used by readers and tests). */
export interface GeoTiffRaster {
  width: number;
  height: number;
  bands: Float32Array[];
  originX: number;
  originY: number;
  pixelSize: number;
  nodata: number | null;
  /** ProjectedCSTypeGeoKey or GeographicTypeGeoKey, if it is an EPSG code. */
  epsg?: number;
  /** GDAL_METADATA band descriptions (empty strings where none). */
  descriptions: string[];
  /** Number of images in the file (1 + overviews). */
  imageCount: number;
}

export async function readGeoTiff(bytes: Uint8Array): Promise<GeoTiffRaster> {
  const ab = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
  const tiff = await fromArrayBuffer(ab);
  const image = await tiff.getImage(0);
  const width = image.getWidth();
  const height = image.getHeight();
  const rasters = await image.readRasters({ interleave: false });
  const bands: Float32Array[] = [];
  for (let i = 0; i < rasters.length; i++) {
    const r = rasters[i];
    bands.push(r instanceof Float32Array ? r : Float32Array.from(r as ArrayLike<number>));
  }
  const [ox, oy] = image.getOrigin();
  const [rx] = image.getResolution();
  const keys = image.getGeoKeys() ?? {};
  const code = (keys as Record<string, unknown>).ProjectedCSTypeGeoKey ?? (keys as Record<string, unknown>).GeographicTypeGeoKey;
  const descriptions: string[] = [];
  for (let b = 0; b < bands.length; b++) {
    const md = await image.getGDALMetadata(b);
    const d = md && typeof md.DESCRIPTION === 'string' ? md.DESCRIPTION : '';
    descriptions.push(d);
  }
  const imageCount = await tiff.getImageCount();
  const result: GeoTiffRaster = {
    width,
    height,
    bands,
    originX: ox!,
    originY: oy!,
    pixelSize: rx!,
    nodata: image.getGDALNoData(),
    descriptions,
    imageCount,
  };
  if (typeof code === 'number' && code !== 32767) result.epsg = code;
  return result;
}
