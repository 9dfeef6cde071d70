import { medianHigh } from '@lamina/stats';
import { C_M_PER_NS, type VelocityReport } from '@lamina/velocity';
import { axialDeg, directionGroups, nearestOtherLine, type LinePositions, type LineQueries, type SliceGrid, type SliceStack } from '@lamina/slices';
import { airRadiusM, airRate } from './physics';
import type { Reflector } from './reflectors';

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

/**
 * The locus of a reflector at clearance `heightM` above the ground (an overhead cable, beam, canopy
 * edge or branch) in a slice whose air-wave slant range is `l.radiusM` = R: the air wave travels the
 * slant distance, so the plan distance is r = sqrt(R^2 - h^2), and a band of slant half-width b maps to
 * the plan band [sqrt((R - b)^2 - h^2), sqrt((R + b)^2 - h^2)] (wider than b near the onset, where
 * dr/dR = R / r grows). The object shows first at R = h, i.e. at slice depth z = h v / c. Returns the
 * slice's own locus for a standing object (h = 0), and one with `radiusM` NaN where R + b <= h (no
 * air wave reaches that slice yet).
 */
export function locusAtHeight(l: SliceLocus, heightM: number | undefined): SliceLocus {
  const h = heightM ?? 0;
  if (!(h > 0)) return l;
  const R = l.radiusM;
  const plan = (s: number) => Math.sqrt(Math.max(0, s * s - h * h));
  const half = (b: number, r: number) => Math.max(plan(R + b) - r, r - plan(Math.max(0, R - b)));
  if (!(R + l.toleranceM > h)) return { ...l, radiusM: NaN, rate: NaN };
  const radiusM = plan(R);
  return {
    ...l,
    radiusM,
    rate: radiusM > 0 ? (l.rate * R) / radiusM : Infinity,
    bandHalfM: half(l.bandHalfM, radiusM),
    toleranceM: half(l.toleranceM, radiusM),
  };
}

/** Median spacing between neighbouring survey lines, metres (distance from each line's middle trace to the nearest other line). */
export function lineSpacingM(lines: Line[], metresPerUnit: number): number {
  const lineStarts = new Int32Array(lines.length + 1);
  lines.forEach((l, i) => (lineStarts[i + 1] = lineStarts[i]! + l.x.length));
  return lineSpacingOfM(
    {
      lineStarts,
      line: (i) => {
        const l = lines[i]!;
        const c = new Float64Array(2 * l.x.length);
        for (let t = 0; t < l.x.length; t++) {
          c[2 * t] = l.x[t]!;
          c[2 * t + 1] = l.y[t]!;
        }
        return c;
      },
    },
    metresPerUnit,
  );
}

/**
 * `lineSpacingM` over positions read one line at a time (so a caller can stream them from disk): the
 * exact distance from each line's middle trace to the nearest trace of another line, every
 * max(1, n / 2000)-th trace of a line of n traces taken.
 */
export function lineSpacingOfM(source: LinePositions, metresPerUnit: number): number {
  const { lineStarts } = source;
  const nLines = lineStarts.length - 1;
  const queries: LineQueries = { x: [], y: [], line: [] };
  const axes: number[] = [];
  let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
  for (let l = 0; l < nLines; l++) {
    const c = source.line(l);
    const n = c.length / 2;
    axes.push(axialDeg(c));
    if (n === 0) continue;
    for (let i = 0; i < c.length; i += 2) {
      minX = Math.min(minX, c[i]!);
      maxX = Math.max(maxX, c[i]!);
      minY = Math.min(minY, c[i + 1]!);
      maxY = Math.max(maxY, c[i + 1]!);
    }
    queries.x.push(c[2 * (n >> 1)]!);
    queries.y.push(c[2 * (n >> 1) + 1]!);
    queries.line.push(l);
  }
  if (queries.x.length === 0) return NaN;
  const extent = Math.max(maxX - minX, maxY - minY);
  const best = nearestOtherLine(source, queries, {
    startRadius: Math.max(extent / 256, 1e-9),
    bounds: [minX, minY, maxX, maxY],
    stride: (l) => Math.max(1, Math.floor((lineStarts[l + 1]! - lineStarts[l]!) / 2000)),
    // a grid in two directions: the spacing within each direction, not the crossings
    group: directionGroups(axes),
  });
  const d = Array.from(best).filter((v) => v < Infinity).map((v) => v * metresPerUnit);
  if (d.length === 0) return NaN;
  return medianHigh(d);
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

/** What the tests share: grid, loci per slice, reflectors with their distance fields. */
export interface ScreenContext {
  grid: SliceGrid;
  metresPerUnit: number;
  loci: SliceLocus[];
  reflectors: Reflector[];
  /** Distance field (m) per reflector, null where the reflector is too far from the survey to matter. */
  fields: (Float32Array | null)[];
  positionM: number;
  /** Robust scores of the stack made before background removal, per slice (optional evidence). */
  beforeScores?: Float32Array[];
  /** Angle within which a linear anomaly is parallel to an edge, degrees. */
  parallelToleranceDeg: number;
  /** Relative tolerance on a move-out rate. */
  rateTolerance: number;
  /**
   * Set when the stack was migrated along the lines: k2 = (v / c)^2 of the migration velocity and the
   * survey direction (unit vector, site CRS axes). The air-wave loci then lie nearer their objects (cellResidual).
   */
  migration?: { k2: number; ux: number; uy: number };
  /**
   * Set for anomalies built line by line (the strips found before background removal): every member
   * lies along one survey line, so its plan position cannot move from slice to slice by less than a
   * line spacing, and the move-out slope is only measurable over more depth than one line's air event
   * spans (see slopeEvidence).
   */
  lineBound?: boolean;
  /**
   * Strips found before background removal that lie in a planar group (`planarGroups`: strips on
   * neighbouring lines together wider than a utility): the azimuth of the band their group makes in the
   * slice, by member id, where that band is linear. A strip runs along its own line; a flat event
   * crossing the lines obliquely (a cable's or a wall's air wave) shows as such strips side by side, and
   * it is their band that runs parallel to the object (edgeEvidence).
   */
  groupDirectionDeg?: Map<number, number>;
}

/** A reflector's locus in slice k (an overhead object's lies nearer and wider: locusAtHeight). */
export function locusOf(ctx: ScreenContext, refl: Reflector, k: number): SliceLocus {
  return locusAtHeight(ctx.loci[k]!, refl.heightM);
}

