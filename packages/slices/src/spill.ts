import { closeSync, mkdirSync, mkdtempSync, openSync, readSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/**
 * Per-trace points spilled to disk as lines stream in, so that memory does not grow with the number of
 * lines: positions (two doubles) in one file, `nValues` floats per trace in another, in the order the
 * lines were added. Only the first trace of each line stays in memory. Gridding reads the files back in
 * row bands (see `gridSpill`).
 */
export class PointSpill {
  readonly nValues: number;
  /** The spill's own folder (removed by `remove`). */
  readonly dir: string;
  private readonly coordsFd: number;
  private readonly valuesFd: number;
  private readonly starts: number[] = [0];
  private n = 0;
  private closed = false;
  private nan = false;

  /** @param parent folder to make the spill's own folder in. @default os.tmpdir() */
  constructor(nValues: number, parent: string = tmpdir()) {
    if (!(nValues >= 1) || !Number.isInteger(nValues)) throw new Error(`expected a whole number of values per point, found ${nValues}`);
    this.nValues = nValues;
    mkdirSync(parent, { recursive: true });
    this.dir = mkdtempSync(join(parent, 'lamina-points-'));
    this.coordsFd = openSync(join(this.dir, 'coords.f64'), 'w+');
    this.valuesFd = openSync(join(this.dir, 'values.f32'), 'w+');
  }

  get traceCount(): number {
    return this.n;
  }

  get lineCount(): number {
    return this.starts.length - 1;
  }

  /** True if any value added is NaN. */
  get hasNaN(): boolean {
    return this.nan;
  }

  /** The first trace of each line, and the total at the end. */
  lineStarts(): Int32Array {
    return Int32Array.from(this.starts);
  }

  /** Appends one line: positions and trace-major values (`x.length * nValues`). */
  addLine(x: ArrayLike<number>, y: ArrayLike<number>, values: Float32Array): void {
    if (this.closed) throw new Error('the point spill was removed');
    const m = x.length;
    if (y.length !== m) throw new Error(`expected ${m} y positions, found ${y.length}`);
    if (values.length !== m * this.nValues) throw new Error(`expected ${m * this.nValues} values (${m} traces x ${this.nValues}), found ${values.length}`);
    if (!this.nan) for (let i = 0; i < values.length; i++) if (values[i] !== values[i]) this.nan = true;
    const c = new Float64Array(2 * m);
    for (let t = 0; t < m; t++) {
      c[2 * t] = x[t]!;
      c[2 * t + 1] = y[t]!;
    }
    writeAll(this.coordsFd, new Uint8Array(c.buffer), this.n * 16);
    writeAll(this.valuesFd, new Uint8Array(values.buffer, values.byteOffset, values.byteLength), this.n * this.nValues * 4);
    this.n += m;
    this.starts.push(this.n);
  }

  /** Positions of traces [a, b) as `[x0, y0, ...]`. */
  readCoords(a: number, b: number, out = new Float64Array(2 * (b - a))): Float64Array {
    readAll(this.coordsFd, new Uint8Array(out.buffer, out.byteOffset, 16 * (b - a)), a * 16);
    return out.subarray(0, 2 * (b - a));
  }

  /** Values of traces [a, b), trace-major. */
  readValues(a: number, b: number, out = new Float32Array(this.nValues * (b - a))): Float32Array {
    readAll(this.valuesFd, new Uint8Array(out.buffer, out.byteOffset, 4 * this.nValues * (b - a)), a * this.nValues * 4);
    return out.subarray(0, this.nValues * (b - a));
  }

  /** Calls `fn` for consecutive chunks of at most `chunk` traces, in order: (first trace, positions, values). */
  forEachChunk(fn: (first: number, coords: Float64Array, values: Float32Array | undefined) => void, options: { chunk?: number; values?: boolean } = {}): void {
    const chunk = Math.max(1, options.chunk ?? 65536);
    const cBuf = new Float64Array(2 * Math.min(chunk, Math.max(1, this.n)));
    const vBuf = options.values ? new Float32Array(this.nValues * Math.min(chunk, Math.max(1, this.n))) : undefined;
    for (let a = 0; a < this.n; a += chunk) {
      const b = Math.min(this.n, a + chunk);
      fn(a, this.readCoords(a, b, cBuf), vBuf ? this.readValues(a, b, vBuf) : undefined);
    }
  }

  /** Closes and deletes the files (safe to call twice). */
  remove(): void {
    if (this.closed) return;
    this.closed = true;
    closeSync(this.coordsFd);
    closeSync(this.valuesFd);
    rmSync(this.dir, { recursive: true, force: true });
  }
}

function writeAll(fd: number, bytes: Uint8Array, position: number): void {
  let done = 0;
  while (done < bytes.length) done += writeSync(fd, bytes, done, bytes.length - done, position + done);
}

function readAll(fd: number, bytes: Uint8Array, position: number): void {
  let done = 0;
  while (done < bytes.length) {
    const r = readSync(fd, bytes, done, bytes.length - done, position + done);
    if (r === 0) throw new Error(`point spill: file ends at byte ${position + done}, expected ${bytes.length - done} more`);
    done += r;
  }
}
