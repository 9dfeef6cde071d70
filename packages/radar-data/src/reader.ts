/**
 * Streaming SEG-Y rev 1 / rev 2.0 reader. The file stays on disk: headers are read at open (headers.ts),
 * traces by positional reads of at most `BLOCK_BYTES` at a time into one reused scratch buffer.
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';
import { open, type FileHandle } from 'node:fs/promises';
import { endianness } from 'node:os';
import { InputError } from '@lamina/errors';
import { SAMPLE_FORMATS, type SampleFormat } from './formats';
import { ibmToNumber, ibmWordsToFloat32 } from './ibm';
import { TRACE, TRACE_HEADER_BYTES, applyScalar, type SegyBinaryHeader } from './layout';
import type { TextEncoding } from './text';
import { mixedLength, parseHeaders, type DtSource, type ParsedHeaders, type SegyInfo, type SegyOpenOptions } from './headers';

const HOST_LE = endianness() === 'LE';

/** Positional reads never exceed this (or one trace, if larger). */
export const BLOCK_BYTES = 8 << 20;

/** Per-trace header values for a range of traces; coordinates with their scalar applied. */
export interface SegyTraceHeaders {
  /** Bytes 1-4: trace sequence number within line. */
  sequence: Int32Array;
  /** Bytes 5-8: trace sequence number within file. */
  sequenceInFile: Int32Array;
  /** Bytes 73-76, 77-80. */
  sourceX: Float64Array;
  sourceY: Float64Array;
  /** Bytes 81-84, 85-88. */
  groupX: Float64Array;
  groupY: Float64Array;
  /** Bytes 181-184, 185-188. */
  cdpX: Float64Array;
  cdpY: Float64Array;
  /** Bytes 45-48 (surface elevation at source) with the elevation scalar (69-70) applied. */
  elevation: Float64Array;
  /** Bytes 71-72 as stored. */
  coordScalar: Int16Array;
  /** Bytes 89-90: 1 length (metres or feet), 2 seconds of arc, 3 decimal degrees, 4 DMS; 0 unset. */
  coordUnits: Int16Array;
  /** Bytes 115-116 (0 when the writer left it unset). */
  nSamples: Int32Array;
}

export interface SegyChunk {
  first: number;
  count: number;
  /** `count * nSamples` samples, trace-major. */
  data: Float32Array;
  headers: SegyTraceHeaders;
}

export function emptyTraceHeaders(count: number): SegyTraceHeaders {
  return {
    sequence: new Int32Array(count),
    sequenceInFile: new Int32Array(count),
    sourceX: new Float64Array(count),
    sourceY: new Float64Array(count),
    groupX: new Float64Array(count),
    groupY: new Float64Array(count),
    cdpX: new Float64Array(count),
    cdpY: new Float64Array(count),
    elevation: new Float64Array(count),
    coordScalar: new Int16Array(count),
    coordUnits: new Int16Array(count),
    nSamples: new Int32Array(count),
  };
}

export class SegyReader implements SegyInfo {
  readonly path: string;
  readonly name: string;
  readonly revision: { major: number; minor: number };
  readonly format: SampleFormat;
  readonly formatName: string;
  readonly littleEndian: boolean;
  readonly textEncoding: TextEncoding;
  /** The 3200-byte textual header decoded (3200 characters; `textLines` splits it). */
  readonly textHeader: string;
  readonly extendedTextHeaders: string[];
  readonly binary: SegyBinaryHeader;
  readonly nSamples: number;
  readonly nTraces: number;
  readonly dtNs: number;
  readonly dtSource: DtSource;
  readonly fileSize: number;
  readonly traceBytes: number;
  readonly dataOffset: number;
  readonly additionalTraceHeaders: number;
  #fh: FileHandle | null;
  #scratch: Uint8Array | null = null;

