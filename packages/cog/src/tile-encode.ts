/** Tile data: overview halving, pixel-interleaved tiles, the floating-point predictor and DEFLATE. */
import { deflate } from 'node:zlib';
import { promisify } from 'node:util';
import type { CogSettings } from './options';

const deflateAsync = promisify(deflate);

/**
 * Halve `rows` rows of one band (a strip starting at an even row of its level): each output pixel is the
 * mean of the valid pixels of its 2x2 block, else nodata. Output is `ceil(width / 2) * ceil(rows / 2)`.
 */
export function downsampleStrip(src: Float32Array, width: number, rows: number, nodata: number, out?: Float32Array): Float32Array {
  const w = Math.ceil(width / 2);
  const h = Math.ceil(rows / 2);
  const dst = out ? out.subarray(0, w * h) : new Float32Array(w * h);
  const nanNodata = Number.isNaN(nodata);
  for (let r = 0; r < h; r++) {
    for (let c = 0; c < w; c++) {
      let sum = 0;
      let n = 0;
      for (let dr = 0; dr < 2; dr++) {
        const sr = 2 * r + dr;
        if (sr >= rows) continue;
        for (let dc = 0; dc < 2; dc++) {
          const sc = 2 * c + dc;
          if (sc >= width) continue;
          const v = src[sr * width + sc]!;
          if (nanNodata ? Number.isNaN(v) : v === nodata || Number.isNaN(v)) continue;
          sum += v;
          n++;
        }
      }
      dst[r * w + c] = n > 0 ? sum / n : nodata;
    }
  }
  return dst;
}

/**
 * One row of tiles: `strip[b]` holds `rows` (at most tileSize) rows of band b, `width` wide. Each job packs
 * its tile when it runs (pixel-interleaved, padded with nodata), applies the predictor and deflates it.
 */
export function tileJobs(strip: Float32Array[], width: number, rows: number, s: CogSettings): (() => Promise<Uint8Array>)[] {
  const { tileSize: ts, nodata, predictor, level } = s;
  const nb = strip.length;
  const jobs: (() => Promise<Uint8Array>)[] = [];
  for (let x0 = 0; x0 < width; x0 += ts) {
    jobs.push(async () => {
      const tile = new Float32Array(ts * ts * nb).fill(nodata);
      const c1 = Math.min(ts, width - x0);
      for (let r = 0; r < rows; r++) {
        for (let b = 0; b < nb; b++) {
          const src = strip[b]!;
          const base = r * width + x0;
          let o = r * ts * nb + b;
          for (let c = 0; c < c1; c++, o += nb) tile[o] = src[base + c]!;
        }
      }
      let bytes: Uint8Array = new Uint8Array(tile.buffer);
      if (predictor === 3) bytes = floatPredict(bytes, ts, ts * nb, nb);
      const z = await deflateAsync(bytes, { level });
      return new Uint8Array(z.buffer, z.byteOffset, z.length);
    });
  }
  return jobs;
}

/**
 * Runs the jobs a few at a time (enough to keep the cores busy without every uncompressed tile at once)
 * and hands each result to `consume` in job order as soon as it and those before it are done.
 */
export async function inOrder<T>(jobs: (() => Promise<T>)[], consume: (value: T, i: number) => void, n = 4): Promise<void> {
  const done = new Map<number, T>();
  let next = 0;
  let emit = 0;
  const worker = async () => {
    while (next < jobs.length) {
      const i = next++;
      done.set(i, await jobs[i]!());
      for (let v = done.get(emit); v !== undefined; v = done.get(emit)) {
        done.delete(emit);
        consume(v, emit++);
      }
    }
  };
  await Promise.all(Array.from({ length: n }, worker));
}

/**
 * TIFF floating-point predictor (Adobe Photoshop TIFF Technical Note 3, predictor 3): per row, the bytes
 * of the row's samples are split into planes, most significant byte first, then byte-wise horizontal
 * differencing with a stride of one pixel (samples per pixel). Input is little-endian Float32.
 */
function floatPredict(src: Uint8Array, rows: number, samplesPerRow: number, stride: number): Uint8Array {
  const out = new Uint8Array(src.length);
  const rowBytes = samplesPerRow * 4;
  for (let r = 0; r < rows; r++) {
    const o = r * rowBytes;
    for (let i = 0; i < samplesPerRow; i++) {
      const s = o + i * 4;
      out[o + i] = src[s + 3]!;
      out[o + samplesPerRow + i] = src[s + 2]!;
      out[o + 2 * samplesPerRow + i] = src[s + 1]!;
      out[o + 3 * samplesPerRow + i] = src[s]!;
    }
    for (let i = o + rowBytes - 1; i >= o + stride; i--) out[i] = (out[i]! - out[i - stride]!) & 0xff;
  }
  return out;
}
