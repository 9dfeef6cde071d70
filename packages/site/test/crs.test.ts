import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { fromWgs84, lookupEpsg, pointFromWgs84, resolveCrs, toWgs84, US_SURVEY_FOOT_M } from '../src';

const here = import.meta.dirname;
const hasCs2cs = (() => {
  try {
    execFileSync('cs2cs', [], { stdio: 'ignore' });
    return true;
  } catch (e) {
    return (e as { code?: string }).code !== 'ENOENT';
  }
})();

interface RefPoint { lon: number; lat: number; x: number; y: number }
interface RefFile { crs: Record<string, { forward: RefPoint[]; inverse: RefPoint[] }> }
const refs = JSON.parse(readFileSync(join(here, 'data/cs2cs-points.json'), 'utf8')) as RefFile;

describe('CRS registry', () => {
  it('resolves UTM on WGS84 and NAD83 in metres', () => {
    // EPSG registry: 32617 = WGS 84 / UTM zone 17N, 26917 = NAD83 / UTM zone 17N, both metres.
    for (const code of ['EPSG:32617', 'EPSG:32733', 'EPSG:26917']) {
      const c = resolveCrs(code);
      expect(c.code).toBe(code);
      expect(c.units).toBe('m');
      expect(c.metresPerUnit).toBe(1);
      expect(c.isGeographic).toBe(false);
    }
  });

  it('resolves US state plane in US survey feet and metres', () => {
    // EPSG registry: 2264 = NAD83 / North Carolina (ftUS); 32119 = NAD83 / North Carolina (metres);
    // 2263 = NAD83 / New York Long Island (ftUS). US survey foot = 1200/3937 m (NIST, exact).
    const ft = resolveCrs('EPSG:2264');
    expect(ft.units).toBe('us-ft');
    expect(ft.metresPerUnit).toBe(1200 / 3937);
    expect(ft.metresPerUnit).toBeCloseTo(0.3048006096012192, 15);
    expect(resolveCrs('EPSG:2263').units).toBe('us-ft');
    expect(resolveCrs('EPSG:32119').units).toBe('m');
    // Same projection, two units: the state plane origin is the same place, so x_ft * ftUS = x_m (false
    // easting 609601.22 m, EPSG 32119 and 2264 definitions).
    const [xf, yf] = pointFromWgs84(ft, -79.5, 35.4);
    const [xm, ym] = pointFromWgs84(resolveCrs('EPSG:32119'), -79.5, 35.4);
    expect(Math.abs(xf * US_SURVEY_FOOT_M - xm)).toBeLessThan(0.01);
    expect(Math.abs(yf * US_SURVEY_FOOT_M - ym)).toBeLessThan(0.001);
  });

  it('resolves national grids', () => {
    // EPSG registry names: British National Grid, Amersfoort / RD New, GDA2020 / MGA zone 55, NZGD2000 /
    // New Zealand Transverse Mercator 2000, ETRS89-extended / LAEA Europe, RGF93 v1 / Lambert-93.
    for (const code of ['EPSG:27700', 'EPSG:28992', 'EPSG:7855', 'EPSG:2193', 'EPSG:3035', 'EPSG:2154']) {
      const c = resolveCrs(code);
      expect(c.units, code).toBe('m');
      expect(c.isGeographic).toBe(false);
    }
    expect(lookupEpsg(7855)).toContain('+south');
  });

  it('accepts a proj4 string and reads its units', () => {
    const a = resolveCrs('+proj=tmerc +lat_0=0 +lon_0=-81 +k=0.9996 +x_0=500000 +y_0=0 +ellps=GRS80 +units=m +no_defs');
    expect(a.code).toBeUndefined();
    expect(a.units).toBe('m');
    const b = resolveCrs('+proj=lcc +lat_1=36.1666666666667 +lat_2=34.3333333333333 +lat_0=33.75 +lon_0=-79 +x_0=609601.22 +y_0=0 +datum=NAD83 +to_meter=0.3048006096012192');
    expect(b.units).toBe('us-ft');
    expect(resolveCrs('+proj=utm +zone=17 +datum=WGS84 +units=ft').metresPerUnit).toBe(0.3048);
  });

  it('reports geographic CRSs as such', () => {
    expect(resolveCrs('EPSG:4326').isGeographic).toBe(true);
    expect(resolveCrs('+proj=longlat +datum=WGS84').isGeographic).toBe(true);
  });

  it('names an unknown code, a bad proj4 string and odd units', () => {
    expect(() => resolveCrs('EPSG:99999')).toThrow(/site\.json: crs: unknown CRS EPSG:99999/);
    expect(() => resolveCrs('+proj=nonsense +units=m')).toThrow(/site\.json: crs: proj4 cannot use the CRS definition/);
    expect(() => resolveCrs('UTM 17')).toThrow(/expected an EPSG code like "EPSG:32617" or a proj4 string/);
    expect(() => resolveCrs('+proj=utm +zone=17 +datum=WGS84 +units=ch')).toThrow(/found \+units=ch/);
  });

  it('round-trips typed arrays', () => {
    const crs = resolveCrs('EPSG:2264');
    const x = Float64Array.from([1500000, 2000000.5, 2500000.25]);
    const y = Float64Array.from([500000, 700000.75, 900000.125]);
    const { lon, lat } = toWgs84(crs, x, y);
    const back = fromWgs84(crs, lon, lat);
    for (let i = 0; i < 3; i++) {
      expect(Math.abs((back.x[i] as number) - (x[i] as number))).toBeLessThan(1e-6);
      expect(Math.abs((back.y[i] as number) - (y[i] as number))).toBeLessThan(1e-6);
    }
  });
});

