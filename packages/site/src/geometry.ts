import { medianInPlace } from '@lamina/stats';
/** Plan geometry of a positioned line: what slicing, screening and the viewer need about it. */
export interface LineGeometry {
  nTraces: number;
  /** Path length along the traces, metres. */
  lengthM: number;
  /** Straight distance first to last trace, metres. */
  chordM: number;
  /** Unit vector first -> last trace in the CRS plane (x east, y north for the usual projected CRSs). */
  direction: [number, number];
  /** Azimuth of `direction`, degrees clockwise from grid north, in [0, 360). */
  azimuthDeg: number;
  /** Median distance between consecutive traces, metres. */
  traceSpacingM: number;
  /** [minX, minY, maxX, maxY] in CRS units. */
  bbox: [number, number, number, number];
}

/**
 * Length, direction, spacing and extent of a line from its trace positions (CRS units).
 * @param metresPerUnit `site.crs.metresPerUnit` (required: a US-feet site would otherwise report feet as metres)
 */
export function lineGeometry(line: { x: ArrayLike<number>; y: ArrayLike<number> }, metresPerUnit: number): LineGeometry {
  const { x, y } = line;
  const n = x.length;
  const steps = new Float64Array(Math.max(0, n - 1));
  let length = 0;
  let minX = Infinity;
  let minY = Infinity;
  let maxX = -Infinity;
  let maxY = -Infinity;
  for (let t = 0; t < n; t++) {
    const xt = x[t] as number;
    const yt = y[t] as number;
    if (xt < minX) minX = xt;
    if (xt > maxX) maxX = xt;
    if (yt < minY) minY = yt;
    if (yt > maxY) maxY = yt;
    if (t > 0) {
      const d = Math.hypot(xt - (x[t - 1] as number), yt - (y[t - 1] as number));
      steps[t - 1] = d;
      length += d;
    }
  }
  const dx = n > 1 ? (x[n - 1] as number) - (x[0] as number) : 0;
  const dy = n > 1 ? (y[n - 1] as number) - (y[0] as number) : 0;
  const chord = Math.hypot(dx, dy);
  const direction: [number, number] = chord > 0 ? [dx / chord, dy / chord] : [Number.NaN, Number.NaN];
  const az = chord > 0 ? ((Math.atan2(dx, dy) * 180) / Math.PI + 360) % 360 : Number.NaN;
  const median = steps.length === 0 ? 0 : medianInPlace(steps);
  return {
    nTraces: n,
    lengthM: length * metresPerUnit,
    chordM: chord * metresPerUnit,
    direction,
    azimuthDeg: az,
    traceSpacingM: median * metresPerUnit,
    bbox: [minX, minY, maxX, maxY],
  };
}
