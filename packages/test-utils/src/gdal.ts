// Helpers that run Debian's GDAL command-line tools (gdal-bin 3.6) on our data, for external checks.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { tempDir } from './temp';
import { join } from 'node:path';
import { PYTHON } from './python';

export const GDAL_ENV = { ...process.env, GDAL_PAM_ENABLED: 'NO' };

export interface GdalGridArgs {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  z: ArrayLike<number>;
  /** Extent of the output grid and its size; cells are evaluated at their centres. */
  minX: number;
  maxX: number;
  minY: number;
  maxY: number;
  width: number;
  height: number;
  radius: number;
  maxPoints: number;
  power?: number;
  nodata?: number;
}

/** `gdal_grid -a invdistnn` on points written to CSV (+ an OGR VRT); returns the north-up grid, row-major. */
export function gdalGridInvdistnn(a: GdalGridArgs, dir = tempDir()): Float64Array {
  const lines = ['x,y,z'];
  for (let i = 0; i < a.x.length; i++) lines.push(`${a.x[i]!.toPrecision(17)},${a.y[i]!.toPrecision(17)},${a.z[i]!.toPrecision(17)}`);
  writeFileSync(join(dir, 'pts.csv'), `${lines.join('\n')}\n`);
  writeFileSync(
    join(dir, 'pts.vrt'),
    `<OGRVRTDataSource><OGRVRTLayer name="pts"><SrcDataSource>${join(dir, 'pts.csv')}</SrcDataSource><SrcLayer>pts</SrcLayer>` +
      '<GeometryType>wkbPoint</GeometryType><GeometryField encoding="PointFromColumns" x="x" y="y"/></OGRVRTLayer></OGRVRTDataSource>',
  );
  const out = join(dir, 'grid.tif');
  execFileSync(
    'gdal_grid',
    [
      '-q',
      '-a',
      `invdistnn:power=${a.power ?? 2}:radius=${a.radius}:max_points=${a.maxPoints}:nodata=${a.nodata ?? -9999}`,
      '-txe',
      String(a.minX),
      String(a.maxX),
      '-tye',
      String(a.maxY),
      String(a.minY),
      '-outsize',
      String(a.width),
      String(a.height),
      '-ot',
      'Float64',
      '-zfield',
      'z',
      '-l',
      'pts',
      join(dir, 'pts.vrt'),
      out,
    ],
    { env: GDAL_ENV, stdio: 'pipe' },
  );
  return readRasterPython(out, 1);
}

/** Band `band` (1-based) of a raster as GDAL's Python bindings read it (float64, row-major). */
export function readRasterPython(path: string, band: number): Float64Array {
  const raw = join(path + `.b${band}.f64`);
  execFileSync(
    PYTHON,
    ['-c', `from osgeo import gdal; import numpy as np; ds=gdal.Open(${JSON.stringify(path)}); a=ds.GetRasterBand(${band}).ReadAsArray().astype('<f8'); a.tofile(${JSON.stringify(raw)})`],
    { env: GDAL_ENV, stdio: 'pipe' },
  );
  const b = readFileSync(raw);
  return new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

/** `gdalinfo -json [-stats]` parsed. */
export function gdalinfoJson(path: string, stats = false): Record<string, unknown> {
  const args = ['-json', ...(stats ? ['-stats'] : []), path];
  return JSON.parse(execFileSync('gdalinfo', args, { env: GDAL_ENV, encoding: 'utf8', maxBuffer: 64 << 20 })) as Record<string, unknown>;
}

/** GDAL's COG validator; returns its output and whether it passed (exit status 0). */
export function validateCog(path: string): { ok: boolean; output: string } {
  try {
    const output = execFileSync(PYTHON, ['-m', 'osgeo_utils.samples.validate_cloud_optimized_geotiff', '--full-check=yes', path], {
      env: GDAL_ENV,
      encoding: 'utf8',
      stdio: 'pipe',
    });
    return { ok: true, output };
  } catch (e) {
    const err = e as { stdout?: string; stderr?: string };
    return { ok: false, output: `${err.stdout ?? ''}${err.stderr ?? ''}` };
  }
}

