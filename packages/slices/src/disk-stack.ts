import { encodeCogFile, RawBands, type RowSource } from '@lamina/cog';
import { checkNodata, slicesCogOptions, slicesJsonOf, writeSlicesFiles, type SliceDepth, type SlicesJson, type WriteSlicesOptions } from './io';
import type { GriddingInfo, SliceGrid } from './stack';
import { sliceStats, type SliceStats } from './stats';

/**
 * A slice stack on disk, so that memory does not grow with the site's area: a band-sequential raw Float32
 * file (slice k's rows at `k * width * height * 4`), filled in row bands as the grid is made and written
 * out by `writeSlicesFromDisk`.
 */
export class DiskStack {
  readonly path: string;
  readonly grid: SliceGrid;
  readonly slices: SliceDepth[];
  private readonly raw: RawBands;

  private constructor(raw: RawBands, grid: SliceGrid, slices: SliceDepth[]) {
    this.raw = raw;
    this.path = raw.path;
    this.grid = grid;
    this.slices = slices;
  }

  /** Creates (or truncates) a band-sequential raw Float32 LE file: slice k's rows at k*width*height*4. Filled with grid.nodata. */
  static create(path: string, grid: SliceGrid, slices: SliceDepth[]): DiskStack {
    return new DiskStack(RawBands.create(path, grid.width, grid.height, slices.length, grid.nodata), grid, slices);
  }

  /** Opens a stack `create` made (e.g. in another thread), to read it. */
  static open(path: string, grid: SliceGrid, slices: SliceDepth[]): DiskStack {
    return new DiskStack(RawBands.open(path, grid.width, grid.height, slices.length), grid, slices);
  }

  /** Writes rows [r0, r0 + rows) of every slice: values[k] holds rows*width values of slice k (sync, positional). */
  writeRows(r0: number, values: Float32Array[]): void {
    if (values.length !== this.slices.length) throw new Error(`disk stack ${this.path}: expected rows of ${this.slices.length} slices, found ${values.length}`);
    const n = values[0]?.length ?? 0;
    for (const [k, v] of values.entries()) {
      if (v.length !== n) throw new Error(`disk stack ${this.path}: slice ${k} has ${v.length} values, expected ${n} as slice 0`);
      this.raw.writeRows(k, r0, v);
    }
  }

  /** Rows [r0, r1) of slice k. */
  readRows(k: number, r0: number, r1: number, out?: Float32Array): Float32Array {
    return this.raw.readRows(k, r0, r1, out);
  }

  /** Closes the file and leaves it in place. */
  close(): void {
    this.raw.close();
  }

  /** Deletes the file. */
  remove(): void {
    this.raw.remove();
  }
}

/**
 * slices.tif and slices.json from a DiskStack: the same bytes as `writeSlices` of the same stack. Holds one
 * slice (and its scratch) for the statistics, then one tile row of slices.tif while it is encoded.
 */
export async function writeSlicesFromDisk(disk: DiskStack, outDir: string, gridding: GriddingInfo | undefined, options: WriteSlicesOptions = {}): Promise<SlicesJson> {
  const g = disk.grid;
  checkNodata(g);
  const stats = statsOf(disk);
  const json = slicesJsonOf(g, disk.slices, stats, gridding);
  const cog = slicesCogOptions(g, disk.slices, gridding, options, stats);
  return writeSlicesFiles(outDir, json, (tmp) => encodeCogFile(rowsOf(disk), cog, tmp));
}

function statsOf(disk: DiskStack): SliceStats[] {
  const { width, height, nodata } = disk.grid;
  const values = new Float32Array(width * height);
  const scratch = new Float32Array(width * height);
  return disk.slices.map((_, k) => sliceStats(disk.readRows(k, 0, height, values), nodata, scratch));
}

/** The stack as a RowSource reading through one buffer (reused: a view valid until the next call). */
function rowsOf(disk: DiskStack): RowSource {
  const { width, height } = disk.grid;
  let buf = new Float32Array(0);
  return {
    width,
    height,
    bands: disk.slices.length,
    readRows(k, r0, r1) {
      if (buf.length < (r1 - r0) * width) buf = new Float32Array((r1 - r0) * width);
      return disk.readRows(k, r0, r1, buf);
    },
  };
}
