/**
 * Streaming SEG-Y rev 1 / rev 2.0 writer. Traces go to disk chunk by chunk; the file is written under a
 * temporary name beside the target and renamed into place on `close()`, so a failed run leaves nothing.
 */
import { open, rename, unlink, type FileHandle } from 'node:fs/promises';
import { endianness } from 'node:os';
import { basename, dirname, join } from 'node:path';
import { SAMPLE_FORMATS, isSampleFormat, type SampleFormat } from './formats';
import { float32ToIbmWords } from './ibm';
import {
  BYTE_ORDER_BIG,
  EXTENDED_TEXT_BYTES,
  FILE_HEADER_BYTES,
  TRACE,
  TRACE_HEADER_BYTES,
  emptyBinaryHeader,
  encodeBinaryHeader,
  FIELD_BYTE,
  type SegyBinaryHeader,
} from './layout';
import { TEXT_HEADER_BYTES, cardImages, encodeText, type TextEncoding } from './text';

const HOST_LE = endianness() === 'LE';
const INT32_MAX = 2147483647;

export interface SegyWriteSpec {
  nSamples: number;
  /** Sample interval, ns. Not a whole number of microseconds (any GPR interval) requires rev 2. */
  dtNs: number;
  /** @default 5 (IEEE float) */
  format?: SampleFormat;
  /**
   * SEG-Y revision major number. @default 2 when the interval is not a whole number of microseconds,
   * the file is little-endian or has more than 65535 samples per trace; else 1
   */
  revision?: 1 | 2;
  /** Little-endian samples and headers (rev 2 only). @default false */
  littleEndian?: boolean;
  /** @default 'ebcdic' */
  textEncoding?: TextEncoding;
  /** 3200-character textual header, or up to 40 lines (each given a `Cnn ` prefix if missing). */
  textHeader?: string | readonly string[];
  /** Extended textual headers, 3200 characters each at most (space padded). */
  extendedTextHeaders?: readonly string[];
  /** Trace header bytes 89-90 for every trace: 1 length, 2 arc seconds, 3 decimal degrees. @default 1 */
  coordinateUnits?: number;
  /** Binary header bytes 3255-3256: 1 metres, 2 feet. @default 1 */
  measurementSystem?: 1 | 2;
  /**
   * Coordinate scalar (bytes 71-72, SEG-Y convention) for every trace. @default per trace, -1000
   * (millimetres when the CRS unit is the metre) or the finest of -100, -10, 1, 10, ... that holds the
   * trace's coordinates in 32-bit integers
   */
  coordinateScalar?: number;
  /** Further binary header fields (job id, line number, ...); the writer's own fields win. */
  binary?: Partial<SegyBinaryHeader>;
}

/** Traces to write: `data` holds `count * nSamples` samples; header arrays hold `count` values. */
export interface SegyTraceChunk {
  data: Float32Array;
  /** Antenna position: written to source, group and CDP X/Y unless those are given. */
  x?: ArrayLike<number>;
  y?: ArrayLike<number>;
  sourceX?: ArrayLike<number>;
  sourceY?: ArrayLike<number>;
  groupX?: ArrayLike<number>;
  groupY?: ArrayLike<number>;
  cdpX?: ArrayLike<number>;
  cdpY?: ArrayLike<number>;
  /** Surface elevation (bytes 41-48 with scalar 69-70, centimetres kept). */
  elevation?: ArrayLike<number>;
  /** Bytes 1-4. @default 1-based trace number in the file */
  sequence?: ArrayLike<number>;
}

export class SegyWriter {
  readonly path: string;
  readonly nSamples: number;
  readonly format: SampleFormat;
  readonly littleEndian: boolean;
  readonly revision: 1 | 2;
  readonly traceBytes: number;
  readonly dataOffset: number;
  #fh: FileHandle | null;
  #tmp: string;
  #spec: SegyWriteSpec;
  #nTraces = 0;
  #dtUsInt: number;

