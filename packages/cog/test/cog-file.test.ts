import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { encodeCog, encodeCogFile, RawBands, type CogOptions, type RowSource } from '../src';
// GDAL 3.6 (Debian gdal-bin, python3-gdal): gdalinfo and the COG validator, through the slices package's helpers.
import { GDAL_ENV, gdalinfoJson, tempDir, validateCog, PYTHON } from '@lamina/test-utils';

const dir = tempDir('lamina-cog-file-');

function bands(w: number, h: number, n: number, nodata: number): Float32Array[] {
  return Array.from({ length: n }, (_, b) => {
    const a = new Float32Array(w * h);
    for (let i = 0; i < a.length; i++) a[i] = Math.fround(Math.sin(i * 0.013 + b) * 100 + (i % w) * 0.01 * (b + 1));
    // Scattered nodata cells and one block of them, so some overview cells average fewer than four.
    for (let i = b; i < a.length; i += 97) a[i] = nodata;
    for (let i = 0; i < Math.min(a.length, 3 * w); i++) if (i % w < 40) a[i] = nodata;
    return a;
  });
}

/** Rows out of memory through one reused buffer (a view valid until the next call, as RowSource allows). */
function memorySource(bs: Float32Array[], width: number, height: number, async = false): RowSource {
  let buf = new Float32Array(0);
  return {
    width,
    height,
    bands: bs.length,
    readRows(b, r0, r1) {
      const n = (r1 - r0) * width;
      if (buf.length < n) buf = new Float32Array(n);
      const v = buf.subarray(0, n);
      v.set(bs[b]!.subarray(r0 * width, r1 * width));
      return async ? Promise.resolve(v) : v;
    },
  };
}

function options(o: Partial<CogOptions>): CogOptions {
  return { originX: 100, originY: 200, pixelSize: 0.5, crs: { epsg: 32617 }, ...o };
}

function leftovers(d: string, keep: string[]): string[] {
  return readdirSync(d).filter((f) => !keep.includes(f));
}

describe('encodeCogFile: the same bytes as encodeCog', () => {
  it.each([
    ['1x1', 1, 1, 1, 256, Number.NaN, 3 as const],
    ['one whole tile', 256, 256, 5, 256, -9999, 3 as const],
    ['edge tiles, 1 band, no predictor', 300, 257, 1, 256, -9999, 1 as const],
    ['700x300: 2 overview levels', 700, 300, 5, 256, Number.NaN, 3 as const],
    ['700x300, finite nodata, no predictor', 700, 300, 1, 256, -9999, 1 as const],
    ['tile 16, odd sizes: many levels', 101, 77, 5, 16, -9999, 3 as const],
    ['tile 32, NaN', 97, 130, 1, 32, Number.NaN, 1 as const],
    ['tile 32, nodata 0 (cells that are exactly 0)', 65, 64, 5, 32, 0, 3 as const],
  ])('%s (%i x %i x %i bands, tile %i, nodata %f, predictor %i)', async (name, w, h, n, tileSize, nodata, predictor) => {
    const bs = bands(w, h, n, nodata);
    const o = options({ tileSize, nodata, predictor, descriptions: bs.map((_, b) => `band ${b}`) });
    const expected = await encodeCog(bs, w, h, o);
    const sub = join(dir, name.replace(/\W+/g, '-'));
    mkdirSync(sub);
    const path = join(sub, 'out.tif');
    const size = await encodeCogFile(memorySource(bs, w, h, n === 5), o, path);
    expect(size).toBe(expected.length);
    expect(Buffer.compare(readFileSync(path), expected)).toBe(0);
    expect(leftovers(sub, ['out.tif'])).toEqual([]);
  });

  it('overviews off: one level', async () => {
    const bs = bands(300, 280, 2, -9999);
    const o = options({ nodata: -9999, overviews: false });
    const path = join(dir, 'no-ovr.tif');
    await encodeCogFile(memorySource(bs, 300, 280), o, path);
    expect(Buffer.compare(readFileSync(path), await encodeCog(bs, 300, 280, o))).toBe(0);
  });

  it('a RawBands file as the source is read, not removed', async () => {
    const bs = bands(600, 300, 2, -9999);
    const raw = RawBands.create(join(dir, 'src.f32'), 600, 300, 2);
    bs.forEach((b, k) => raw.writeRows(k, 0, b));
    const o = options({ nodata: -9999 });
    await encodeCogFile(raw, o, join(dir, 'from-raw.tif'));
    expect(Buffer.compare(readFileSync(join(dir, 'from-raw.tif')), await encodeCog(bs, 600, 300, o))).toBe(0);
    expect(raw.readRows(1, 299, 300)[599]).toBe(bs[1]![300 * 600 - 1]);
    raw.remove();
  });
});

