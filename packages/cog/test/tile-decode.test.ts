import { describe, expect, it } from 'vitest';
import { encodeCog, readGeoTiff, useNodeInflate } from '../src';

// Second implementation: the geotiff npm package's own DEFLATE decoder (pako) and floating-point
// predictor, read before useNodeInflate replaces them in this process.
function bands(w: number, h: number, n: number): Float32Array[] {
  return Array.from({ length: n }, (_, b) => {
    const a = new Float32Array(w * h);
    for (let i = 0; i < a.length; i++) a[i] = Math.fround(Math.sin(i * 0.017 + b) * 10 ** ((i % 7) - 3) * (i % 3 === 0 ? -1 : 1));
    for (let i = 0; i < a.length; i += 89) a[i] = Number.NaN;
    for (let i = 5; i < a.length; i += 101) a[i] = -0;
    return a;
  });
}

describe('useNodeInflate', () => {
  it('reads the same bytes as geotiff itself (several bands, predictor 3, tiles cut at the edges, overviews, predictor 1)', async () => {
    const cases = [
      { w: 300, h: 170, n: 5, predictor: 3 as const },
      { w: 40, h: 600, n: 1, predictor: 3 as const },
      { w: 130, h: 90, n: 3, predictor: 1 as const },
    ];
    const files = await Promise.all(cases.map((c) => encodeCog(bands(c.w, c.h, c.n), c.w, c.h, { originX: 0, originY: 0, pixelSize: 1, crs: { epsg: 32617 }, nodata: Number.NaN, tileSize: 128, predictor: c.predictor })));
    const before = await Promise.all(files.map((f) => readGeoTiff(f)));
    useNodeInflate();
    const after = await Promise.all(files.map((f) => readGeoTiff(f)));
    for (let k = 0; k < files.length; k++) {
      expect(after[k]!.bands.length).toBe(cases[k]!.n);
      for (let b = 0; b < cases[k]!.n; b++) expect(Buffer.compare(Buffer.from(after[k]!.bands[b]!.buffer), Buffer.from(before[k]!.bands[b]!.buffer))).toBe(0);
    }
  });
});