  private constructor(path: string, tmp: string, fh: FileHandle, spec: SegyWriteSpec, revision: 1 | 2, dataOffset: number) {
    this.path = path;
    this.#tmp = tmp;
    this.#fh = fh;
    this.#spec = spec;
    this.nSamples = spec.nSamples;
    this.format = spec.format ?? 5;
    this.littleEndian = spec.littleEndian ?? false;
    this.revision = revision;
    this.traceBytes = TRACE_HEADER_BYTES + spec.nSamples * SAMPLE_FORMATS[this.format].bytes;
    this.dataOffset = dataOffset;
    const us = spec.dtNs / 1000;
    this.#dtUsInt = Math.round(us) <= 0xffff ? Math.round(us) : 0;
  }

  get nTraces(): number {
    return this.#nTraces;
  }

  /** Validate the spec, create the temporary file and write the file headers. */
  static async open(path: string, spec: SegyWriteSpec): Promise<SegyWriter> {
    const revision = checkSpec(spec);
    const headers = fileHeaders(spec, revision);
    const tmp = join(dirname(path), `.${basename(path)}.partial-${process.pid}-${Math.random().toString(36).slice(2)}`);
    const fh = await open(tmp, 'w');
    try {
      await writeFully(fh, headers, 0);
    } catch (e) {
      await fh.close().catch(() => {});
      await unlink(tmp).catch(() => {});
      throw e;
    }
    return new SegyWriter(path, tmp, fh, spec, revision, headers.length);
  }

