import type { Crs } from '@lamina/site';

/**
 * OGC WKT 1 (the GDAL dialect a GeoPackage's gpkg_spatial_ref_sys carries) from a proj4 definition.
 * Covers the projections site CRSs use (UTM, transverse Mercator, Lambert conformal conic 1SP/2SP,
 * Mercator, Albers, Lambert azimuthal, oblique and polar stereographic, Cassini); anything else keeps
 * the proj4 string in an EXTENSION["PROJ4", ...] node, which GDAL honours. Parameter names follow the
 * WKT 1 names GDAL writes (`projinfo EPSG:n -o WKT1_GDAL`). False easting and northing are written in
 * the CRS's linear unit (proj4's +x_0/+y_0 are always metres).
 */
export const WGS84_WKT =
  'GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]],AXIS["Latitude",NORTH],AXIS["Longitude",EAST],AUTHORITY["EPSG","4326"]]';

interface Ellipsoid {
  name: string;
  a: number;
  rf: number;
  epsg?: number;
}

const ELLIPSOIDS: Record<string, Ellipsoid> = {
  WGS84: { name: 'WGS 84', a: 6378137, rf: 298.257223563, epsg: 7030 },
  GRS80: { name: 'GRS 1980', a: 6378137, rf: 298.257222101, epsg: 7019 },
  clrk66: { name: 'Clarke 1866', a: 6378206.4, rf: 294.978698213898, epsg: 7008 },
  intl: { name: 'International 1924', a: 6378388, rf: 297, epsg: 7022 },
  bessel: { name: 'Bessel 1841', a: 6377397.155, rf: 299.1528128, epsg: 7004 },
  airy: { name: 'Airy 1830', a: 6377563.396, rf: 299.3249646, epsg: 7001 },
  krass: { name: 'Krassowsky 1940', a: 6378245, rf: 298.3, epsg: 7024 },
};

const DATUMS: Record<string, { name: string; ellps: string; gcs: string; epsg?: number; gcsEpsg?: number }> = {
  WGS84: { name: 'WGS_1984', ellps: 'WGS84', gcs: 'WGS 84', epsg: 6326, gcsEpsg: 4326 },
  NAD83: { name: 'North_American_Datum_1983', ellps: 'GRS80', gcs: 'NAD83', epsg: 6269, gcsEpsg: 4269 },
  NAD27: { name: 'North_American_Datum_1927', ellps: 'clrk66', gcs: 'NAD27', epsg: 6267, gcsEpsg: 4267 },
};

const q = (s: string) => `"${s.replace(/"/g, '""')}"`;
const n = (v: number) => {
  const s = String(Number(v.toPrecision(15)));
  return s === '-0' ? '0' : s;
};
const auth = (code: number | undefined) => (code !== undefined ? `,AUTHORITY["EPSG","${code}"]` : '');

export function parseProj4(def: string): Map<string, string | true> {
  const m = new Map<string, string | true>();
  for (const tok of def.trim().split(/\s+/)) {
    const r = /^\+([A-Za-z_0-9]+)(?:=(.*))?$/.exec(tok);
    if (r) m.set(r[1]!, r[2] ?? true);
  }
  return m;
}

function geogcs(p: Map<string, string | true>): string {
  const datumKey = typeof p.get('datum') === 'string' ? (p.get('datum') as string) : undefined;
  const datum = datumKey ? DATUMS[datumKey] : undefined;
  const ellpsKey = (typeof p.get('ellps') === 'string' ? (p.get('ellps') as string) : undefined) ?? datum?.ellps ?? 'WGS84';
  let e: Ellipsoid = ELLIPSOIDS[ellpsKey] ?? { name: ellpsKey, a: 6378137, rf: 298.257223563 };
  const a = Number(p.get('a'));
  if (Number.isFinite(a) && a > 0) {
    const b = Number(p.get('b'));
    const rf = Number(p.get('rf'));
    const inv = Number.isFinite(rf) && rf > 0 ? rf : Number.isFinite(b) && b > 0 && b !== a ? a / (a - b) : 0;
    e = { name: 'unnamed', a, rf: inv };
  }
  const tw = p.get('towgs84');
  const towgs84 = typeof tw === 'string' ? `,TOWGS84[${tw.split(',').map((v) => n(Number(v))).join(',')}]` : '';
  const dName = datum?.name ?? (e.epsg === 7030 && !towgs84 ? 'WGS_1984' : `unknown_based_on_${e.name.replace(/\W+/g, '_')}`);
  const gName = datum?.gcs ?? (dName === 'WGS_1984' ? 'WGS 84' : 'unknown');
  return (
    `GEOGCS[${q(gName)},DATUM[${q(dName)},SPHEROID[${q(e.name)},${n(e.a)},${n(e.rf)}${auth(e.epsg)}]${towgs84}${auth(datum?.epsg)}],` +
    `PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]]${auth(towgs84 ? undefined : datum?.gcsEpsg)}]`
  );
}

function unit(crs: Crs): string {
  if (crs.units === 'us-ft') return 'UNIT["US survey foot",0.304800609601219,AUTHORITY["EPSG","9003"]]';
  if (crs.units === 'ft') return 'UNIT["foot",0.3048,AUTHORITY["EPSG","9002"]]';
  return 'UNIT["metre",1,AUTHORITY["EPSG","9001"]]';
}

