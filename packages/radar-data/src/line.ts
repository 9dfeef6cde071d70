/**
 * One radar line in memory: a common-offset profile of `nTraces` traces of `nSamples` samples.
 *
 * Layout is trace-major: sample `s` of trace `t` is `data[t * nSamples + s]`, so one trace is a
 * contiguous `subarray` (what SEG-Y stores and what per-trace filters want). Positions are the antenna
 * midpoint of each trace in the site CRS, in the CRS's own units (metres or US survey feet).
 */
export interface RadarLine {
  /** Line id, unique within the site (the file name without extension unless site.json names it). */
  id: string;
  nSamples: number;
  nTraces: number;
  /** Sample interval in nanoseconds. */
  dtNs: number;
  data: Float32Array;
  /** Antenna-midpoint positions in the site CRS (CRS units), one per trace. */
  x: Float64Array;
  y: Float64Array;
  /**
   * Time (ns, from the first sample) of time-zero: the instant the wave leaves the ground surface at the
   * antenna. The simulator writes a pre-trigger offset; after alignment by the time-zero step it is the
   * common value all traces share.
   */
  timeZeroNs: number;
}

export function traceOf(line: RadarLine, t: number): Float32Array {
  return line.data.subarray(t * line.nSamples, (t + 1) * line.nSamples);
}

export function emptyLine(id: string, nTraces: number, nSamples: number, dtNs: number): RadarLine {
  return {
    id,
    nTraces,
    nSamples,
    dtNs,
    data: new Float32Array(nTraces * nSamples),
    x: new Float64Array(nTraces),
    y: new Float64Array(nTraces),
    timeZeroNs: 0,
  };
}
