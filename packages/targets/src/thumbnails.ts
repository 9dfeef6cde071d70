import { access } from 'node:fs/promises';
import { join } from 'node:path';
import { fromFile } from 'geotiff';
import { useNodeInflate } from '@lamina/cog';
import { InputError } from '@lamina/errors';
import type { SlicesInfo } from './folder';
import { encodePng, pngDataUri } from './png';

export interface Thumbnail {
  band: number;
  topM: number;
  bottomM: number;
  width: number;
  height: number;
  /** PNG data URI: grey levels from the slice's p2 (black) to p98 (white), nodata transparent. */
  dataUri: string;
}

/** Long side of the thumbnails, pixels (report.html's). */
export const THUMBNAIL_SIZE = 240;

/**
 * Band previews of slices.tif, box-averaged down to at most `maxSize` pixels on the long side.
 * @param options.maxSize @default 240
 */
export async function sliceThumbnails(outDir: string, info: SlicesInfo, options: { maxSize?: number } = {}): Promise<Thumbnail[]> {
  const maxSize = options.maxSize ?? THUMBNAIL_SIZE;
  const file = join(outDir, info.file);
  try {
    await access(file);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw e;
  }
  // Read from the file as needed (headers and the overview's tiles), not the whole stack into memory.
  // A damaged file makes the decoder throw plain errors ("buffer error" from inflate): name the file.
  const damaged = (e: unknown): never => {
    if (e instanceof InputError) throw e;
    throw new InputError(file, `expected the GeoTIFF slices.json describes, found one that cannot be decoded (${e instanceof Error ? e.message : String(e)})`);
  };
  useNodeInflate();
  const tiff = await fromFile(file).catch(damaged);
  let image: Awaited<ReturnType<typeof tiff.getImage>>;
  let bands: ArrayLike<number>[];
  try {
    const full = await tiff.getImage(0);
    if (full.getWidth() !== info.width || full.getHeight() !== info.height) {
      throw new InputError(file, `expected ${info.width} x ${info.height} cells (slices.json), found ${full.getWidth()} x ${full.getHeight()}`);
    }
    // The smallest overview (a COG carries them) still at least maxSize on its long side: far less to decode.
    image = full;
    for (let i = 1, n = await tiff.getImageCount(); i < n; i++) {
      const o = await tiff.getImage(i);
      if (Math.max(o.getWidth(), o.getHeight()) >= Math.min(maxSize, Math.max(info.width, info.height))) image = o;
    }
    bands = (await image.readRasters({ interleave: false })) as unknown as ArrayLike<number>[];
  } catch (e) {
    damaged(e);
    throw e;
  } finally {
    await tiff.close();
  }
  const w = image.getWidth();
  const h = image.getHeight();
  const step = Math.max(1, Math.ceil(Math.max(w, h) / maxSize));
  const tw = Math.ceil(w / step);
  const th = Math.ceil(h / step);
  const nodata = info.nodata;
  return info.slices.map((s, k) => {
    const values = bands[s.band - 1];
    if (!values) throw new InputError(file, `expected band ${s.band}, found ${bands.length} bands`, { field: `slices[${k}].band` });
    const valid = (v: number) => Number.isFinite(v) && v !== nodata;
    let lo = s.stats?.p2;
    let hi = s.stats?.p98;
    if (lo == null || hi == null) {
      lo = Infinity;
      hi = -Infinity;
      for (let i = 0; i < values.length; i++) {
        const v = values[i]!;
        if (valid(v)) {
          lo = Math.min(lo, v);
          hi = Math.max(hi, v);
        }
      }
    }
    const span = hi > lo ? hi - lo : 1;
    const px = new Uint8Array(tw * th * 2);
    for (let ty = 0; ty < th; ty++) {
      for (let tx = 0; tx < tw; tx++) {
        let sum = 0, n = 0;
        for (let y = ty * step; y < Math.min(h, (ty + 1) * step); y++) {
          for (let x = tx * step; x < Math.min(w, (tx + 1) * step); x++) {
            const v = values[y * w + x]!;
            if (valid(v)) {
              sum += v;
              n++;
            }
          }
        }
        const o = (ty * tw + tx) * 2;
        if (n === 0) continue; // transparent
        px[o] = Math.round(255 * Math.min(1, Math.max(0, (sum / n - lo) / span)));
        px[o + 1] = 255;
      }
    }
    return { band: s.band, topM: s.topM, bottomM: s.bottomM, width: tw, height: th, dataUri: pngDataUri(encodePng(tw, th, px, 2)) };
  });
}