  /** Append traces. Throws RangeError for NaN/Inf samples or arrays of the wrong length. */
  async write(chunk: SegyTraceChunk): Promise<void> {
    const fh = this.#fh;
    if (!fh) throw new Error(`${this.path}: writer is closed`);
    const ns = this.nSamples;
    if (chunk.data.length % ns !== 0) {
      throw new RangeError(`data holds ${chunk.data.length} samples, not a whole number of ${ns}-sample traces`);
    }
    const count = chunk.data.length / ns;
    for (const key of ['x', 'y', 'sourceX', 'sourceY', 'groupX', 'groupY', 'cdpX', 'cdpY', 'elevation', 'sequence'] as const) {
      const a = chunk[key];
      if (a !== undefined && a.length !== count) throw new RangeError(`${key} holds ${a.length} values for ${count} traces`);
    }
    const tb = this.traceBytes;
    // Bound the staging buffer: write at most ~8 MB at a time.
    const per = Math.max(1, Math.floor((8 << 20) / tb));
    try {
      for (let done = 0; done < count; done += per) {
        const n = Math.min(per, count - done);
        const buf = new Uint8Array(n * tb);
        this.#encode(chunk, done, n, buf);
        await writeFully(fh, buf, this.dataOffset + this.#nTraces * tb);
        this.#nTraces += n;
      }
    } catch (e) {
      await this.abort();
      throw e;
    }
  }

  /** Finish the headers (rev 2 trace count), close and rename into place. */
  async close(): Promise<{ path: string; nTraces: number; bytes: number }> {
    const fh = this.#fh;
    if (!fh) throw new Error(`${this.path}: writer is closed`);
    try {
      if (this.revision === 2) {
        const b = new Uint8Array(8);
        new DataView(b.buffer).setBigUint64(0, BigInt(this.#nTraces), this.littleEndian);
        await writeFully(fh, b, FIELD_BYTE.traceCount - 1);
      }
      await fh.sync();
      await fh.close();
      this.#fh = null;
      await rename(this.#tmp, this.path);
    } catch (e) {
      await this.abort();
      throw e;
    }
    return { path: this.path, nTraces: this.#nTraces, bytes: this.dataOffset + this.#nTraces * this.traceBytes };
  }

  /** Drop the temporary file. */
  async abort(): Promise<void> {
    const fh = this.#fh;
    this.#fh = null;
    if (fh) await fh.close().catch(() => {});
    await unlink(this.#tmp).catch(() => {});
  }

  #encode(chunk: SegyTraceChunk, from: number, n: number, buf: Uint8Array): void {
    const ns = this.nSamples;
    const tb = this.traceBytes;
    const le = this.littleEndian;
    const ab = buf.buffer;
    const src = chunk.data;
    for (let t = 0; t < n; t++) {
      const o = (from + t) * ns;
      const so = t * tb + TRACE_HEADER_BYTES;
      for (let s = 0; s < ns; s++) {
        const v = src[o + s]!;
        if (v - v !== 0) throw new RangeError(`${this.path}: trace ${this.#nTraces + t + 1} sample ${s + 1} is ${v}; SEG-Y samples must be finite`);
      }
      const trace = src.subarray(o, o + ns);
      switch (this.format) {
        case 5:
          new Float32Array(ab, so, ns).set(trace);
          break;
        case 1:
          float32ToIbmWords(trace, new Uint32Array(ab, so, ns));
          break;
        case 2:
          roundInto(trace, new Int32Array(ab, so, ns), -2147483648, INT32_MAX);
          break;
        case 3:
          roundInto(trace, new Int16Array(ab, so, ns), -32768, 32767);
          break;
        case 8:
          roundInto(trace, new Int8Array(ab, so, ns), -128, 127);
          break;
      }
    }
    const bps = SAMPLE_FORMATS[this.format].bytes;
    if (bps > 1 && le !== HOST_LE) {
      const view = Buffer.from(ab, 0, n * tb);
      if (bps === 4) view.swap32();
      else view.swap16();
    }
    // Headers after the swap: DataView writes them in the file's order directly.
    const view = new DataView(ab);
    const spec = this.#spec;
    const units = spec.coordinateUnits ?? 1;
    for (let t = 0; t < n; t++) {
      const i = from + t;
      const b = t * tb;
      const number = this.#nTraces + t + 1;
      const sx = pick(chunk.sourceX, chunk.x, i);
      const sy = pick(chunk.sourceY, chunk.y, i);
      const gx = pick(chunk.groupX, chunk.x, i);
      const gy = pick(chunk.groupY, chunk.y, i);
      const cx = pick(chunk.cdpX, chunk.x, i);
      const cy = pick(chunk.cdpY, chunk.y, i);
      const scalar = spec.coordinateScalar ?? chooseScalar([sx, sy, gx, gy, cx, cy], -1000);
      view.setInt32(b + TRACE.sequence, chunk.sequence ? chunk.sequence[i]! : number, le);
      view.setInt32(b + TRACE.sequenceInFile, number, le);
      view.setInt32(b + TRACE.fieldRecord, 1, le);
      view.setInt32(b + TRACE.traceInRecord, number, le);
      view.setInt16(b + TRACE.traceId, 1, le);
      if (chunk.elevation) {
        const z = chunk.elevation[i]!;
        const es = chooseScalar([z], -100);
        view.setInt16(b + TRACE.elevationScalar, es, le);
        view.setInt32(b + TRACE.receiverElevation, unscale(z, es), le);
        view.setInt32(b + TRACE.sourceElevation, unscale(z, es), le);
      }
      view.setInt16(b + TRACE.coordScalar, scalar, le);
      view.setInt32(b + TRACE.sourceX, unscale(sx, scalar), le);
      view.setInt32(b + TRACE.sourceY, unscale(sy, scalar), le);
      view.setInt32(b + TRACE.groupX, unscale(gx, scalar), le);
      view.setInt32(b + TRACE.groupY, unscale(gy, scalar), le);
      view.setInt16(b + TRACE.coordUnits, units, le);
      view.setUint16(b + TRACE.nSamples, ns <= 0xffff ? ns : 0, le);
      view.setUint16(b + TRACE.sampleIntervalUs, this.#dtUsInt, le);
      view.setInt32(b + TRACE.cdpX, unscale(cx, scalar), le);
      view.setInt32(b + TRACE.cdpY, unscale(cy, scalar), le);
    }
  }
}

/** Open a streaming writer: `await w.write(chunk)` as often as needed, then `await w.close()`. */
export function openSegyWriter(path: string, spec: SegyWriteSpec): Promise<SegyWriter> {
  return SegyWriter.open(path, spec);
}

/** Write a whole SEG-Y file from one chunk or a (sync or async) sequence of chunks. */
export async function writeSegy(
  path: string,
  spec: SegyWriteSpec & { traces: SegyTraceChunk | Iterable<SegyTraceChunk> | AsyncIterable<SegyTraceChunk> },
): Promise<{ path: string; nTraces: number; bytes: number }> {
  const w = await SegyWriter.open(path, spec);
  try {
    const t = spec.traces;
    if ('data' in t) await w.write(t);
    else for await (const chunk of t) await w.write(chunk);
  } catch (e) {
    await w.abort();
    throw e;
  }
  return w.close();
}

function pick(a: ArrayLike<number> | undefined, b: ArrayLike<number> | undefined, i: number): number {
  const v = a ? a[i]! : b ? b[i]! : 0;
  if (!Number.isFinite(v)) throw new RangeError(`trace coordinate ${i} is ${v}; SEG-Y coordinates must be finite`);
  return v;
}

/** Stored integer for a value under a SEG-Y scalar (the inverse of `applyScalar`). */
function unscale(v: number, scalar: number): number {
  const r = scalar < 0 ? Math.round(v * -scalar) : scalar > 0 ? Math.round(v / scalar) : Math.round(v);
  if (r > INT32_MAX || r < -2147483648) throw new RangeError(`${v} does not fit a SEG-Y coordinate under scalar ${scalar}`);
  return r;
}

/** The finest scalar from `finest` (e.g. -1000) up to 10000 that keeps every value in int32. */
function chooseScalar(values: readonly number[], finest: number): number {
  let m = 0;
  for (const v of values) m = Math.max(m, Math.abs(v));
  for (const s of [-10000, -1000, -100, -10, 1, 10, 100, 1000, 10000]) {
    if (s < finest) continue;
    const stored = s < 0 ? m * -s : m / s;
    if (Math.round(stored) <= INT32_MAX) return s;
  }
  throw new RangeError(`coordinate ${m} is too large for SEG-Y trace headers`);
}

function roundInto(src: Float32Array, dst: Int32Array | Int16Array | Int8Array, lo: number, hi: number): void {
  for (let i = 0; i < src.length; i++) {
    const v = src[i]!;
    const r = v < 0 ? -Math.round(-v) : Math.round(v);
    dst[i] = r < lo ? lo : r > hi ? hi : r;
  }
}

async function writeFully(fh: FileHandle, buf: Uint8Array, position: number): Promise<void> {
  let done = 0;
  while (done < buf.length) {
    const { bytesWritten } = await fh.write(buf, done, buf.length - done, position + done);
    done += bytesWritten;
  }
}

/** Check the spec (programming errors are RangeError) and settle the revision. */
function checkSpec(spec: SegyWriteSpec): 1 | 2 {
  const { nSamples, dtNs } = spec;
  if (!Number.isInteger(nSamples) || nSamples < 1 || nSamples > 0x7fffffff) throw new RangeError(`nSamples must be a positive integer, got ${nSamples}`);
  if (!(dtNs > 0 && Number.isFinite(dtNs))) throw new RangeError(`dtNs must be positive, got ${dtNs}`);
  const format = spec.format ?? 5;
  if (!isSampleFormat(format)) throw new RangeError(`format must be 1, 2, 3, 5 or 8, got ${String(format)}`);
  const us = dtNs / 1000;
  const wholeUs = Number.isInteger(us) && us <= 0xffff;
  const needs2 = !wholeUs || spec.littleEndian === true || nSamples > 0xffff;
  const revision = spec.revision ?? (needs2 ? 2 : 1);
  if (revision !== 1 && revision !== 2) throw new RangeError(`revision must be 1 or 2, got ${String(revision)}`);
  if (revision === 1 && needs2) {
    const why = spec.littleEndian ? 'little-endian byte order' : !wholeUs ? `a sample interval of ${dtNs} ns (not whole microseconds)` : `${nSamples} samples per trace`;
    throw new RangeError(`SEG-Y rev 1 cannot store ${why}; write rev 2`);
  }
  for (const [i, t] of (spec.extendedTextHeaders ?? []).entries()) {
    if (t.length > EXTENDED_TEXT_BYTES) throw new RangeError(`extended textual header ${i + 1} has ${t.length} characters, at most 3200 fit`);
  }
  if ((spec.extendedTextHeaders?.length ?? 0) > 0x7fff) throw new RangeError('too many extended textual headers');
  return revision;
}

function defaultText(spec: SegyWriteSpec, revision: 1 | 2): string[] {
  const f = spec.format ?? 5;
  return [
    'Lamina GPR line',
    `SAMPLES PER TRACE ${spec.nSamples}  SAMPLE INTERVAL ${spec.dtNs} NS  FORMAT ${f} (${SAMPLE_FORMATS[f].name.toUpperCase()})`,
    `BYTE ORDER ${spec.littleEndian ? 'LITTLE' : 'BIG'}-ENDIAN`,
    'TRACE COORDINATES: SOURCE, GROUP AND CDP X/Y (BYTES 73-88, 181-188), SCALAR BYTES 71-72',
    ...Array.from({ length: 34 }, () => ''),
    revision === 2 ? 'SEG-Y_REV2.0' : 'SEG Y REV1',
    'END TEXTUAL HEADER',
  ];
}

function fileHeaders(spec: SegyWriteSpec, revision: 1 | 2): Uint8Array {
  const ext = spec.extendedTextHeaders ?? [];
  const enc = spec.textEncoding ?? 'ebcdic';
  const le = spec.littleEndian ?? false;
  const out = new Uint8Array(FILE_HEADER_BYTES + ext.length * EXTENDED_TEXT_BYTES);
  const th = spec.textHeader;
  const text = th === undefined ? cardImages(defaultText(spec, revision)) : typeof th === 'string' ? th : cardImages(th);
  out.set(encodeText(text, enc, TEXT_HEADER_BYTES), 0);
  ext.forEach((t, k) => out.set(encodeText(t, enc, EXTENDED_TEXT_BYTES), FILE_HEADER_BYTES + k * EXTENDED_TEXT_BYTES));

  const us = spec.dtNs / 1000;
  const b: SegyBinaryHeader = { ...emptyBinaryHeader(), tracesPerEnsemble: 1, ensembleFold: 1, traceSorting: 1, ...spec.binary };
  b.sampleIntervalUs = Math.round(us) <= 0xffff ? Math.round(us) : 0;
  b.sampleIntervalOriginalUs = b.sampleIntervalUs;
  b.samplesPerTrace = spec.nSamples <= 0xffff ? spec.nSamples : 0;
  b.samplesPerTraceOriginal = b.samplesPerTrace;
  b.formatCode = spec.format ?? 5;
  b.measurementSystem = spec.measurementSystem ?? 1;
  b.revisionMajor = revision;
  b.revisionMinor = 0;
  b.fixedLengthTraces = 1;
  b.extendedTextHeaders = ext.length;
  if (revision === 2) {
    b.extSamplesPerTrace = spec.nSamples;
    b.extSamplesPerTraceOriginal = spec.nSamples;
    b.extSampleIntervalUs = us;
    b.extSampleIntervalOriginalUs = us;
    b.byteOrderConstant = BYTE_ORDER_BIG;
    b.traceCount = 0;
    b.firstTraceOffset = out.length;
  } else {
    for (const k of ['extTracesPerEnsemble', 'extAuxTracesPerEnsemble', 'extSamplesPerTrace', 'extSampleIntervalUs', 'extSampleIntervalOriginalUs',
      'extSamplesPerTraceOriginal', 'extEnsembleFold', 'byteOrderConstant', 'maxAdditionalTraceHeaders', 'timeBasis', 'traceCount',
      'firstTraceOffset', 'trailerRecords'] as const) b[k] = 0;
  }
  // Rev 2 headers are written in the file's byte order: the constant then reads 0x04030201 big-endian
  // in a little-endian file, as the standard intends.
  encodeBinaryHeader(new DataView(out.buffer, 0, FILE_HEADER_BYTES), b, le);
  return out;
}