describe('proj4 against PROJ cs2cs (Debian proj-bin), committed points from test/data/gen-cs2cs.py', () => {
  for (const code of ['EPSG:32617', 'EPSG:2264']) {
    it(`${code} forward and inverse to a millimetre`, () => {
      const crs = resolveCrs(code);
      const ref = refs.crs[code];
      expect(ref).toBeDefined();
      const mmInUnits = 0.001 / crs.metresPerUnit;
      for (const p of ref?.forward ?? []) {
        const [x, y] = pointFromWgs84(crs, p.lon, p.lat);
        expect(Math.abs(x - p.x)).toBeLessThan(mmInUnits);
        expect(Math.abs(y - p.y)).toBeLessThan(mmInUnits);
      }
      // 1 mm on the ground is about 9e-9 degrees of latitude.
      for (const p of ref?.inverse ?? []) {
        const { lon, lat } = toWgs84(crs, [p.x], [p.y]);
        expect(Math.abs((lat[0] as number) - p.lat)).toBeLessThan(9e-9);
        expect(Math.abs(((lon[0] as number) - p.lon) * Math.cos((p.lat * Math.PI) / 180))).toBeLessThan(9e-9);
      }
    });
  }

  it.skipIf(!hasCs2cs)('committed points match a fresh cs2cs run', () => {
    const fresh = JSON.parse(execFileSync('/usr/bin/python3', [join(here, 'data/gen-cs2cs.py')]).toString()) as RefFile;
    for (const code of Object.keys(refs.crs)) {
      const a = refs.crs[code]?.forward ?? [];
      const b = fresh.crs[code]?.forward ?? [];
      expect(b.length).toBe(a.length);
      a.forEach((p, i) => expect(Math.abs(p.x - (b[i]?.x ?? NaN))).toBeLessThan(1e-6));
    }
  });

  it.skipIf(!hasCs2cs)('national grids agree with cs2cs on their EPSG codes', () => {
    // Live cs2cs with EPSG codes, so PROJ chooses the datum transformation itself. EPSG:2193 and 3035 are
    // northing-first in the EPSG registry and cs2cs honours that order. Tolerance 5 mm: with the same
    // +towgs84 Helmert parameters proj4js and PROJ differ by 3 mm on EPSG:27700 (measured here).
    const pts: [string, number, number, boolean][] = [
      ['EPSG:27700', -1.5, 52.5, false],
      ['EPSG:28992', 5.3, 52.1, false],
      ['EPSG:7855', 145.0, -37.8, false],
      ['EPSG:2193', 174.8, -41.3, true],
      ['EPSG:3035', 10.5, 50.2, true],
      ['EPSG:2154', 2.35, 48.85, false],
      ['EPSG:26917', -80.8, 35.2, false],
    ];
    for (const [code, lon, lat, northFirst] of pts) {
      const out = execFileSync('cs2cs', ['-f', '%.6f', 'EPSG:4326', code], { input: `${lat} ${lon}\n` }).toString().trim().split(/\s+/).map(Number);
      const [e, n] = northFirst ? [out[1], out[0]] : [out[0], out[1]];
      const [x, y] = pointFromWgs84(resolveCrs(code), lon, lat);
      expect(Math.abs(x - (e as number)), code).toBeLessThan(0.005);
      expect(Math.abs(y - (n as number)), code).toBeLessThan(0.005);
    }
  });
});
