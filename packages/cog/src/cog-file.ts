import { closeSync, ftruncateSync, openSync, readSync, rmSync, writeSync } from 'node:fs';
import { checkBandCount, cogHeader, cogSettings, levelSizes, putRecord } from './cog';
import type { CogOptions, CogSettings, LevelSize } from './options';
import { downsampleStrip, inOrder, tileJobs } from './tile-encode';

/** Rows of a multi-band raster, read a strip at a time (from disk, or computed). */
export interface RowSource {
  width: number;
  height: number;
  bands: number;
  /** Rows [r0, r1) of band b (0-based), row-major, (r1 - r0) * width values. May return a view valid until the next call. */
  readRows(band: number, r0: number, r1: number): Float32Array | Promise<Float32Array>;
}

/**
 * A band-sequential raw Float32 file: band b's rows at `b * width * height * 4`, read and written by rows.
 * Values are in the host's byte order (little-endian on every platform we run on, as the COG bytes assume).
 */
export class RawBands implements RowSource {
  readonly path: string;
  readonly width: number;
  readonly height: number;
  readonly bands: number;
  private readonly fd: number;
  private open = true;

  private constructor(path: string, width: number, height: number, bands: number, fd: number) {
    this.path = path;
    this.width = width;
    this.height = height;
    this.bands = bands;
    this.fd = fd;
  }

  /** Creates (or truncates) the file, every cell `fill`. @default fill 0 */
  static create(path: string, width: number, height: number, bands: number, fill = 0): RawBands {
    for (const [name, v] of [['width', width], ['height', height], ['bands', bands]] as const) {
      if (!Number.isInteger(v) || v < 0) throw new Error(`raw bands ${path}: expected a whole number ${name}, found ${v}`);
    }
    const fd = openSync(path, 'w+');
    const raw = new RawBands(path, width, height, bands, fd);
    try {
      const bytes = width * height * bands * 4;
      if (fill === 0 && !Object.is(fill, -0)) ftruncateSync(fd, bytes);
      else {
        // A few MiB at a time: the file may be far larger than memory.
        const chunk = new Float32Array(Math.min(1 << 20, width * height * bands)).fill(fill);
        const u8 = new Uint8Array(chunk.buffer);
        for (let p = 0; p < bytes; p += u8.length) writeAll(fd, u8.subarray(0, Math.min(u8.length, bytes - p)), p);
      }
    } catch (e) {
      raw.remove();
      throw e;
    }
    return raw;
  }

  /** Opens an existing file (made by `create`, e.g. in another thread) to read it. */
  static open(path: string, width: number, height: number, bands: number): RawBands {
    return new RawBands(path, width, height, bands, openSync(path, 'r'));
  }

  /** Writes `values.length / width` rows of band b from row r0. */
  writeRows(band: number, r0: number, values: Float32Array): void {
    const rows = values.length / this.width;
    this.check(band, r0, r0 + rows);
    if (!Number.isInteger(rows)) throw new Error(`raw bands ${this.path}: expected whole rows of ${this.width} values, found ${values.length} values`);
    writeAll(this.fd, new Uint8Array(values.buffer, values.byteOffset, values.byteLength), this.offset(band, r0));
  }

  /** Rows [r0, r1) of band b, into `out` when given (a view of its start is returned). */
  readRows(band: number, r0: number, r1: number, out?: Float32Array): Float32Array {
    this.check(band, r0, r1);
    const n = (r1 - r0) * this.width;
    if (out && out.length < n) throw new Error(`raw bands ${this.path}: expected room for ${n} values, found ${out.length}`);
    const dst = out ? out.subarray(0, n) : new Float32Array(n);
    readAll(this.fd, new Uint8Array(dst.buffer, dst.byteOffset, dst.byteLength), this.offset(band, r0), this.path);
    return dst;
  }

  /** Closes the file and leaves it in place (safe to call twice). */
  close(): void {
    if (this.open) {
      this.open = false;
      closeSync(this.fd);
    }
  }

  /** Closes and deletes the file (safe to call twice). */
  remove(): void {
    this.close();
    rmSync(this.path, { force: true });
  }

  private offset(band: number, r0: number): number {
    return (band * this.height + r0) * this.width * 4;
  }

  private check(band: number, r0: number, r1: number): void {
    if (!this.open) throw new Error(`raw bands ${this.path}: the file was removed`);
    if (!Number.isInteger(band) || band < 0 || band >= this.bands) throw new Error(`raw bands ${this.path}: expected a band in [0, ${this.bands}), found ${band}`);
    if (!(r0 >= 0 && r0 <= r1 && r1 <= this.height)) throw new Error(`raw bands ${this.path}: expected rows within [0, ${this.height}], found [${r0}, ${r1})`);
  }
}