describe('encodeCogFile: a larger file checked by GDAL 3.6 and numpy', () => {
  it("1500 x 900 x 4 passes GDAL's COG validator; gdalinfo -stats gives numpy's mean of band 1", async () => {
    const [w, h] = [1500, 900];
    const bs = bands(w, h, 4, -9999);
    const sub = join(dir, 'large');
    mkdirSync(sub);
    const path = join(sub, 'large.tif');
    await encodeCogFile(memorySource(bs, w, h), options({ nodata: -9999, level: 1 }), path);
    expect(leftovers(sub, ['large.tif'])).toEqual([]);

    const v = validateCog(path);
    expect(v.output).toMatch(/is a valid cloud optimized GeoTIFF/);
    expect(v.ok).toBe(true);
    const info = gdalinfoJson(path, true) as { size: number[]; bands: { overviews?: unknown[]; metadata: Record<string, Record<string, string>> }[] };
    expect(info.size).toEqual([w, h]);
    expect(info.bands.length).toBe(4);
    expect(info.bands[0]!.overviews?.length).toBe(3); // 750x450, 375x225, 188x113 (halve until one 256 tile)

    // numpy reads the band we wrote from its own raw copy, masks nodata and averages in double.
    const raw = join(dir, 'large.b1.f32');
    writeFileSync(raw, bs[0]!);
    const numpyMean = Number(
      execFileSync(PYTHON, ['-c', `import numpy as np; a=np.fromfile(${JSON.stringify(raw)}, '<f4').astype('f8'); print(repr(a[a != -9999].mean()))`], {
        env: GDAL_ENV,
        encoding: 'utf8',
      }),
    );
    const gdalMean = Number(info.bands[0]!.metadata['']!['STATISTICS_MEAN']);
    // GDAL prints 14 significant digits: agreement to 1e-9 relative.
    expect(Math.abs(gdalMean - numpyMean)).toBeLessThanOrEqual(1e-9 * Math.abs(numpyMean));
  });
});

describe('encodeCogFile: temporary files', () => {
  it('are removed, with the partial output, when readRows throws', async () => {
    const sub = join(dir, 'throws');
    mkdirSync(sub);
    const bs = bands(700, 600, 3, -9999);
    const src = memorySource(bs, 700, 600);
    const failing: RowSource = {
      ...src,
      readRows(b, r0, r1) {
        if (b === 2 && r0 >= 512) throw new Error('disk went away');
        return src.readRows(b, r0, r1);
      },
    };
    await expect(encodeCogFile(failing, options({ nodata: -9999 }), join(sub, 'out.tif'))).rejects.toThrow(/disk went away/);
    expect(readdirSync(sub)).toEqual([]);
  });

  it('says what it expected', async () => {
    const src = memorySource([new Float32Array(4)], 2, 2);
    await expect(encodeCogFile({ ...src, readRows: () => new Float32Array(3) }, options({}), join(dir, 'short.tif'))).rejects.toThrow(
      /readRows\(0, 0, 2\) gave 3 values, expected 4/,
    );
    await expect(encodeCogFile(src, options({ tileSize: 100 }), join(dir, 'bad.tif'))).rejects.toThrow(/multiple of 16/);
    await expect(encodeCogFile({ ...src, bands: 0 }, options({}), join(dir, 'none.tif'))).rejects.toThrow(/at least one band/);
    expect(readdirSync(dir).filter((f) => /^(short|bad|none)\.tif/.test(f))).toEqual([]);
  });
});
