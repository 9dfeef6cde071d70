/**
 * Byte layout of SEG-Y rev 1 and rev 2.0 (SEG Technical Standards Committee, SEG-Y_r1.0 2002 and
 * SEG-Y_r2.0 2017). Byte numbers are the standard's: 1-based from the start of the file for the binary
 * header (3201-3600), 1-based from the start of the trace for trace headers (1-240).
 */

export type FieldType = 'i16' | 'u16' | 'i32' | 'u8' | 'f64' | 'u64';

export const BINARY_HEADER_OFFSET = 3200;
export const BINARY_HEADER_BYTES = 400;
export const FILE_HEADER_BYTES = 3600;
export const TRACE_HEADER_BYTES = 240;
export const EXTENDED_TEXT_BYTES = 3200;

/** Rev 2 byte-order constant (bytes 3297-3300) as read big-endian. */
export const BYTE_ORDER_BIG = 0x01020304;
export const BYTE_ORDER_LITTLE = 0x04030201;
export const BYTE_ORDER_PAIRWISE = 0x02010403;

/** Binary header fields: name, first byte (1-based, file), type. Rev 2 additions are marked. */
export const BINARY_FIELDS = [
  ['jobId', 3201, 'i32'],
  ['lineNumber', 3205, 'i32'],
  ['reelNumber', 3209, 'i32'],
  ['tracesPerEnsemble', 3213, 'i16'],
  ['auxTracesPerEnsemble', 3215, 'i16'],
  ['sampleIntervalUs', 3217, 'u16'],
  ['sampleIntervalOriginalUs', 3219, 'u16'],
  ['samplesPerTrace', 3221, 'u16'],
  ['samplesPerTraceOriginal', 3223, 'u16'],
  ['formatCode', 3225, 'i16'],
  ['ensembleFold', 3227, 'i16'],
  ['traceSorting', 3229, 'i16'],
  ['verticalSum', 3231, 'i16'],
  ['sweepFrequencyStart', 3233, 'i16'],
  ['sweepFrequencyEnd', 3235, 'i16'],
  ['sweepLength', 3237, 'i16'],
  ['sweepType', 3239, 'i16'],
  ['sweepChannel', 3241, 'i16'],
  ['sweepTaperStart', 3243, 'i16'],
  ['sweepTaperEnd', 3245, 'i16'],
  ['taperType', 3247, 'i16'],
  ['correlated', 3249, 'i16'],
  ['binaryGainRecovered', 3251, 'i16'],
  ['amplitudeRecovery', 3253, 'i16'],
  /** 1 metres, 2 feet. */
  ['measurementSystem', 3255, 'i16'],
  ['impulsePolarity', 3257, 'i16'],
  ['vibratoryPolarity', 3259, 'i16'],
  // rev 2
  ['extTracesPerEnsemble', 3261, 'i32'],
  ['extAuxTracesPerEnsemble', 3265, 'i32'],
  ['extSamplesPerTrace', 3269, 'i32'],
  ['extSampleIntervalUs', 3273, 'f64'],
  ['extSampleIntervalOriginalUs', 3281, 'f64'],
  ['extSamplesPerTraceOriginal', 3289, 'i32'],
  ['extEnsembleFold', 3293, 'i32'],
  ['byteOrderConstant', 3297, 'i32'],
  ['revisionMajor', 3501, 'u8'],
  ['revisionMinor', 3502, 'u8'],
  ['fixedLengthTraces', 3503, 'i16'],
  ['extendedTextHeaders', 3505, 'i16'],
  ['maxAdditionalTraceHeaders', 3507, 'i32'],
  ['timeBasis', 3511, 'i16'],
  ['traceCount', 3513, 'u64'],
  ['firstTraceOffset', 3521, 'u64'],
  ['trailerRecords', 3529, 'i32'],
] as const satisfies readonly (readonly [string, number, FieldType])[];

export type BinaryFieldName = (typeof BINARY_FIELDS)[number][0];

/** Decoded binary header: every field as a number (u64 fields beyond 2^53 read as Infinity). */
export type SegyBinaryHeader = Record<BinaryFieldName, number>;

export const FIELD_BYTE: Record<BinaryFieldName, number> = Object.fromEntries(
  BINARY_FIELDS.map(([name, byte]) => [name, byte]),
) as Record<BinaryFieldName, number>;