/**
 * Same file, byte for byte, as `encodeCog` of the same bands and options, written to `path`; returns its
 * size. Holds one tile row of the level being encoded (tileSize x width x bands) and small tables: each
 * level's next overview goes to a raw file beside `path`, its compressed tiles (as records with leader and
 * trailer) to another, and the final file is the header followed by those copied, smallest overview first.
 * The temporary files are removed afterwards, also on error (and then `path` too).
 */
export async function encodeCogFile(source: RowSource, options: CogOptions, path: string): Promise<number> {
  const fn = 'encodeCogFile';
  checkBandCount(source.bands, fn);
  const s = cogSettings(options, fn);
  const sizes = levelSizes(source.width, source.height, s.tileSize, options);
  const raws: RawBands[] = [];
  const tilePaths: string[] = [];
  let out: number | undefined;
  try {
    const tileBytes: number[][] = [];
    let src: RowSource = source;
    for (const [li, size] of sizes.entries()) {
      const below = sizes[li + 1];
      const next = below && RawBands.create(`${path}.ovr${li + 1}.tmp`, below.width, below.height, source.bands);
      if (next) raws.push(next);
      tilePaths.push(`${path}.tiles${li}.tmp`);
      tileBytes.push(await encodeLevelFile(src, size, s, tilePaths[li]!, next, fn));
      if (src !== source && src instanceof RawBands) src.remove();
      if (next) src = next;
    }
    const { header, total } = cogHeader(sizes, tileBytes, source.bands, s, options, fn);
    out = openSync(path, 'w');
    writeAll(out, header, 0);
    let pos = header.length;
    const buf = new Uint8Array(4 << 20);
    for (let li = sizes.length - 1; li >= 0; li--) pos = copyInto(out, pos, tilePaths[li]!, buf);
    if (pos !== total) throw new Error(`${fn}: wrote ${pos} bytes, expected ${total}`);
    closeSync(out);
    out = undefined;
    return total;
  } catch (e) {
    if (out !== undefined) {
      closeSync(out);
      rmSync(path, { force: true });
    }
    throw e;
  } finally {
    for (const r of raws) r.remove();
    for (const p of tilePaths) rmSync(p, { force: true });
  }
}

/** Compresses one level a tile row at a time into `tilesPath`; halves each strip into `next`. Returns the tile sizes. */
async function encodeLevelFile(src: RowSource, size: LevelSize, s: CogSettings, tilesPath: string, next: RawBands | undefined, fn: string): Promise<number[]> {
  const { width: w, height: h } = size;
  const ts = s.tileSize;
  const strip = Array.from({ length: src.bands }, () => new Float32Array(ts * w));
  const half = next ? new Float32Array((ts / 2) * next.width) : undefined;
  const sizes: number[] = [];
  const fd = openSync(tilesPath, 'w');
  try {
    let pos = 0;
    for (let r0 = 0; r0 < h; r0 += ts) {
      const r1 = Math.min(h, r0 + ts);
      const n = (r1 - r0) * w;
      const rows: Float32Array[] = [];
      for (const [b, buf] of strip.entries()) {
        const v = await src.readRows(b, r0, r1);
        if (v.length !== n) throw new Error(`${fn}: readRows(${b}, ${r0}, ${r1}) gave ${v.length} values, expected ${n}`);
        buf.set(v);
        rows.push(buf.subarray(0, n));
      }
      await inOrder(tileJobs(rows, w, r1 - r0, s), (t) => {
        const rec = new Uint8Array(t.length + 8);
        putRecord(rec, 0, t);
        writeAll(fd, rec, pos);
        pos += rec.length;
        sizes.push(t.length);
      });
      if (next && half) for (const [b, v] of rows.entries()) next.writeRows(b, r0 / 2, downsampleStrip(v, w, r1 - r0, s.nodata, half));
    }
  } finally {
    closeSync(fd);
  }
  return sizes;
}

/** Appends the file at `path` to `fd` from `pos` through `buf` (a stream copy); returns the new end. */
function copyInto(fd: number, pos: number, path: string, buf: Uint8Array): number {
  const from = openSync(path, 'r');
  try {
    for (;;) {
      const n = readSync(from, buf, 0, buf.length, null);
      if (n === 0) return pos;
      writeAll(fd, buf.subarray(0, n), pos);
      pos += n;
    }
  } finally {
    closeSync(from);
  }
}

// One call moves at most 1 GiB (Node refuses lengths above 2 GiB).
const MAX_IO = 1 << 30;

function writeAll(fd: number, bytes: Uint8Array, position: number): void {
  let done = 0;
  while (done < bytes.length) done += writeSync(fd, bytes, done, Math.min(MAX_IO, bytes.length - done), position + done);
}

function readAll(fd: number, bytes: Uint8Array, position: number, path: string): void {
  let done = 0;
  while (done < bytes.length) {
    const r = readSync(fd, bytes, done, Math.min(MAX_IO, bytes.length - done), position + done);
    if (r === 0) throw new Error(`raw bands ${path}: file ends at byte ${position + done}, expected ${bytes.length - done} more`);
    done += r;
  }
}
