import { openSegy } from '@lamina/radar-data';
import type { HeaderCoordinates } from './positions';

/**
 * The part of @lamina/radar-data's `SegyReader` this package uses; tests may pass another opener of the
 * same shape (`ReadLineOptions.open`).
 */
export interface SegyReaderLike {
  nSamples: number;
  nTraces: number;
  dtNs: number;
  readTraces(first: number, count: number): Float32Array | Promise<Float32Array>;
  readTraceHeaders(first: number, count: number): HeaderCoordinates | Promise<HeaderCoordinates>;
  close(): void | Promise<void>;
}

export type OpenSegy = (path: string, options?: { sampleIntervalNs?: number; name?: string }) => SegyReaderLike | Promise<SegyReaderLike>;

/** @lamina/radar-data's `openSegy`. */
export function defaultOpenSegy(): OpenSegy {
  return openSegy;
}

/**
 * `openSegy` reading with synchronous calls (`syncIo`), for a thread with nothing else to do while it
 * reads (a line worker, a run loading its site): an asynchronous read waits for a turn of the
 * process-wide file thread pool, long when the cores are busy. The same bytes either way.
 */
export function syncOpenSegy(): OpenSegy {
  return (path, options) => openSegy(path, { ...options, syncIo: true });
}