const FIELD_SIZE: Record<FieldType, number> = { i16: 2, u16: 2, i32: 4, u8: 1, f64: 8, u64: 8 };

/** `binary header bytes 3225-3226 (formatCode)`: how messages name a field. */
export function binaryFieldLabel(name: BinaryFieldName): string {
  const entry = BINARY_FIELDS.find((f) => f[0] === name)!;
  const size = FIELD_SIZE[entry[2]];
  const range = size === 1 ? `byte ${entry[1]}` : `bytes ${entry[1]}-${entry[1] + size - 1}`;
  return `binary header ${range} (${name})`;
}

export function readField(view: DataView, offset: number, type: FieldType, le: boolean): number {
  switch (type) {
    case 'i16':
      return view.getInt16(offset, le);
    case 'u16':
      return view.getUint16(offset, le);
    case 'i32':
      return view.getInt32(offset, le);
    case 'u8':
      return view.getUint8(offset);
    case 'f64':
      return view.getFloat64(offset, le);
    case 'u64': {
      const v = view.getBigUint64(offset, le);
      return v > BigInt(Number.MAX_SAFE_INTEGER) ? Infinity : Number(v);
    }
  }
}

export function writeField(view: DataView, offset: number, type: FieldType, le: boolean, v: number): void {
  switch (type) {
    case 'i16':
      return view.setInt16(offset, v, le);
    case 'u16':
      return view.setUint16(offset, v, le);
    case 'i32':
      return view.setInt32(offset, v, le);
    case 'u8':
      return view.setUint8(offset, v);
    case 'f64':
      return view.setFloat64(offset, v, le);
    case 'u64':
      return view.setBigUint64(offset, BigInt(Math.trunc(v)), le);
  }
}

/**
 * Decode the 400-byte binary header. `view` covers the file from byte 0 (3200 is the header's start).
 * Note the revision bytes are single bytes (rev 2); the caller fixes up 16-bit-swapped rev 1 values.
 */
export function decodeBinaryHeader(view: DataView, le: boolean): SegyBinaryHeader {
  const out = {} as SegyBinaryHeader;
  for (const [name, byte, type] of BINARY_FIELDS) out[name] = readField(view, byte - 1, type, le);
  return out;
}

export function encodeBinaryHeader(view: DataView, header: SegyBinaryHeader, le: boolean): void {
  for (const [name, byte, type] of BINARY_FIELDS) writeField(view, byte - 1, type, le, header[name]);
}

export function emptyBinaryHeader(): SegyBinaryHeader {
  return Object.fromEntries(BINARY_FIELDS.map(([name]) => [name, 0])) as SegyBinaryHeader;
}

/** Trace header fields Lamina reads and writes: 0-based offset within the trace. */
export const TRACE = {
  /** 1-4 trace sequence number within line. */
  sequence: 0,
  /** 5-8 trace sequence number within file. */
  sequenceInFile: 4,
  /** 9-12 original field record number. */
  fieldRecord: 8,
  /** 13-16 trace number within the field record. */
  traceInRecord: 12,
  /** 29-30 trace identification code (1 = time-domain data). */
  traceId: 28,
  /** 41-44 receiver group elevation. */
  receiverElevation: 40,
  /** 45-48 surface elevation at source. */
  sourceElevation: 44,
  /** 69-70 scalar for elevations (SEG-Y sign convention). */
  elevationScalar: 68,
  /** 71-72 scalar for coordinates: positive multiplies, negative divides, 0 means 1. */
  coordScalar: 70,
  sourceX: 72,
  sourceY: 76,
  groupX: 80,
  groupY: 84,
  /** 89-90 coordinate units: 1 length, 2 seconds of arc, 3 decimal degrees, 4 DMS. */
  coordUnits: 88,
  /** 115-116 number of samples in this trace (read unsigned). */
  nSamples: 114,
  /** 117-118 sample interval in microseconds for this trace. */
  sampleIntervalUs: 116,
  cdpX: 180,
  cdpY: 184,
} as const;

/** Apply a SEG-Y scalar (bytes 69-70 / 71-72): positive multiplies, negative divides, 0 is 1. */
export function applyScalar(v: number, scalar: number): number {
  if (scalar > 0) return v * scalar;
  if (scalar < 0) return v / -scalar;
  return v;
}
