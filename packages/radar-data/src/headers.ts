/**
 * SEG-Y rev 1 / rev 2.0 file headers: the textual, binary and extended textual headers, read at open and
 * checked against the file's size and against what a radar file can be. The traces are streamed by
 * reader.ts.
 */
import type { FileHandle } from 'node:fs/promises';
import { InputError } from '@lamina/errors';
import { SAMPLE_FORMATS, SAMPLE_FORMAT_LIST, isDefinedFormatCode, isSampleFormat, type SampleFormat } from './formats';
import {
  BYTE_ORDER_BIG,
  BYTE_ORDER_LITTLE,
  BYTE_ORDER_PAIRWISE,
  EXTENDED_TEXT_BYTES,
  FILE_HEADER_BYTES,
  TRACE,
  TRACE_HEADER_BYTES,
  binaryFieldLabel,
  decodeBinaryHeader,
  type BinaryFieldName,
  type SegyBinaryHeader,
} from './layout';
import { TEXT_HEADER_BYTES, decodeText, detectTextEncoding, type TextEncoding } from './text';

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
  /**
   * Read with synchronous calls, for a thread with nothing else to do while it reads (a line worker):
   * each asynchronous read waits for a turn of the process-wide file thread pool, long when the cores
   * are busy. The same bytes either way. @default false
   */
  syncIo?: boolean;
}

/** Where `dtNs` came from: rev 2 bytes 3273-3280, bytes 3217-3218, or the caller's override. */
export type DtSource = 'extended' | 'binary' | 'override';

/** The error for a trace whose sample count differs from the binary header's. */
export function mixedLength(name: string, trace: number, nTraces: number, traceOffset: number, expected: number, found: number): InputError {
  return new InputError(
    name,
    `expected ${expected} samples in every trace as the binary header says (bytes 3221-3222), found ${found} (traces of mixed length are not supported)`,
    { field: `trace ${trace + 1} of ${nTraces} bytes 115-116 (samples in this trace)`, offset: traceOffset + TRACE.nSamples },
  );
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

/** What the file headers say, checked against the file's size (the reader adds the path and format name). */
export interface ParsedHeaders extends Omit<SegyInfo, 'path' | 'formatName'> {
  textHeader: string;
  extendedTextHeaders: string[];
  binary: SegyBinaryHeader;
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

export async function parseHeaders(fh: FileHandle, size: number, name: string, options: SegyOpenOptions): Promise<ParsedHeaders> {
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
