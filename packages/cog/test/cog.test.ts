import { PYTHON } from '@lamina/test-utils';
import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { encodeCog, readGeoTiff, type CogOptions } from '../src';

// External references: GDAL 3.6 (Debian gdal-bin, python3-gdal): gdalinfo, its Python bindings and its
// COG validator (osgeo_utils.samples.validate_cloud_optimized_geotiff); and the geotiff npm reader.
const env = { ...process.env, GDAL_PAM_ENABLED: 'NO' };
const dir = mkdtempSync(join(tmpdir(), 'lamina-cog-'));

function bands(w: number, h: number, n: number, nodata = -9999): Float32Array[] {
  return Array.from({ length: n }, (_, b) => {
    const a = new Float32Array(w * h);
    for (let i = 0; i < a.length; i++) a[i] = Math.fround(Math.sin(i * 0.013 + b) * 100 + (i % w) * 0.01 * (b + 1));
    for (let i = 0; i < a.length; i += 97) a[i] = nodata;
    return a;
  });
}

async function write(name: string, bs: Float32Array[], w: number, h: number, o: Partial<CogOptions> = {}): Promise<string> {
  const path = join(dir, name);
  writeFileSync(path, await encodeCog(bs, w, h, { originX: 100, originY: 200, pixelSize: 0.5, crs: { epsg: 32617 }, nodata: -9999, ...o }));
  return path;
}

function gdalBytes(path: string, band: number): Float32Array {
  const out = `${path}.${band}.f32`;
  execFileSync(PYTHON, ['-c',
    `from osgeo import gdal; ds=gdal.Open(${JSON.stringify(path)}); ds.GetRasterBand(${band}).ReadAsArray().astype('<f4').tofile(${JSON.stringify(out)})`], { env });
  const b = readFileSync(out);
  return new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

function validate(path: string): string {
  return execFileSync(PYTHON, ['-m', 'osgeo_utils.samples.validate_cloud_optimized_geotiff', '--full-check=yes', path], { env, encoding: 'utf8' });
}

function same(a: Float32Array, b: Float32Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i] && !(Number.isNaN(a[i]) && Number.isNaN(b[i]))) return false;
  return true;
}