  /** Use `openSegy`. */
  constructor(fh: FileHandle, path: string, h: ParsedHeaders) {
    this.#fh = fh;
    this.path = path;
    this.name = h.name;
    this.revision = h.revision;
    this.format = h.format;
    this.formatName = SAMPLE_FORMATS[h.format].name;
    this.littleEndian = h.littleEndian;
    this.textEncoding = h.textEncoding;
    this.textHeader = h.textHeader;
    this.extendedTextHeaders = h.extendedTextHeaders;
    this.binary = h.binary;
    this.nSamples = h.nSamples;
    this.nTraces = h.nTraces;
    this.dtNs = h.dtNs;
    this.dtSource = h.dtSource;
    this.fileSize = h.fileSize;
    this.traceBytes = h.traceBytes;
    this.dataOffset = h.dataOffset;
    this.additionalTraceHeaders = h.additionalTraceHeaders;
  }

  /** The header facts as plain data. */
  info(): SegyInfo {
    const { path, name, revision, format, formatName, littleEndian, textEncoding, nSamples, nTraces } = this;
    const { dtNs, dtSource, fileSize, traceBytes, dataOffset, additionalTraceHeaders } = this;
    return {
      path, name, revision: { ...revision }, format, formatName, littleEndian, textEncoding, nSamples,
      nTraces, dtNs, dtSource, fileSize, traceBytes, dataOffset, additionalTraceHeaders,
    };
  }

  /**
   * Samples of traces `first .. first+count-1` as float32, trace-major, into `out` (length at least
   * `count * nSamples`) or a new array. Integer formats convert exactly up to 2^24 in magnitude.
   * Throws InputError for NaN/Inf samples and for a trace whose own sample count disagrees.
   */
  async readTraces(first: number, count: number, out?: Float32Array): Promise<Float32Array> {
    this.#checkRange(first, count);
    const need = count * this.nSamples;
    if (out && out.length < need) throw new RangeError(`out holds ${out.length} samples, need ${need}`);
    const data = out ?? new Float32Array(need);
    await this.#read(first, count, data, null);
    return data;
  }

  /** Trace header values of traces `first .. first+count-1`. */
  async readTraceHeaders(first: number, count: number): Promise<SegyTraceHeaders> {
    this.#checkRange(first, count);
    const headers = emptyTraceHeaders(count);
    await this.#read(first, count, null, headers);
    return headers;
  }

  /** Samples and headers together, one pass over the bytes. */
  async readChunk(first: number, count: number): Promise<SegyChunk> {
    this.#checkRange(first, count);
    const data = new Float32Array(count * this.nSamples);
    const headers = emptyTraceHeaders(count);
    await this.#read(first, count, data, headers);
    return { first, count, data, headers };
  }

  /**
   * Every trace in order, `tracesPerChunk` at a time (the last chunk may be shorter); each chunk has its
   * own arrays; the next chunk is read while the caller holds the current one.
   * @default tracesPerChunk: as many as fit in `BLOCK_BYTES` of file, at least 1
   */
  async *chunks(tracesPerChunk?: number): AsyncGenerator<SegyChunk> {
    const per = tracesPerChunk ?? Math.max(1, Math.floor(BLOCK_BYTES / this.traceBytes));
    if (!Number.isInteger(per) || per < 1) throw new RangeError(`tracesPerChunk must be a positive integer, got ${per}`);
    const next = (first: number): Promise<SegyChunk> | null => {
      if (first >= this.nTraces) return null;
      const p = this.readChunk(first, Math.min(per, this.nTraces - first));
      p.catch(() => {}); // surfaced when awaited below
      return p;
    };
    // One chunk read ahead, so the disk works while the caller processes the current one.
    let pending = next(0);
    try {
      for (let first = 0; pending; first += per) {
        const current = await pending;
        pending = next(first + per);
        yield current;
      }
    } finally {
      if (pending) await pending.catch(() => {});
    }
  }

  async close(): Promise<void> {
    const fh = this.#fh;
    this.#fh = null;
    this.#scratch = null;
    if (fh) await fh.close();
  }

  async [Symbol.asyncDispose](): Promise<void> {
    await this.close();
  }

