import proj4 from 'proj4';
import proj4List from 'proj4-list';
import { InputError } from '@lamina/errors';
import type { Crs } from './types';
import { extraDefs } from './crs-extra';

/** US survey foot in metres (exact by definition: 1200/3937). */
export const US_SURVEY_FOOT_M = 1200 / 3937;
/** International foot in metres (exact). */
export const INTERNATIONAL_FOOT_M = 0.3048;

const WGS84 = '+proj=longlat +datum=WGS84 +no_defs';
const GEOGRAPHIC_PROJS = new Set(['longlat', 'latlong', 'lonlat', 'latlon']);

/** Linear units we grid in, from `+units=` names; anything else is refused with a message. */
const UNIT_METRES: Record<string, { units: Crs['units']; metresPerUnit: number }> = {
  m: { units: 'm', metresPerUnit: 1 },
  'us-ft': { units: 'us-ft', metresPerUnit: US_SURVEY_FOOT_M },
  ft: { units: 'ft', metresPerUnit: INTERNATIONAL_FOOT_M },
};

/** The proj4 definition of an EPSG code from the bundled registry, or undefined. */
export function lookupEpsg(code: number | string): string | undefined {
  const key = `EPSG:${String(code).replace(/^epsg:/i, '')}`;
  return (proj4List as Record<string, [string, string] | undefined>)[key]?.[1]?.trim() ?? extraDefs[key];
}

/** The EPSG codes the registry resolves, as numbers. */
export function registryCodes(): number[] {
  return [...Object.keys(proj4List), ...Object.keys(extraDefs)].map((k) => Number(k.replace(/^EPSG:/, ''))).filter((c) => Number.isInteger(c));
}

/** Number of EPSG codes the registry resolves (for `lamina info --help` style summaries and tests). */
export function registrySize(): number {
  return Object.keys(proj4List).length + Object.keys(extraDefs).length;
}

interface ProjParams {
  proj?: string;
  units?: string;
  toMeter?: number;
}

function parseParams(def: string): ProjParams {
  const out: ProjParams = {};
  for (const tok of def.trim().split(/\s+/)) {
    const m = /^\+([a-z_0-9]+)(?:=(.*))?$/i.exec(tok);
    if (!m) continue;
    const [, key, value] = m;
    if (key === 'proj') out.proj = value;
    else if (key === 'units') out.units = value;
    else if (key === 'to_meter' && value !== undefined) out.toMeter = Number(value);
  }
  return out;
}

export interface ResolveCrsOptions {
  /** File named in error messages. @default 'site.json' */
  file?: string;
  /** JSON path named in error messages. @default 'crs' */
  field?: string;
}

/**
 * Resolve an EPSG code (`EPSG:32617`, case-insensitive) or a proj4 string (`+proj=...`) to a `Crs` with
 * its units. Throws `InputError` for an unknown code, a string proj4 cannot parse, or linear units other
 * than metres, US survey feet or international feet. Geographic CRSs resolve (`isGeographic: true`);
 * `loadSite` refuses them for trace coordinates.
 */
