import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { readSlices, sliceStats, writeSlices, type SliceStack } from '../src';
import { mulberry32 as rng } from '@lamina/random';
import { gdalinfoJson, readRasterPython, tempDir, validateCog } from '@lamina/test-utils';

function syntheticStack(crs: string, width: number, height: number, nSlices: number, metresPerUnit = 1): SliceStack {
  const r = rng(3);
  const grid = { crs, originX: 500123.5, originY: 4100456.25, cellSize: 0.125, width, height, nodata: -9999, metresPerUnit };
  const slices = Array.from({ length: nSlices }, (_, k) => {
    const values = new Float32Array(width * height);
    for (let i = 0; i < values.length; i++) {
      const col = i % width;
      const row = Math.floor(i / width);
      // A diagonal band of nodata, like the gap beyond the survey's edge.
      values[i] = Math.abs(col - row) < 10 ? -9999 : (k + 1) * (1 + Math.sin(col / 9) * Math.cos(row / 7)) + r();
    }
    return { index: k, topM: Number((k * 0.1).toFixed(3)), bottomM: Number(((k + 1) * 0.1).toFixed(3)), values };
  });
  return { grid, slices };
}

function firstDifference(a: Float32Array, b: Float32Array): number {
  if (a.length !== b.length) return 0;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return i;
  return -1;
}

interface GdalBand { band: number; description?: string; noDataValue?: number; block: number[]; overviews?: unknown[];
  metadata?: Record<string, Record<string, string>> }

describe('writeSlices: slices.tif checked by GDAL 3.6 (Debian gdal-bin) and read back with geotiff (npm)', () => {
  const dir = tempDir();
  const stack = syntheticStack('EPSG:32617', 600, 300, 3);

  it('gdalinfo -json reads the CRS, geotransform, bands, nodata, descriptions and the same statistics', async () => {
    const json = await writeSlices(stack, dir);
    const tif = join(dir, 'slices.tif');
    // without -stats: what the file itself carries (issue 14 part 4: a GIS reads the band statistics
    // without a scan)
    const info = gdalinfoJson(tif) as {
      stac: Record<string, unknown>; geoTransform: number[]; size: number[]; bands: GdalBand[]; metadata: Record<string, Record<string, string>>;
    };
    expect(info.stac['proj:epsg']).toBe(32617);
    expect(info.geoTransform).toEqual([500123.5, 0.125, 0, 4100456.25, 0, -0.125]);
    expect(info.size).toEqual([600, 300]);
    expect(info.bands.length).toBe(3);
    expect(info.metadata['IMAGE_STRUCTURE']!['COMPRESSION']).toBe('DEFLATE');
    // GDAL's own statistics, computed from the cells (ComputeStatistics scans, whatever the file stores)
    const computed = JSON.parse(
      execFileSync('/usr/bin/python3', ['-c', `
import sys, json
from osgeo import gdal
gdal.UseExceptions()
d = gdal.Open(sys.argv[1])
out = []
for i in range(d.RasterCount):
    mn, mx, mean, sd = d.GetRasterBand(i + 1).ComputeStatistics(False)
    out.append({'MINIMUM': mn, 'MAXIMUM': mx, 'MEAN': mean, 'STDDEV': sd})
print(json.dumps(out))
`, tif], { encoding: 'utf8' }),
    ) as Record<string, number>[];
    for (const [k, b] of info.bands.entries()) {
      expect(b.noDataValue).toBe(-9999);
      expect(b.description).toBe(`depth ${(k * 0.1).toFixed(3)}-${((k + 1) * 0.1).toFixed(3)} m`);
      expect(b.block).toEqual([256, 256]); // tiled (the validator lets small untiled files pass)
      expect(b.overviews?.length).toBe(2); // 300x150, 150x75
      const s = json.slices[k]!.stats;
      // GDAL computes in double over the same Float32 cells and prints 14 significant digits in the
      // band metadata (the `minimum` field is rounded for display): agreement to 1e-9 relative.
      const md = b.metadata![''] as Record<string, string>;
      const gdal = computed[k]!;
      for (const [key, ours] of [['MINIMUM', s.min], ['MAXIMUM', s.max], ['MEAN', s.mean], ['STDDEV', s.std]] as const) {
        expect(Number(md[`STATISTICS_${key}`]), `stored ${key}`).toBe(ours);
        expect(Math.abs(gdal[key]! - ours!), key).toBeLessThanOrEqual(1e-9 * Math.abs(ours!));
      }
    }
    // slices.json carries the same grid.
    const sj = JSON.parse(readFileSync(join(dir, 'slices.json'), 'utf8'));
    expect(sj).toMatchObject({ crs: 'EPSG:32617', epsg: 32617, originX: 500123.5, originY: 4100456.25, cellSize: 0.125, width: 600, height: 300, nodata: -9999 });
    expect(sj.slices[2]).toMatchObject({ index: 2, band: 3, topM: 0.2, bottomM: 0.3 });
    expect(Object.keys(sj.slices[0].stats).sort()).toEqual(['max', 'mean', 'min', 'p2', 'p98', 'std', 'validCount']);
  });

  it("passes GDAL's COG validator (--full-check=yes)", () => {
    const v = validateCog(join(dir, 'slices.tif'));
    expect(v.output).toMatch(/is a valid cloud optimized GeoTIFF/);
    expect(v.ok).toBe(true);
  });

  it('cells read by GDAL and by geotiff equal what we wrote', async () => {
    const back = await readSlices(dir);
    expect(back.grid).toMatchObject({ originX: 500123.5, originY: 4100456.25, cellSize: 0.125, width: 600, height: 300, nodata: -9999 });
    for (const [k, s] of stack.slices.entries()) {
      const g = Float32Array.from(readRasterPython(join(dir, 'slices.tif'), k + 1));
      expect(firstDifference(back.slices[k]!.values, s.values)).toBe(-1);
      expect(firstDifference(g, s.values)).toBe(-1);
    }
  });

  it('statistics: percentiles and valid count against a direct count', () => {
    const v = stack.slices[0]!.values;
    const s = sliceStats(v, -9999);
    const valid = Array.from(v).filter((x) => x !== -9999).sort((a, b) => a - b);
    expect(s.validCount).toBe(valid.length);
    // numpy.percentile default ("linear"): h = (n - 1) p.
    const h = (valid.length - 1) * 0.98;
    expect(s.p98).toBeCloseTo(valid[Math.floor(h)]! + (h - Math.floor(h)) * (valid[Math.floor(h) + 1]! - valid[Math.floor(h)]!), 5);
  });
});

describe('CRS without an EPSG code', () => {
  it('a proj4 CRS in US survey feet is written user-defined with its linear unit', async () => {
    const dir = tempDir();
    // North Carolina state plane (NAD83) in US survey feet, as proj4 (projinfo EPSG:2264 -o PROJ).
    const proj = '+proj=lcc +lat_0=33.75 +lon_0=-79 +lat_1=36.1666666666667 +lat_2=34.3333333333333 +x_0=609601.22 +y_0=0 +datum=NAD83 +units=us-ft +no_defs';
    await writeSlices(syntheticStack(proj, 100, 80, 1, 1200 / 3937), dir);
    const info = gdalinfoJson(join(dir, 'slices.tif')) as { coordinateSystem: { wkt: string } };
    expect(info.coordinateSystem.wkt).toMatch(/US survey foot/);
    expect(validateCog(join(dir, 'slices.tif')).ok).toBe(true);
  });
});
