/**
 * Streaming SEG-Y rev 1 / rev 2.0 reader. The file stays on disk: headers are read at open, traces by
 * positional reads of at most `BLOCK_BYTES` at a time into one reused scratch buffer.
 */
import { open, type FileHandle } from 'node:fs/promises';
import { endianness } from 'node:os';
import { InputError } from '@lamina/errors';
import { SAMPLE_FORMATS, SAMPLE_FORMAT_LIST, isDefinedFormatCode, isSampleFormat, type SampleFormat } from './formats';
import { ibmToNumber, ibmWordsToFloat32 } from './ibm';
import {
  BYTE_ORDER_BIG,
  BYTE_ORDER_LITTLE,
  BYTE_ORDER_PAIRWISE,
  EXTENDED_TEXT_BYTES,
  FILE_HEADER_BYTES,
  TRACE,
  TRACE_HEADER_BYTES,
  applyScalar,
  binaryFieldLabel,
  decodeBinaryHeader,
  type BinaryFieldName,
  type SegyBinaryHeader,
} from './layout';
import { TEXT_HEADER_BYTES, decodeText, detectTextEncoding, type TextEncoding } from './text';

const HOST_LE = endianness() === 'LE';

/**
 * Plausible GPR sample intervals, ns. Radar antennas run from about 10 MHz to 3 GHz; sampling is
 * commonly 5-10 samples per period of the centre frequency, i.e. about 0.03-10 ns. The bounds leave a
 * margin below (0.001 ns) and stop at 10 ns, which still resolves 50 MHz (Nyquist); a seismic file's
 * 1000-4000 us is far outside (common practice, no source).
 */
export const DT_MIN_NS = 0.001;
export const DT_MAX_NS = 10;
/** Samples per trace accepted (GPR traces hold 256-8192 samples; this bounds allocation). */
export const MAX_SAMPLES = 1 << 20;
/** Positional reads never exceed this (or one trace, if larger). */
export const BLOCK_BYTES = 8 << 20;
/** Extended textual headers accepted (a count of -1 is scanned up to this many records). */
export const MAX_EXTENDED_TEXT = 10000;
/** Additional 240-byte trace headers per trace accepted (rev 2 bytes 3507-3510). */
export const MAX_ADDITIONAL_TRACE_HEADERS = 100;
/** Trace headers checked for a differing sample count when the file size does not add up. */
const MIXED_LENGTH_WALK = 10000;

export interface SegyOpenOptions {
  /**
   * Sample interval (ns) used when the file's is missing or implausible for radar: site.json's
   * `sampleIntervalNs`. A plausible interval in the file wins.
   */
  sampleIntervalNs?: number;
  /** How messages name the file. @default path */
  name?: string;
}

/** Where `dtNs` came from: rev 2 bytes 3273-3280, bytes 3217-3218, or the caller's override. */
export type DtSource = 'extended' | 'binary' | 'override';

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