  #checkRange(first: number, count: number): void {
    if (!Number.isInteger(first) || !Number.isInteger(count) || first < 0 || count < 0 || first + count > this.nTraces) {
      throw new RangeError(`traces ${first}..${first + count - 1} requested, the file has 0..${this.nTraces - 1}`);
    }
  }

  #buffer(bytes: number): Uint8Array {
    // A fresh ArrayBuffer keeps typed views aligned (Buffer's pool would not).
    if (!this.#scratch || this.#scratch.length < bytes) this.#scratch = new Uint8Array(bytes);
    return this.#scratch;
  }

  async #read(first: number, count: number, data: Float32Array | null, headers: SegyTraceHeaders | null): Promise<void> {
    const fh = this.#fh;
    if (!fh) throw new Error(`${this.name}: reader is closed`);
    const tb = this.traceBytes;
    const headerOnly = data === null && tb > 4 * TRACE_HEADER_BYTES * 16;
    const per = headerOnly ? 1 : Math.max(1, Math.floor(BLOCK_BYTES / tb));
    const readBytes = headerOnly ? TRACE_HEADER_BYTES : tb;
    for (let done = 0; done < count; ) {
      const n = Math.min(per, count - done);
      const t0 = first + done;
      // Calls may overlap (several awaits on one reader): only one uses the shared scratch.
      const buf = this.#buffer(headerOnly ? readBytes : n * tb);
      const shared = buf === this.#scratch;
      if (shared) this.#scratch = null;
      try {
        await this.#readFully(fh, buf, headerOnly ? readBytes : n * tb, this.dataOffset + t0 * tb);
        this.#decodeHeaders(buf, n, headerOnly ? readBytes : tb, t0, headers, done);
        if (data) this.#decodeSamples(buf, n, t0, data, done * this.nSamples);
      } finally {
        if (shared && this.#fh) this.#scratch = buf;
      }
      done += n;
    }
  }

  async #readFully(fh: FileHandle, buf: Uint8Array, length: number, position: number): Promise<void> {
    let got = 0;
    while (got < length) {
      const { bytesRead } = await fh.read(buf, got, length - got, position + got);
      if (bytesRead === 0) {
        throw new InputError(this.name, `expected ${this.fileSize} bytes as at open, found the file ending at byte ${position + got} (changed while reading?)`, { offset: position + got });
      }
      got += bytesRead;
    }
  }

  #decodeHeaders(buf: Uint8Array, n: number, stride: number, t0: number, h: SegyTraceHeaders | null, at: number): void {
    const view = new DataView(buf.buffer, buf.byteOffset, buf.length);
    const le = this.littleEndian;
    const ns = this.nSamples;
    for (let t = 0; t < n; t++) {
      const b = t * stride;
      const own = view.getUint16(b + TRACE.nSamples, le);
      if (own !== 0 && ns <= 0xffff && own !== ns) throw mixedLength(this.name, t0 + t, this.nTraces, this.dataOffset + (t0 + t) * this.traceBytes, ns, own);
      if (!h) continue;
      const i = at + t;
      const scalar = view.getInt16(b + TRACE.coordScalar, le);
      const elevScalar = view.getInt16(b + TRACE.elevationScalar, le);
      h.sequence[i] = view.getInt32(b + TRACE.sequence, le);
      h.sequenceInFile[i] = view.getInt32(b + TRACE.sequenceInFile, le);
      h.sourceX[i] = applyScalar(view.getInt32(b + TRACE.sourceX, le), scalar);
      h.sourceY[i] = applyScalar(view.getInt32(b + TRACE.sourceY, le), scalar);
      h.groupX[i] = applyScalar(view.getInt32(b + TRACE.groupX, le), scalar);
      h.groupY[i] = applyScalar(view.getInt32(b + TRACE.groupY, le), scalar);
      h.cdpX[i] = applyScalar(view.getInt32(b + TRACE.cdpX, le), scalar);
      h.cdpY[i] = applyScalar(view.getInt32(b + TRACE.cdpY, le), scalar);
      h.elevation[i] = applyScalar(view.getInt32(b + TRACE.sourceElevation, le), elevScalar);
      h.coordScalar[i] = scalar;
      h.coordUnits[i] = view.getInt16(b + TRACE.coordUnits, le);
      h.nSamples[i] = own;
    }
  }

  #decodeSamples(buf: Uint8Array, n: number, t0: number, out: Float32Array, outAt: number): void {
    const { format, nSamples: ns, traceBytes: tb } = this;
    const bps = SAMPLE_FORMATS[format].bytes;
    const ab = buf.buffer;
    const base = buf.byteOffset;
    if (bps > 1 && this.littleEndian !== HOST_LE) {
      const view = Buffer.from(ab, base, n * tb);
      if (bps === 4) view.swap32();
      else view.swap16();
    }
    const skip = tb - ns * bps;
    for (let t = 0; t < n; t++) {
      const so = base + t * tb + skip;
      const o = outAt + t * ns;
      switch (format) {
        case 5:
          out.set(new Float32Array(ab, so, ns), o);
          break;
        case 1:
          ibmWordsToFloat32(new Uint32Array(ab, so, ns), out, o);
          break;
        case 2:
          out.set(new Int32Array(ab, so, ns), o);
          break;
        case 3:
          out.set(new Int16Array(ab, so, ns), o);
          break;
        case 8:
          out.set(new Int8Array(ab, so, ns), o);
          break;
      }
    }
    if (format === 5 || format === 1) {
      const i = firstNonFinite(out, outAt, outAt + n * ns);
      if (i >= 0) {
        const t = Math.floor((i - outAt) / ns);
        const s = i - outAt - t * ns;
        const trace = t0 + t;
        const found = format === 1
          ? `${ibmToNumber(new Uint32Array(ab, base + t * tb + skip + s * 4, 1)[0]!)} (an IBM float beyond the float32 range)`
          : String(out[i]);
        throw new InputError(this.name, `expected a finite sample value, found ${found}`, {
          field: `trace ${trace + 1} of ${this.nTraces}, sample ${s + 1} of ${ns}`,
          offset: this.dataOffset + trace * tb + skip + s * bps,
        });
      }
    }
  }
}