/** WKT 1 of a projected site CRS. `name` defaults to the EPSG code or "Lamina site CRS". */
export function crsToWkt(crs: Crs, name?: string): string {
  if (crs.isGeographic) return WGS84_WKT;
  const p = parseProj4(crs.proj4);
  const get = (k: string, d = 0) => {
    const v = p.get(k);
    return typeof v === 'string' && Number.isFinite(Number(v)) ? Number(v) : d;
  };
  const fe = get('x_0') / crs.metresPerUnit;
  const fn = get('y_0') / crs.metresPerUnit;
  const par = (k: string, v: number) => `PARAMETER[${q(k)},${n(v)}]`;
  const proj = p.get('proj');
  let projection: string | undefined;
  let params: string[] = [];
  switch (proj) {
    case 'utm': {
      const zone = get('zone');
      projection = 'Transverse_Mercator';
      params = [par('latitude_of_origin', 0), par('central_meridian', zone * 6 - 183), par('scale_factor', 0.9996), par('false_easting', 500000 / crs.metresPerUnit), par('false_northing', (p.has('south') ? 10000000 : 0) / crs.metresPerUnit)];
      break;
    }
    case 'tmerc':
      projection = 'Transverse_Mercator';
      params = [par('latitude_of_origin', get('lat_0')), par('central_meridian', get('lon_0')), par('scale_factor', get('k_0', get('k', 1))), par('false_easting', fe), par('false_northing', fn)];
      break;
    case 'lcc': {
      const lat1 = get('lat_1', get('lat_0'));
      const lat2 = get('lat_2', lat1);
      if (p.has('lat_2') && lat2 !== lat1) {
        projection = 'Lambert_Conformal_Conic_2SP';
        params = [par('latitude_of_origin', get('lat_0')), par('central_meridian', get('lon_0')), par('standard_parallel_1', lat1), par('standard_parallel_2', lat2), par('false_easting', fe), par('false_northing', fn)];
      } else {
        projection = 'Lambert_Conformal_Conic_1SP';
        params = [par('latitude_of_origin', lat1), par('central_meridian', get('lon_0')), par('scale_factor', get('k_0', get('k', 1))), par('false_easting', fe), par('false_northing', fn)];
      }
      break;
    }
    case 'merc':
      if (p.has('a') && p.get('a') === p.get('b')) break; // spherical (web) Mercator: PROJ4 extension below
      if (p.has('lat_ts')) {
        projection = 'Mercator_2SP';
        params = [par('standard_parallel_1', get('lat_ts')), par('central_meridian', get('lon_0')), par('false_easting', fe), par('false_northing', fn)];
      } else {
        projection = 'Mercator_1SP';
        params = [par('central_meridian', get('lon_0')), par('scale_factor', get('k_0', get('k', 1))), par('false_easting', fe), par('false_northing', fn)];
      }
      break;
    case 'aea':
      projection = 'Albers_Conic_Equal_Area';
      params = [par('latitude_of_center', get('lat_0')), par('longitude_of_center', get('lon_0')), par('standard_parallel_1', get('lat_1')), par('standard_parallel_2', get('lat_2')), par('false_easting', fe), par('false_northing', fn)];
      break;
    case 'laea':
      projection = 'Lambert_Azimuthal_Equal_Area';
      params = [par('latitude_of_center', get('lat_0')), par('longitude_of_center', get('lon_0')), par('false_easting', fe), par('false_northing', fn)];
      break;
    case 'sterea':
      projection = 'Oblique_Stereographic';
      params = [par('latitude_of_origin', get('lat_0')), par('central_meridian', get('lon_0')), par('scale_factor', get('k_0', get('k', 1))), par('false_easting', fe), par('false_northing', fn)];
      break;
    case 'stere':
      if (Math.abs(get('lat_0')) === 90) {
        projection = 'Polar_Stereographic';
        params = [par('latitude_of_origin', get('lat_ts', get('lat_0'))), par('central_meridian', get('lon_0')), par('scale_factor', get('k_0', get('k', 1))), par('false_easting', fe), par('false_northing', fn)];
      }
      break;
    case 'cass':
      projection = 'Cassini_Soldner';
      params = [par('latitude_of_origin', get('lat_0')), par('central_meridian', get('lon_0')), par('false_easting', fe), par('false_northing', fn)];
      break;
  }
  const code = crs.code ? /^EPSG:(\d+)$/i.exec(crs.code)?.[1] : undefined;
  const title = name ?? (crs.code ? crs.code : 'Lamina site CRS');
  const axes = 'AXIS["Easting",EAST],AXIS["Northing",NORTH]';
  if (!projection) {
    return `PROJCS[${q(title)},${geogcs(p)},PROJECTION["custom_proj4"],${unit(crs)},${axes},EXTENSION["PROJ4",${q(crs.proj4)}]${code ? `,AUTHORITY["EPSG","${code}"]` : ''}]`;
  }
  return `PROJCS[${q(title)},${geogcs(p)},PROJECTION[${q(projection)}],${params.join(',')},${unit(crs)},${axes}${code ? `,AUTHORITY["EPSG","${code}"]` : ''}]`;
}
