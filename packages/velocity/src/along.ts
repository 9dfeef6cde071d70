import type { RadarLine } from '@lamina/radar-data';

export interface AlongLineOptions {
  /**
   * Length of the window over which trace positions are smoothed, m: a local straight-line fit of x and y
   * against trace index. Survey lines do not bend within a metre (our own choice, no source). @default 1
   */
  smoothingM?: number;
  /** The window holds at least this many traces. @default 11 */
  minTraces?: number;
}

/**
 * Distance along the line from trace 0, m, from positions smoothed by a local straight-line fit
 * (x and y against trace index over `smoothingM`).
 *
 * Why not the sum of the steps between recorded positions (`alongTrackM` of @lamina/processing): noise
 * of the positions (GPS, a wheel that slips) lengthens every step, on average to about
 * sqrt(d^2 + 4 sigma^2) for a step d and a noise sigma per coordinate, and the stretch grows as the
 * trace spacing shrinks: 1 cm of noise at 2.4 cm spacing makes the line 30 % longer. A hyperbola
 * stretched along the line reads as faster soil (v scales with the stretch, K with its square). A local
 * fit over n traces cuts the noise of each step by about sqrt(12 / n^3) and leaves a straight line at
 * constant speed exact.
 */
export function alongLine(line: RadarLine, metresPerUnit = 1, options: AlongLineOptions = {}): Float64Array {
  const n = line.nTraces;
  const out = new Float64Array(n);
  if (n < 2) return out;
  const x = line.x;
  const y = line.y;
  // Prefix sums of 1, i, i^2, x, i x, y, i y for O(1) local fits.
  const sI = new Float64Array(n + 1);
  const sII = new Float64Array(n + 1);
  const sX = new Float64Array(n + 1);
  const sIX = new Float64Array(n + 1);
  const sY = new Float64Array(n + 1);
  const sIY = new Float64Array(n + 1);
  // Positions relative to trace 0, so large projected coordinates keep their precision.
  const x0 = x[0]!;
  const y0 = y[0]!;
  for (let i = 0; i < n; i++) {
    const xi = x[i]! - x0;
    const yi = y[i]! - y0;
    sI[i + 1] = sI[i]! + i;
    sII[i + 1] = sII[i]! + i * i;
    sX[i + 1] = sX[i]! + xi;
    sIX[i + 1] = sIX[i]! + i * xi;
    sY[i + 1] = sY[i]! + yi;
    sIY[i + 1] = sIY[i]! + i * yi;
  }
  // Window in traces from the median raw step (the noise lengthens it, so the window errs short).
  const steps = new Float64Array(n - 1);
  for (let i = 1; i < n; i++) steps[i - 1] = Math.hypot(x[i]! - x[i - 1]!, y[i]! - y[i - 1]!) * metresPerUnit;
  steps.sort();
  const step = steps[(n - 1) >> 1]!;
  const smoothingM = options.smoothingM ?? 1;
  const width = Math.min(n, Math.max(options.minTraces ?? 11, step > 0 ? Math.round(smoothingM / step) + 1 : n));
  const half = width >> 1;
  const sx = new Float64Array(n);
  const sy = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    // The window slides inside the line at its ends (a one-sided fit, still exact on a straight line).
    const a = Math.max(0, Math.min(n - width, i - half));
    const b = a + width;
    const m = b - a;
    const Si = sI[b]! - sI[a]!;
    const Sii = sII[b]! - sII[a]!;
    const den = m * Sii - Si * Si;
    const fit = (S: Float64Array, SI: Float64Array): number => {
      const Sv = S[b]! - S[a]!;
      const Siv = SI[b]! - SI[a]!;
      if (!(den > 0)) return Sv / m;
      const slope = (m * Siv - Si * Sv) / den;
      return (Sv - slope * Si) / m + slope * i;
    };
    sx[i] = fit(sX, sIX);
    sy[i] = fit(sY, sIY);
  }
  for (let i = 1; i < n; i++) out[i] = out[i - 1]! + Math.hypot(sx[i]! - sx[i - 1]!, sy[i]! - sy[i - 1]!) * metresPerUnit;
  return out;
}

/** Position (site CRS) and nearest trace at distance `offsetM` along the line (linear between traces, extrapolated at the ends). */
export function pointAlong(line: RadarLine, along: Float64Array, offsetM: number): { trace: number; x: number; y: number } {
  const n = line.nTraces;
  if (n === 1) return { trace: 0, x: line.x[0]!, y: line.y[0]! };
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (along[mid]! <= offsetM) lo = mid;
    else hi = mid;
  }
  const span = along[hi]! - along[lo]!;
  const f = span > 0 ? (offsetM - along[lo]!) / span : 0;
  const trace = Math.min(n - 1, Math.max(0, Math.round(lo + f)));
  return { trace, x: line.x[lo]! + f * (line.x[hi]! - line.x[lo]!), y: line.y[lo]! + f * (line.y[hi]! - line.y[lo]!) };
}
