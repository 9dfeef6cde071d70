import * as radarData from '@lamina/radar-data';
import type { HeaderCoordinates } from './positions';

/**
 * The part of @lamina/radar-data's SEG-Y reader this package uses. Written against the reader's planned
 * shape so the site package does not break while the reader lands; results may be sync or async.
 */
export interface SegyReaderLike {
  nSamples: number;
  nTraces: number;
  dtNs: number;
  readTraces(first: number, count: number): Float32Array | Promise<Float32Array>;
  readTraceHeaders(first: number, count: number): HeaderCoordinates | Promise<HeaderCoordinates>;
  close(): void | Promise<void>;
}

export type OpenSegy = (path: string, options?: { sampleIntervalNs?: number }) => SegyReaderLike | Promise<SegyReaderLike>;

/** The reader's `openSegy`, looked up at run time. */
export function defaultOpenSegy(): OpenSegy {
  const open = (radarData as unknown as Record<string, unknown>).openSegy;
  if (typeof open !== 'function') throw new Error('@lamina/radar-data does not export openSegy yet');
  return open as OpenSegy;
}
