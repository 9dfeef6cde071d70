/** Reference for the viewer benchmark: mean time to decode one band of slices.tif with geotiff.js in Node. */
import { join } from 'node:path';
import { fromFile } from 'geotiff';

export async function nodeDecodeMs(dir: string, bands: number, runs = 8): Promise<number> {
  const tiff = await fromFile(join(dir, 'slices.tif'));
  const img = await tiff.getImage(0);
  await img.readRasters({ samples: [0] }); // warm-up
  const xs: number[] = [];
  for (let k = 1; k < Math.min(bands, 1 + runs); k++) {
    const t = performance.now();
    await img.readRasters({ samples: [k] });
    xs.push(performance.now() - t);
  }
  await tiff.close();
  return xs.reduce((a, b) => a + b, 0) / Math.max(1, xs.length);
}
