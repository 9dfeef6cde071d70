export { type RadarLine, traceOf, emptyLine } from './line';