describe('encodeCog', () => {
  it.each([
    ['predictor 3, 5 bands, edge tiles', 700, 530, 5, 3 as const],
    ['no predictor, 1 band', 300, 257, 1, 1 as const],
    ['one tile, no overviews needed', 200, 100, 2, 3 as const],
  ])('%s: valid COG, every cell read back by GDAL and by geotiff', async (_name, w, h, n, predictor) => {
    const bs = bands(w, h, n);
    const path = await write(`t-${w}-${n}.tif`, bs, w, h, { predictor });
    expect(validate(path)).toMatch(/is a valid cloud optimized GeoTIFF/);
    const info = JSON.parse(execFileSync('gdalinfo', ['-json', path], { env, encoding: 'utf8' }));
    expect(info.size).toEqual([w, h]);
    expect(info.bands.length).toBe(n);
    expect(info.bands[0].block).toEqual([256, 256]);
    // Overviews halve until the image fits one 256 tile (as GDAL's COG driver does).
    const expectOvr = w > 256 || h > 256 ? Math.ceil(Math.log2(Math.max(w, h) / 256)) : 0;
    expect((info.bands[0].overviews ?? []).length).toBe(expectOvr);
    expect(info.metadata.IMAGE_STRUCTURE).toMatchObject({ COMPRESSION: 'DEFLATE', LAYOUT: 'COG', INTERLEAVE: n > 1 ? 'PIXEL' : 'BAND' });
    const back = await readGeoTiff(readFileSync(path));
    expect(back.imageCount).toBe(1 + expectOvr);
    for (let b = 0; b < n; b++) {
      expect(same(gdalBytes(path, b + 1), bs[b]!)).toBe(true);
      expect(same(back.bands[b]!, bs[b]!)).toBe(true);
    }
  });

  it('overviews are 2x2 means of the valid cells (GDAL reads them)', async () => {
    const w = 600;
    const h = 520;
    const b = new Float32Array(w * h);
    for (let i = 0; i < b.length; i++) b[i] = (i % w) + Math.floor(i / w);
    b[0] = -9999; // cell (0, 0): the first overview cell averages the other three
    const path = await write('ovr.tif', [b], w, h);
    const out = `${path}.ovr.f32`;
    execFileSync(PYTHON, ['-c',
      `from osgeo import gdal; ds=gdal.Open(${JSON.stringify(path)}); ds.GetRasterBand(1).GetOverview(0).ReadAsArray().astype('<f4').tofile(${JSON.stringify(out)})`], { env });
    const raw = readFileSync(out);
    const o = new Float32Array(raw.buffer.slice(raw.byteOffset, raw.byteOffset + raw.byteLength));
    expect(o.length).toBe(300 * 260);
    expect(o[0]).toBeCloseTo((1 + 1 + 2) / 3, 5);
    expect(o[5 * 300 + 7]).toBeCloseTo(2 * 7 + 0.5 + 2 * 5 + 0.5, 5);
  });

  it('GeoKeys, nodata, descriptions and metadata as GDAL reads them', async () => {
    const path = await write('meta.tif', bands(64, 48, 2), 64, 48, {
      descriptions: ['depth 0.000-0.125 m', 'depth <b> "c"'],
      bandMetadata: [{ TOP_M: '0' }, { TOP_M: '0.125' }],
      metadata: { SLICE_VALUE: 'mean-square' },
    });
    const info = JSON.parse(execFileSync('gdalinfo', ['-json', path], { env, encoding: 'utf8' }));
    expect(info.stac['proj:epsg']).toBe(32617);
    expect(info.geoTransform).toEqual([100, 0.5, 0, 200, 0, -0.5]);
    expect(info.bands.map((b: { description: string }) => b.description)).toEqual(['depth 0.000-0.125 m', 'depth <b> "c"']);
    expect(info.bands[1].noDataValue).toBe(-9999);
    expect(info.bands[1].metadata[''].TOP_M).toBe('0.125');
    expect(info.metadata[''].SLICE_VALUE).toBe('mean-square');
    expect(info.metadata[''].AREA_OR_POINT).toBe('Area');
  });

  it('a geographic EPSG code and a local CRS in US survey feet', async () => {
    const geo = await write('geo.tif', bands(32, 32, 1), 32, 32, { crs: { epsg: 4326, geographic: true }, pixelSize: 1e-6 });
    expect(JSON.parse(execFileSync('gdalinfo', ['-json', geo], { env, encoding: 'utf8' })).stac['proj:epsg']).toBe(4326);
    const ft = await write('ft.tif', bands(32, 32, 1), 32, 32, { crs: { metresPerUnit: 1200 / 3937, citation: 'site grid' } });
    const wkt = JSON.parse(execFileSync('gdalinfo', ['-json', ft], { env, encoding: 'utf8' })).coordinateSystem.wkt as string;
    expect(wkt).toMatch(/US survey foot/);
    expect(wkt).toMatch(/site grid/);
  });

  it('NaN as nodata', async () => {
    const bs = bands(40, 30, 1, Number.NaN);
    const path = await write('nan.tif', bs, 40, 30, { nodata: Number.NaN });
    const info = JSON.parse(execFileSync('gdalinfo', ['-json', path], { env, encoding: 'utf8' }));
    expect(info.bands[0].noDataValue).toBe('NaN');
    expect(same((await readGeoTiff(readFileSync(path))).bands[0]!, bs[0]!)).toBe(true);
  });

  it('says what it expected', async () => {
    await expect(encodeCog([new Float32Array(5)], 2, 2, { originX: 0, originY: 0, pixelSize: 1, crs: {} })).rejects.toThrow(/band 0 has 5 values, expected 4/);
    await expect(encodeCog([new Float32Array(4)], 2, 2, { originX: 0, originY: 0, pixelSize: 1, crs: {}, tileSize: 100 })).rejects.toThrow(/multiple of 16/);
  });
});
