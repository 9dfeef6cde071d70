/**
 * Reference for the viewer benchmark: geotiff.js in Node decoding what the viewer decodes for its first
 * slice (same level choice as SliceSource: band 0 of a band-separate file, or every band of the
 * finest level whose stack fits 256 MB for a pixel-interleaved one), without drawing.
 */
import { join } from 'node:path';
import { fromFile, type GeoTIFFImage } from 'geotiff';

export async function nodeFirstSliceMs(dir: string, runs = 2, maxDim = 2048, budget = 256 * 2 ** 20): Promise<{ ms: number; what: string }> {
  const xs: number[] = [];
  let what = '';
  for (let k = 0; k <= runs; k++) {
    const tiff = await fromFile(join(dir, 'slices.tif'));
    const n = await tiff.getImageCount();
    const images: GeoTIFFImage[] = [];
    for (let i = 0; i < n; i++) images.push(await tiff.getImage(i));
    const full = images[0]!;
    const bands = full.getSamplesPerPixel();
    const interleaved = bands > 1 && full.planarConfiguration === 1;
    const im = images.find((x) => Math.max(x.getWidth(), x.getHeight()) <= maxDim && (!interleaved || x.getWidth() * x.getHeight() * bands * 4 <= budget)) ?? images[images.length - 1]!;
    const samples = interleaved ? Array.from({ length: bands }, (_, i) => i) : [0];
    const t = performance.now();
    await im.readRasters({ samples, interleave: false });
    if (k > 0) xs.push(performance.now() - t); // first run is the warm-up
    what = `${im.getWidth()} x ${im.getHeight()} x ${samples.length} band(s)${interleaved ? ' (pixel-interleaved file)' : ''}`;
    await tiff.close();
  }
  return { ms: xs.reduce((a, b) => a + b, 0) / xs.length, what };
}
