import { fromUrl, type GeoTIFF, type GeoTIFFImage } from 'geotiff';
import type { GridGeo } from './geo';

export interface BandRaster {
  values: Float32Array;
  width: number;
  height: number;
}

/**
 * The slice stack (slices.tif) read band by band over HTTP range requests with geotiff.js. Bands wider
 * than `maxDim` are read from the coarsest overview that still has at least `maxDim` cells across (or
 * resampled on read when the file has no overviews), so a large survey stays within a texture.
 */
export class SliceSource {
  private readonly cache = new Map<number, Promise<BandRaster>>();
  private constructor(
    private readonly tiff: GeoTIFF,
    private readonly full: GeoTIFFImage,
    private readonly overviews: GeoTIFFImage[],
    readonly geo: GridGeo,
    readonly nodata: number | null,
    readonly bandCount: number,
    private readonly maxDim: number,
    private readonly cacheSize: number,
  ) {}

  static async open(url: string, options: { maxDim?: number } = {}): Promise<SliceSource> {
    const tiff = await fromUrl(url, { allowFullFile: false });
    const full = await tiff.getImage(0);
    const n = await tiff.getImageCount();
    const overviews: GeoTIFFImage[] = [];
    for (let i = 1; i < n; i++) overviews.push(await tiff.getImage(i));
    const [ox, oy] = full.getOrigin();
    const [rx, ry] = full.getResolution();
    const geo: GridGeo = { originX: ox!, originY: oy!, resX: Math.abs(rx!), resY: Math.abs(ry!), width: full.getWidth(), height: full.getHeight() };
    const bandCount = full.getSamplesPerPixel();
    const cells = geo.width * geo.height;
    // keep about 64 M cells of decoded bands
    const cacheSize = Math.max(2, Math.min(64, Math.floor(64e6 / Math.max(1, cells))));
    return new SliceSource(tiff, full, overviews, geo, full.getGDALNoData(), bandCount, options.maxDim ?? 2048, cacheSize);
  }

  /** Display size of a band: the full grid, or a reduced grid for very large surveys. */
  displaySize(): { width: number; height: number; image: GeoTIFFImage } {
    const { width, height } = this.geo;
    if (Math.max(width, height) <= this.maxDim) return { width, height, image: this.full };
    const fit = this.overviews.filter((o) => Math.max(o.getWidth(), o.getHeight()) >= this.maxDim).pop();
    if (fit) return { width: fit.getWidth(), height: fit.getHeight(), image: fit };
    const s = this.maxDim / Math.max(width, height);
    return { width: Math.round(width * s), height: Math.round(height * s), image: this.full };
  }

  /** Band `sample` (0-based) as Float32. */
  band(sample: number): Promise<BandRaster> {
    const hit = this.cache.get(sample);
    if (hit) {
      this.cache.delete(sample);
      this.cache.set(sample, hit);
      return hit;
    }
    const p = (async () => {
      const { width, height, image } = this.displaySize();
      const r = await image.readRasters({ samples: [sample], width, height, resampleMethod: 'nearest', interleave: false });
      const arr = (r as unknown as ArrayLike<number>[])[0]!;
      const values = arr instanceof Float32Array ? arr : Float32Array.from(arr);
      return { values, width, height };
    })();
    this.cache.set(sample, p);
    p.catch(() => this.cache.delete(sample));
    while (this.cache.size > this.cacheSize) this.cache.delete(this.cache.keys().next().value!);
    return p;
  }

  close(): void {
    this.tiff.close?.();
  }
}
