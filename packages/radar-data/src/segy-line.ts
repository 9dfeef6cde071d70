/** A whole SEG-Y file as a RadarLine, and a RadarLine as a SEG-Y file. */
import { basename, extname } from 'node:path';
import type { RadarLine } from './line';
import type { SegyInfo, SegyOpenOptions } from './headers';
import { openSegy, type SegyTraceHeaders } from './reader';
import { writeSegy, type SegyWriteSpec } from './writer';

/** Which trace header coordinates fill `x`/`y`. */
export type CoordinateSource = 'cdp' | 'source' | 'group';

export interface ReadSegyLineOptions extends SegyOpenOptions {
  /** Line id. @default the file name without extension */
  id?: string;
  /** @default 'auto': CDP X/Y if any is nonzero, else source, else group */
  coordinates?: CoordinateSource | 'auto';
}

export interface SegyLine {
  /** x/y hold the chosen header coordinates as stored (CRS checks belong to the site package). */
  line: RadarLine;
  headers: SegyTraceHeaders;
  info: SegyInfo;
  textHeader: string;
  extendedTextHeaders: string[];
  /** Which headers filled `line.x`/`line.y`; 'none' when every coordinate is zero. */
  coordinateSource: CoordinateSource | 'none';
}

/** Read a whole line into memory (use `openSegy(...).chunks()` for lines that may not fit). */
export async function readSegyLine(path: string, options: ReadSegyLineOptions = {}): Promise<SegyLine> {
  const reader = await openSegy(path, options);
  try {
    const { nTraces, nSamples } = reader;
    const { data, headers } = await reader.readChunk(0, nTraces);
    const want = options.coordinates ?? 'auto';
    let source: CoordinateSource | 'none' = want === 'auto' ? 'none' : want;
    if (want === 'auto') {
      const any = (a: Float64Array, b: Float64Array) => a.some((v) => v !== 0) || b.some((v) => v !== 0);
      if (any(headers.cdpX, headers.cdpY)) source = 'cdp';
      else if (any(headers.sourceX, headers.sourceY)) source = 'source';
      else if (any(headers.groupX, headers.groupY)) source = 'group';
    }
    const x = source === 'cdp' ? headers.cdpX : source === 'group' ? headers.groupX : headers.sourceX;
    const y = source === 'cdp' ? headers.cdpY : source === 'group' ? headers.groupY : headers.sourceY;
    const line: RadarLine = {
      id: options.id ?? basename(path, extname(path)),
      nSamples,
      nTraces,
      dtNs: reader.dtNs,
      data,
      x: Float64Array.from(x),
      y: Float64Array.from(y),
      timeZeroNs: 0,
    };
    return {
      line, headers, info: reader.info(), textHeader: reader.textHeader,
      extendedTextHeaders: reader.extendedTextHeaders, coordinateSource: source,
    };
  } finally {
    await reader.close();
  }
}

/** Write a RadarLine (x/y into source, group and CDP coordinates). */
export function writeSegyLine(
  path: string,
  line: RadarLine,
  options: Omit<SegyWriteSpec, 'nSamples' | 'dtNs'> = {},
): Promise<{ path: string; nTraces: number; bytes: number }> {
  return writeSegy(path, {
    ...options,
    nSamples: line.nSamples,
    dtNs: line.dtNs,
    traces: { data: line.data.subarray(0, line.nTraces * line.nSamples), x: line.x, y: line.y },
  });
}
