export { type RadarLine, traceOf, emptyLine } from './line';
export { type SampleFormat, SAMPLE_FORMATS, isSampleFormat } from './formats';
export { ibmToNumber, numberToIbm, ibmWordsToFloat32, float32ToIbmWords } from './ibm';
export {
  type SegyBinaryHeader,
  type BinaryFieldName,
  BINARY_FIELDS,
  TRACE,
  applyScalar,
  binaryFieldLabel,
} from './layout';
export { type TextEncoding, detectTextEncoding, decodeText, encodeText, textLines, cardImages } from './text';
export { type SegyOpenOptions, type SegyInfo, type DtSource, DT_MIN_NS, DT_MAX_NS, MAX_SAMPLES } from './headers';
export { type SegyTraceHeaders, type SegyChunk, SegyReader, openSegy, emptyTraceHeaders, BLOCK_BYTES } from './reader';
export { type SegyWriteSpec, type SegyTraceChunk, SegyWriter, openSegyWriter, writeSegy } from './writer';
export { type ReadSegyLineOptions, type SegyLine, type CoordinateSource, readSegyLine, writeSegyLine } from './segy-line';
