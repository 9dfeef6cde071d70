/** What makes a TIFF a GeoTIFF here: GeoKeys for the CRS, GDAL's nodata and metadata text. */
import type { CogCrs, CogOptions } from './options';

/** GDAL writes nodata as text; NaN as `nan`. */
export function formatNodata(v: number): string {
  if (Number.isNaN(v)) return 'nan';
  return String(v);
}

export function geoKeys(crs: CogCrs): { directory: number[]; ascii: string } {
  const keys: [number, number, number, number][] = [];
  let ascii = '';
  const asciiKey = (id: number, text: string) => {
    const s = `${text}|`;
    keys.push([id, 34737, s.length, ascii.length]);
    ascii += s;
  };
  keys.push([1025, 0, 1, 1]); // GTRasterTypeGeoKey: PixelIsArea
  if (crs.citation) asciiKey(1026, crs.citation);
  if (crs.epsg !== undefined) {
    keys.push([1024, 0, 1, crs.geographic ? 2 : 1]); // GTModelTypeGeoKey
    keys.push([crs.geographic ? 2048 : 3072, 0, 1, crs.epsg]); // GeographicTypeGeoKey / ProjectedCSTypeGeoKey
  } else if (!crs.geographic) {
    // No code: a local (engineering) CRS that keeps the linear unit, as GDAL itself writes one;
    // the full definition travels in the citation and in slices.json.
    keys.push([3076, 0, 1, linearUnitCode(crs.metresPerUnit ?? 1)]); // ProjLinearUnitsGeoKey
  } else {
    keys.push([1024, 0, 1, 2]);
  }
  keys.sort((a, b) => a[0] - b[0]);
  return { directory: [1, 1, 0, keys.length, ...keys.flat()], ascii };
}

/** EPSG unit-of-measure codes: 9001 metre, 9002 international foot, 9003 US survey foot. */
export function linearUnitCode(metresPerUnit: number): number {
  if (Math.abs(metresPerUnit - 1200 / 3937) < 1e-12) return 9003;
  if (Math.abs(metresPerUnit - 0.3048) < 1e-12) return 9002;
  if (Math.abs(metresPerUnit - 1) < 1e-12) return 9001;
  throw new Error(`encodeCog: expected metresPerUnit 1, 0.3048 or 1200/3937 for a user-defined CRS, found ${metresPerUnit}`);
}

function xmlEscape(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

export function gdalMetadata(o: CogOptions): string | undefined {
  const items: string[] = [];
  for (const [k, v] of Object.entries(o.metadata ?? {})) items.push(`<Item name="${xmlEscape(k)}">${xmlEscape(v)}</Item>`);
  for (const [i, d] of (o.descriptions ?? []).entries()) {
    items.push(`<Item name="DESCRIPTION" sample="${i}" role="description">${xmlEscape(d)}</Item>`);
  }
  for (const [i, rec] of (o.bandMetadata ?? []).entries()) {
    for (const [k, v] of Object.entries(rec)) items.push(`<Item name="${xmlEscape(k)}" sample="${i}">${xmlEscape(v)}</Item>`);
  }
  if (items.length === 0) return undefined;
  return `<GDALMetadata>\n${items.map((s) => `  ${s}\n`).join('')}</GDALMetadata>`;
}