export function resolveCrs(input: string, options: ResolveCrsOptions = {}): Crs {
  const file = options.file ?? 'site.json';
  const field = options.field ?? 'crs';
  const text = input.trim();
  let def: string;
  let code: string | undefined;
  const epsg = /^epsg:(\d+)$/i.exec(text);
  if (epsg) {
    code = `EPSG:${Number(epsg[1])}`;
    const found = lookupEpsg(code);
    if (found === undefined) {
      throw new InputError(file, `unknown CRS ${code}: not in the bundled EPSG registry (proj4-list); give its proj4 string instead (e.g. from \`projinfo ${code} -o PROJ -q\`)`, { field });
    }
    def = found;
  } else if (text.startsWith('+')) {
    def = text;
  } else {
    throw new InputError(file, `expected an EPSG code like "EPSG:32617" or a proj4 string starting with "+proj=", found ${JSON.stringify(input)}`, { field });
  }
  try {
    // proj4 throws bare strings (and sometimes TypeErrors) for definitions it cannot parse.
    const conv = proj4(def, WGS84);
    const probe = conv.forward([0, 0]);
    if (!Array.isArray(probe)) throw new Error('no result');
  } catch (e) {
    const why = e instanceof Error ? e.message : String(e);
    throw new InputError(file, `proj4 cannot use the CRS definition ${JSON.stringify(def)}: ${why}`, { field });
  }
  const p = parseParams(def);
  if (p.proj === undefined) throw new InputError(file, `the CRS definition has no +proj= parameter: ${JSON.stringify(def)}`, { field });
  if (p.proj === 'geocent') throw new InputError(file, `a geocentric CRS (+proj=geocent) cannot hold plan coordinates; use a projected CRS`, { field });
  const isGeographic = GEOGRAPHIC_PROJS.has(p.proj);
  const normalized = def.replace(/\s+/g, ' ').trim();
  if (isGeographic) {
    return { input, ...(code ? { code } : {}), proj4: normalized, units: 'degree', metresPerUnit: Number.NaN, isGeographic };
  }
  let units: Crs['units'];
  let metresPerUnit: number;
  if (p.toMeter !== undefined) {
    if (!(p.toMeter > 0 && Number.isFinite(p.toMeter))) {
      throw new InputError(file, `expected a positive +to_meter, found ${JSON.stringify(def)}`, { field });
    }
    metresPerUnit = p.toMeter;
    const near = (a: number, b: number): boolean => Math.abs(a - b) < 1e-12;
    if (near(p.toMeter, 1)) units = 'm';
    else if (near(p.toMeter, US_SURVEY_FOOT_M)) units = 'us-ft';
    else if (near(p.toMeter, INTERNATIONAL_FOOT_M)) units = 'ft';
    else throw new InputError(file, `expected linear units of metres, US survey feet or feet, found +to_meter=${p.toMeter}`, { field });
  } else {
    const u = UNIT_METRES[p.units ?? 'm'];
    if (!u) throw new InputError(file, `expected linear units m, us-ft or ft, found +units=${p.units}`, { field });
    units = u.units;
    metresPerUnit = u.metresPerUnit;
  }
  return { input, ...(code ? { code } : {}), proj4: normalized, units, metresPerUnit, isGeographic };
}

type Converter = proj4.Converter;
const converters = new Map<string, Converter>();

function converter(crs: Crs): Converter {
  let c = converters.get(crs.proj4);
  if (!c) {
    c = proj4(crs.proj4, WGS84);
    converters.set(crs.proj4, c);
  }
  return c;
}

export interface LonLat {
  lon: Float64Array;
  lat: Float64Array;
}

export interface Xy {
  x: Float64Array;
  y: Float64Array;
}

/** Site-CRS coordinates (CRS units) to WGS84 degrees, element by element. */
export function toWgs84(crs: Crs, x: ArrayLike<number>, y: ArrayLike<number>, out?: LonLat): LonLat {
  const n = x.length;
  if (y.length !== n) throw new RangeError(`toWgs84: x has ${n} values and y has ${y.length}`);
  const res = out ?? { lon: new Float64Array(n), lat: new Float64Array(n) };
  const conv = converter(crs);
  const p = [0, 0];
  for (let i = 0; i < n; i++) {
    p[0] = x[i] as number;
    p[1] = y[i] as number;
    const q = conv.forward(p);
    res.lon[i] = q[0] as number;
    res.lat[i] = q[1] as number;
  }
  return res;
}

/** WGS84 degrees to site-CRS coordinates (CRS units), element by element. */
export function fromWgs84(crs: Crs, lon: ArrayLike<number>, lat: ArrayLike<number>, out?: Xy): Xy {
  const n = lon.length;
  if (lat.length !== n) throw new RangeError(`fromWgs84: lon has ${n} values and lat has ${lat.length}`);
  const res = out ?? { x: new Float64Array(n), y: new Float64Array(n) };
  const conv = converter(crs);
  const p = [0, 0];
  for (let i = 0; i < n; i++) {
    p[0] = lon[i] as number;
    p[1] = lat[i] as number;
    const q = conv.inverse(p);
    res.x[i] = q[0] as number;
    res.y[i] = q[1] as number;
  }
  return res;
}

/** One point to WGS84: `[lon, lat]`. */
export function pointToWgs84(crs: Crs, x: number, y: number): [number, number] {
  const q = converter(crs).forward([x, y]);
  return [q[0] as number, q[1] as number];
}

/** One WGS84 point to the site CRS: `[x, y]`. */
export function pointFromWgs84(crs: Crs, lon: number, lat: number): [number, number] {
  const q = converter(crs).inverse([lon, lat]);
  return [q[0] as number, q[1] as number];
}