/** What `openSegy` learned from the headers (plain data, printable as JSON). */
export interface SegyInfo {
  path: string;
  name: string;
  revision: { major: number; minor: number };
  format: SampleFormat;
  formatName: string;
  littleEndian: boolean;
  textEncoding: TextEncoding;
  nSamples: number;
  nTraces: number;
  dtNs: number;
  dtSource: DtSource;
  fileSize: number;
  /** Bytes per trace including its header(s). */
  traceBytes: number;
  /** Byte offset of the first trace. */
  dataOffset: number;
  additionalTraceHeaders: number;
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

function mixedLength(name: string, trace: number, nTraces: number, traceOffset: number, expected: number, found: number): InputError {
  return new InputError(
    name,
    `expected ${expected} samples in every trace as the binary header says (bytes 3221-3222), found ${found} (traces of mixed length are not supported)`,
    { field: `trace ${trace + 1} of ${nTraces} bytes 115-116 (samples in this trace)`, offset: traceOffset + TRACE.nSamples },
  );
}

interface ParsedHeaders {
  name: string;
  revision: { major: number; minor: number };
  format: SampleFormat;
  littleEndian: boolean;
  textEncoding: TextEncoding;
  textHeader: string;
  extendedTextHeaders: string[];
  binary: SegyBinaryHeader;
  nSamples: number;
  nTraces: number;
  dtNs: number;
  dtSource: DtSource;
  fileSize: number;
  traceBytes: number;
  dataOffset: number;
  additionalTraceHeaders: number;
}

/**
 * Open a SEG-Y file and check its headers against its size. Throws InputError (naming the file and the
 * header field or byte offset) for anything Lamina cannot read; the handle is closed on error.
 */
export async function openSegy(path: string, options: SegyOpenOptions = {}): Promise<SegyReader> {
  const name = options.name ?? path;
  let fh: FileHandle;
  try {
    fh = await open(path, 'r');
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

async function readAt(fh: FileHandle, position: number, length: number): Promise<Uint8Array> {
  const buf = new Uint8Array(length);
  let got = 0;
  while (got < length) {
    const { bytesRead } = await fh.read(buf, got, length - got, position + got);
    if (bytesRead === 0) break;
    got += bytesRead;
  }
  return got === length ? buf : buf.subarray(0, got);
}

async function parseHeaders(fh: FileHandle, size: number, name: string, options: SegyOpenOptions): Promise<ParsedHeaders> {
  const fail = (detail: string, field?: string, offset?: number) =>
    new InputError(name, detail, { ...(field !== undefined && { field }), ...(offset !== undefined && { offset }) });
  const label = binaryFieldLabel;

  if (size === 0) throw fail(`expected a SEG-Y file (at least ${FILE_HEADER_BYTES} bytes of headers), found an empty file`);
  if (size < FILE_HEADER_BYTES) {
    throw fail(`expected at least ${FILE_HEADER_BYTES} bytes (3200-byte textual and 400-byte binary header), found ${size} bytes`);
  }
  const head = await readAt(fh, 0, FILE_HEADER_BYTES);
  if (head.length < FILE_HEADER_BYTES) throw fail(`expected ${FILE_HEADER_BYTES} header bytes, could read only ${head.length}`);
  const view = new DataView(head.buffer, head.byteOffset, FILE_HEADER_BYTES);

  // Revision: bytes 3501 and 3502 as single bytes (rev 2). (0, 1) and (0, 2) are 16-bit values written
  // or swapped as one field by rev 1 era writers; no revision 0.1 or 0.2 exists.
  let major = head[3500]!;
  let minor = head[3501]!;
  if (major === 0 && (minor === 1 || minor === 2)) {
    major = minor;
    minor = 0;
  }
  const rev2 = major >= 2;

  // Byte order: the rev 2 constant when present, else whichever order gives a defined format code.
  const constant = view.getUint32(3296, false);
  let le: boolean;
  if (constant === BYTE_ORDER_BIG) le = false;
  else if (constant === BYTE_ORDER_LITTLE) le = true;
  else if (constant === BYTE_ORDER_PAIRWISE) {
    throw fail('expected 0x01020304 (big-endian) or 0x04030201 (little-endian), found 0x02010403 (pairwise byte-swapped, not supported)', label('byteOrderConstant'));
  } else if (constant !== 0 && rev2) {
    throw fail(`expected 0x01020304 (big-endian) or 0x04030201 (little-endian) in a rev ${major} file, found 0x${constant.toString(16).padStart(8, '0')}`, label('byteOrderConstant'));
  } else {
    le = !isDefinedFormatCode(view.getInt16(3224, false)) && isDefinedFormatCode(view.getInt16(3224, true));
  }

  const binary = decodeBinaryHeader(view, le);
  binary.revisionMajor = major;
  binary.revisionMinor = minor;

  const textEncoding = detectTextEncoding(head.subarray(0, TEXT_HEADER_BYTES));
  const textHeader = decodeText(head.subarray(0, TEXT_HEADER_BYTES), textEncoding);

  const formatCode = binary.formatCode;
  if (!isSampleFormat(formatCode)) {
    throw fail(`expected sample format code ${SAMPLE_FORMAT_LIST}, found ${formatCode}`, label('formatCode'));
  }
  const format = formatCode;

  let nsField: BinaryFieldName = 'samplesPerTrace';
  if (rev2 && binary.extSamplesPerTrace !== 0) nsField = 'extSamplesPerTrace';
  const nSamples = binary[nsField];
  if (nSamples <= 0 || nSamples > MAX_SAMPLES) {
    throw fail(`expected the number of samples per trace, 1 to ${MAX_SAMPLES}, found ${nSamples}`, label(nsField));
  }

  const additional = rev2 ? binary.maxAdditionalTraceHeaders : 0;
  if (additional < 0 || additional > MAX_ADDITIONAL_TRACE_HEADERS) {
    throw fail(`expected 0 to ${MAX_ADDITIONAL_TRACE_HEADERS} additional trace headers, found ${additional}`, label('maxAdditionalTraceHeaders'));
  }

  // Extended textual headers.
  const nExt = binary.extendedTextHeaders;
  const extendedTextHeaders: string[] = [];
  let textEnd = FILE_HEADER_BYTES;
  if (nExt < -1 || nExt > MAX_EXTENDED_TEXT) {
    throw fail(`expected -1 (variable) or 0 to ${MAX_EXTENDED_TEXT} extended textual headers, found ${nExt}`, label('extendedTextHeaders'));
  }
  if (nExt > 0) {
    const need = FILE_HEADER_BYTES + nExt * EXTENDED_TEXT_BYTES;
    if (size < need) {
      throw fail(`expected at least ${need} bytes (3600 + ${nExt} extended textual headers of 3200), found ${size} bytes`, label('extendedTextHeaders'));
    }
  }
  for (let k = 0; nExt === -1 || k < nExt; k++) {
    const at = FILE_HEADER_BYTES + k * EXTENDED_TEXT_BYTES;
    if (nExt === -1 && (k >= MAX_EXTENDED_TEXT || at + EXTENDED_TEXT_BYTES > size)) {
      throw fail(`expected a final extended textual header "((SEG: EndText))" (a count of -1 means variable), found none in ${k} records`, label('extendedTextHeaders'));
    }
    const rec = await readAt(fh, at, EXTENDED_TEXT_BYTES);
    const text = decodeText(rec, detectTextEncoding(rec));
    extendedTextHeaders.push(text);
    textEnd = at + EXTENDED_TEXT_BYTES;
    if (nExt === -1 && text.replace(/\s+/g, '').toLowerCase().startsWith('((seg:endtext))')) break;
  }

  let dataOffset = textEnd;
  if (rev2 && binary.firstTraceOffset !== 0) {
    const off = binary.firstTraceOffset;
    if (off < textEnd || off > size) {
      throw fail(`expected the first trace at byte ${textEnd} to ${size} (after the headers, within the file), found ${off}`, label('firstTraceOffset'));
    }
    dataOffset = off;
  }

  const bps = SAMPLE_FORMATS[format].bytes;
  const headerBytes = TRACE_HEADER_BYTES * (1 + additional);
  const traceBytes = headerBytes + nSamples * bps;
  const declaredTraces = rev2 ? binary.traceCount : 0;

  let trailerBytes = 0;
  const trailer = rev2 ? binary.trailerRecords : 0;
  if (trailer > 0) trailerBytes = trailer * EXTENDED_TEXT_BYTES;
  else if (trailer === -1 && declaredTraces > 0 && Number.isFinite(declaredTraces)) {
    trailerBytes = size - dataOffset - declaredTraces * traceBytes;
    if (trailerBytes < 0) {
      throw fail(`expected ${declaredTraces} traces of ${traceBytes} bytes as the header says, found only ${size - dataOffset} bytes after the headers`, label('traceCount'));
    }
  } else if (trailer < 0) {
    throw fail(`expected 0 or more data trailer records (or -1 with a trace count in bytes 3513-3520), found ${trailer}`, label('trailerRecords'));
  }
  const dataBytes = size - dataOffset - trailerBytes;
  if (dataBytes < 0) {
    throw fail(`expected at least ${dataOffset + trailerBytes} bytes (headers and ${trailer} data trailer records), found ${size} bytes`, label('trailerRecords'));
  }
  if (dataBytes === 0) {
    throw fail(`expected traces after the headers (from byte offset ${dataOffset}), found none: the file ends there`);
  }

  // The first trace's own sample count explains a mismatch better than the arithmetic below.
  const traceCountFits = nSamples <= 0xffff;
  if (dataBytes >= TRACE_HEADER_BYTES && traceCountFits) {
    const first = await readAt(fh, dataOffset, TRACE_HEADER_BYTES);
    const own = new DataView(first.buffer).getUint16(TRACE.nSamples, le);
    if (own !== 0 && own !== nSamples) throw mixedLength(name, 0, Math.floor(dataBytes / traceBytes) || 1, dataOffset, nSamples, own);
  }
  if (traceBytes > dataBytes) {
    throw fail(
      `expected a sample count whose traces fit the file: ${nSamples} samples need ${traceBytes} bytes per trace, but only ${dataBytes} bytes follow the headers (truncated file or wrong sample count)`,
      label(nsField),
    );
  }
  const nTraces = Math.floor(dataBytes / traceBytes);
  const rest = dataBytes - nTraces * traceBytes;
  if (rest !== 0) {
    // Traces of mixed length also break the arithmetic: walk the first traces by their own counts.
    if (traceCountFits) {
      let at = dataOffset;
      for (let t = 0; t < MIXED_LENGTH_WALK && at + TRACE_HEADER_BYTES <= size - trailerBytes; t++) {
        const hb = await readAt(fh, at, TRACE_HEADER_BYTES);
        const own = new DataView(hb.buffer).getUint16(TRACE.nSamples, le);
        if (own !== 0 && own !== nSamples) throw mixedLength(name, t, nTraces + 1, at, nSamples, own);
        at += traceBytes;
      }
    }
    throw fail(
      `truncated trace: expected ${traceBytes} bytes per trace (${headerBytes}-byte header + ${nSamples} samples x ${bps} bytes), found ${rest} bytes after ${nTraces} whole traces`,
      `trace ${nTraces + 1}`,
      dataOffset + nTraces * traceBytes,
    );
  }
  if (declaredTraces !== 0 && declaredTraces !== nTraces) {
    throw fail(`expected ${declaredTraces} traces as the header says, found ${nTraces} in the file (${dataBytes} bytes of ${traceBytes}-byte traces)`, label('traceCount'));
  }
  if (nTraces > 1 && traceCountFits) {
    const lastAt = dataOffset + (nTraces - 1) * traceBytes;
    const last = await readAt(fh, lastAt, TRACE_HEADER_BYTES);
    const own = new DataView(last.buffer).getUint16(TRACE.nSamples, le);
    if (own !== 0 && own !== nSamples) throw mixedLength(name, nTraces - 1, nTraces, lastAt, nSamples, own);
  }

  // Sample interval: rev 2 extended (us, double), else bytes 3217-3218 (us), else the override.
  let dtField: BinaryFieldName = 'sampleIntervalUs';
  let dtUs = 0;
  let dtSource: DtSource = 'binary';
  if (rev2 && binary.extSampleIntervalUs > 0 && Number.isFinite(binary.extSampleIntervalUs)) {
    dtField = 'extSampleIntervalUs';
    dtUs = binary.extSampleIntervalUs;
    dtSource = 'extended';
  } else if (binary.sampleIntervalUs > 0) {
    dtUs = binary.sampleIntervalUs;
  }
  let dtNs = dtUs * 1000;
  const plausible = (ns: number) => ns >= DT_MIN_NS && ns <= DT_MAX_NS;
  if (!plausible(dtNs)) {
    const override = options.sampleIntervalNs;
    if (override !== undefined) {
      if (!(Number.isFinite(override) && plausible(override))) {
        throw fail(`expected a radar sample interval of ${DT_MIN_NS} to ${DT_MAX_NS} ns, found ${override}`, 'sampleIntervalNs (override)');
      }
      dtNs = override;
      dtSource = 'override';
    } else if (dtUs === 0) {
      throw fail(
        `expected a sample interval, found none (bytes 3217-3218 are 0${rev2 ? ' and so is the rev 2 interval, bytes 3273-3280' : ''}); set "sampleIntervalNs" in site.json`,
        label(dtField),
      );
    } else {
      throw fail(
        `expected a radar sample interval of ${DT_MIN_NS} to ${DT_MAX_NS} ns, found ${dtUs} us (${dtNs} ns); set "sampleIntervalNs" in site.json`,
        label(dtField),
      );
    }
  }

  return {
    name, revision: { major, minor }, format, littleEndian: le, textEncoding, textHeader, extendedTextHeaders,
    binary, nSamples, nTraces, dtNs, dtSource, fileSize: size, traceBytes, dataOffset, additionalTraceHeaders: additional,
  };
}