/** Index of the first NaN or +-Infinity in a[from..to), or -1. Kept small so it optimises well. */
function firstNonFinite(a: Float32Array, from: number, to: number): number {
  for (let i = from; i < to; i++) {
    const v = a[i]!;
    if (v - v !== 0) return i;
  }
  return -1;
}

/**
 * Open a SEG-Y file and check its headers against its size. Throws InputError (naming the file and the
 * header field or byte offset) for anything Lamina cannot read; the handle is closed on error.
 */
export async function openSegy(path: string, options: SegyOpenOptions = {}): Promise<SegyReader> {
  const name = options.name ?? path;
  let fh: FileHandle;
  try {
    fh = options.syncIo ? syncHandle(openSync(path, 'r')) : await open(path, 'r');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code ?? String(e);
    throw new InputError(name, `expected a readable SEG-Y file, found ${code === 'ENOENT' ? 'no such file' : code}`);
  }
  try {
    const stat = await fh.stat();
    if (!stat.isFile()) throw new InputError(name, 'expected a SEG-Y file, found a directory or device');
    const headers = await parseHeaders(fh, stat.size, name, options);
    return new SegyReader(fh, path, headers);
  } catch (e) {
    await fh.close();
    throw e;
  }
}

/** The calls of a FileHandle the reader makes (read, stat, close), made synchronously on a descriptor (`syncIo`). */
function syncHandle(fd: number): FileHandle {
  const handle: Pick<FileHandle, 'read' | 'stat' | 'close'> = {
    read: (async (buffer: Uint8Array, offset: number, length: number, position: number) => ({ bytesRead: readSync(fd, buffer, offset, length, position), buffer })) as FileHandle['read'],
    stat: (async () => fstatSync(fd)) as FileHandle['stat'],
    close: async () => closeSync(fd),
  };
  return handle as FileHandle;
}
