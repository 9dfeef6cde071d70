import { fromUrl, type GeoTIFF, type GeoTIFFImage } from 'geotiff';
import type { GridGeo } from './geo';

export interface BandRaster {
  values: Float32Array;
  width: number;
  height: number;
}

export interface SliceSourceOptions {
  /** Largest display size across, cells. @default 2048 */
  maxDim?: number;
  /** Memory for decoded bands, bytes. @default 256 MB */
  budgetBytes?: number;
}

interface Level {
  image: GeoTIFFImage;
  width: number;
  height: number;
}

/**
 * The slice stack (slices.tif) read over HTTP range requests with geotiff.js.
 *
 * Band-separate files (PlanarConfiguration 2) are read one band at a time, at full resolution up to
 * `maxDim` cells across, else from the coarsest overview still `maxDim` across (or resampled on read).
 * Pixel-interleaved files (PlanarConfiguration 1, one tile holds every band) cost the same bytes for
 * one band as for all, so every band is decoded on the first read and kept; the level is the finest
 * whose whole stack fits `budgetBytes`, so a very large stack shows from an overview.
 */
export class SliceSource {
  private readonly cache = new Map<number, Promise<BandRaster>>();
  private all: Promise<BandRaster[]> | undefined;
  private constructor(
    private readonly tiff: GeoTIFF,
    private readonly level: Level,
    readonly geo: GridGeo,
    readonly nodata: number | null,
    readonly bandCount: number,
    readonly interleaved: boolean,
    private readonly cacheSize: number,
  ) {}

  static async open(url: string, options: SliceSourceOptions = {}): Promise<SliceSource> {
    // large blocks: fewer range requests for the tiles of one read
    const tiff = await fromUrl(url, { allowFullFile: false, blockSize: 1 << 19, cacheSize: 128 } as never);
    const full = await tiff.getImage(0);
    const n = await tiff.getImageCount();
    const images: GeoTIFFImage[] = [full];
    for (let i = 1; i < n; i++) images.push(await tiff.getImage(i));
    const [ox, oy] = full.getOrigin();
    const [rx, ry] = full.getResolution();
    const geo: GridGeo = { originX: ox!, originY: oy!, resX: Math.abs(rx!), resY: Math.abs(ry!), width: full.getWidth(), height: full.getHeight() };
    const bands = full.getSamplesPerPixel();
    const interleaved = bands > 1 && full.planarConfiguration === 1;
    const maxDim = options.maxDim ?? 2048;
    const budget = options.budgetBytes ?? 256 * 2 ** 20;
    const fits = (im: GeoTIFFImage) => Math.max(im.getWidth(), im.getHeight()) <= maxDim && (!interleaved || im.getWidth() * im.getHeight() * bands * 4 <= budget);
    const fit = images.find(fits);
    let level: Level;
    if (fit) level = { image: fit, width: fit.getWidth(), height: fit.getHeight() };
    else {
      // no level small enough: resample the coarsest on read
      const im = images[images.length - 1]!;
      const cap = interleaved ? Math.sqrt(budget / (bands * 4)) : maxDim;
      const s = Math.min(1, cap / Math.max(im.getWidth(), im.getHeight()), maxDim / Math.max(im.getWidth(), im.getHeight()));
      level = { image: im, width: Math.max(1, Math.round(im.getWidth() * s)), height: Math.max(1, Math.round(im.getHeight() * s)) };
    }
    const cells = level.width * level.height;
    const cacheSize = Math.max(2, Math.min(64, Math.floor(budget / 4 / Math.max(1, cells))));
    return new SliceSource(tiff, level, geo, full.getGDALNoData(), bands, interleaved, cacheSize);
  }

  /** Size of the decoded bands (the full grid, or a reduced one for very large surveys). */
  displaySize(): { width: number; height: number } {
    return { width: this.level.width, height: this.level.height };
  }

  private read(samples: number[]): Promise<Float32Array[]> {
    const { image, width, height } = this.level;
    const same = width === image.getWidth() && height === image.getHeight();
    return image
      .readRasters({ samples, interleave: false, ...(same ? {} : { width, height, resampleMethod: 'nearest' }) })
      .then((r) => (r as unknown as ArrayLike<number>[]).map((a) => (a instanceof Float32Array ? a : Float32Array.from(a))));
  }

  /** Band `sample` (0-based) as Float32. */
  band(sample: number): Promise<BandRaster> {
    const { width, height } = this.level;
    if (this.interleaved) {
      this.all ??= this.read(Array.from({ length: this.bandCount }, (_, i) => i)).then((bands) => bands.map((values) => ({ values, width, height })));
      this.all.catch(() => (this.all = undefined));
      return this.all.then((b) => {
        const r = b[sample];
        if (!r) throw new Error(`slices.tif has ${this.bandCount} bands; band ${sample + 1} asked for`);
        return r;
      });
    }
    const hit = this.cache.get(sample);
    if (hit) {
      this.cache.delete(sample);
      this.cache.set(sample, hit);
      return hit;
    }
    const p = this.read([sample]).then(([values]) => ({ values: values!, width, height }));
    this.cache.set(sample, p);
    p.catch(() => this.cache.delete(sample));
    while (this.cache.size > this.cacheSize) this.cache.delete(this.cache.keys().next().value!);
    return p;
  }

  close(): void {
    void this.tiff.close();
  }
}
