import { C_M_PER_NS, type VelocityReport } from '@lamina/velocity';
import type { SliceStack } from '@lamina/slices';
import { airRadiusM, airRate } from './physics';

export interface Line {
  id: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
}

export interface ToleranceOptions {
  /** Antenna centre frequency, MHz: the pulse length (taken as one period, common practice, no source) widens the locus. */
  antennaFrequencyMHz?: number;
  /** Antenna separation, m, for bistatic depth conversion. @default 0 */
  antennaSeparationM?: number;
  /** Plan position uncertainty of the slices, m. @default max(cell size, half the median line spacing) */
  positionToleranceM?: number;
}

/** Per-slice locus radius and tolerance. */
export interface SliceLocus {
  index: number;
  depthM: number;
  topM: number;
  bottomM: number;
  /** Predicted distance to the reflector, m. */
  radiusM: number;
  /** dr/dz = c / v at this depth. */
  rate: number;
  /** Half the radial width of the band the slice window and pulse cover, m. */
  bandHalfM: number;
  /** Tolerance on a member's distance to the feature, m (band, position and velocity terms in quadrature). */
  toleranceM: number;
}

/** Median spacing between neighbouring survey lines, metres (distance from each line's middle trace to the nearest other line). */
export function lineSpacingM(lines: Line[], metresPerUnit: number): number {
  const d: number[] = [];
  for (let i = 0; i < lines.length; i++) {
    const a = lines[i]!;
    const n = a.x.length;
    if (n === 0) continue;
    const mx = a.x[n >> 1]!, my = a.y[n >> 1]!;
    let best = Infinity;
    for (let j = 0; j < lines.length; j++) {
      if (j === i) continue;
      const b = lines[j]!;
      const step = Math.max(1, Math.floor(b.x.length / 2000));
      for (let k = 0; k < b.x.length; k += step) best = Math.min(best, Math.hypot(b.x[k]! - mx, b.y[k]! - my));
    }
    if (Number.isFinite(best)) d.push(best * metresPerUnit);
  }
  if (d.length === 0) return NaN;
  d.sort((p, q) => p - q);
  return d[d.length >> 1]!;
}

export function sliceLoci(stack: SliceStack, velocity: VelocityReport, positionM: number, options: ToleranceOptions = {}): SliceLocus[] {
  const v = velocity.site.velocityMPerNs;
  const sigma = Math.max(0, velocity.site.spreadMPerNs || 0);
  return stack.slices.map((s, index) => {
    const depthM = 0.5 * (s.topM + s.bottomM);
    const rate = airRate(depthM, velocity.model);
    const thick = Math.max(0, s.bottomM - s.topM);
    const pulseM = options.antennaFrequencyMHz ? (C_M_PER_NS * (1000 / options.antennaFrequencyMHz)) / 2 : rate * thick;
    const bandHalfM = 0.5 * (rate * thick + pulseM);
    const radiusM = airRadiusM(depthM, velocity.model, options.antennaSeparationM ?? 0);
    const velM = v > 0 ? (radiusM * sigma) / v : 0;
    return { index, depthM, topM: s.topM, bottomM: s.bottomM, radiusM, rate, bandHalfM, toleranceM: Math.hypot(bandHalfM, positionM, velM) };
  });
}

/** Cells with data in at least one slice. */
export function surveyedMask(stack: SliceStack): Uint8Array {
  const n = stack.grid.width * stack.grid.height;
  const m = new Uint8Array(n);
  for (const s of stack.slices) for (let i = 0; i < n; i++) if (s.values[i] !== stack.grid.nodata && Number.isFinite(s.values[i]!)) m[i] = 1;
  return m;
}
