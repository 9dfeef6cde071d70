import { MAX_UTILITY_DIAMETER_M } from '@lamina/constants';
import { quantile } from '@lamina/stats';
import { sharedCells } from './link';
import type { Anomaly3D, Member, Shape } from './types';

/** What an anomaly is taken to be (anomalies.geojson `class`). */
export type AnomalyClass = 'utility' | 'structure' | 'layer' | 'clutter' | 'above-ground';

/** The survey and soil an anomaly's size is judged against. */
export interface ClassifyContext {
  /** Soil velocity, m/ns. */
  velocityMPerNs: number;
  /** Antenna centre frequency, MHz. */
  frequencyMHz: number;
  /** Median line spacing, m. */
  lineSpacingM: number;
  /** Depth of the near-surface (direct and ground wave) zone, m (`nearSurfaceDepthM` of @lamina/slices). */
  nearSurfaceM: number;
  /** Grid cell size, m. */
  cellM: number;
  /** Metres per site CRS unit (members' centroids are in site units). @default 1 */
  metresPerUnit?: number;
  /**
   * Azimuths of the survey's lines, degrees clockwise from grid north in [0, 180) (one per direction is
   * enough; a two-direction grid has two). @default none: no along-line strip is recognised
   */
  lineAzimuthsDeg?: readonly number[];
}

export interface ClassifyOptions {
  /** Largest utility diameter, m (wider linear objects are culverts or structures). @default `MAX_UTILITY_DIAMETER_M` of @lamina/constants, 1.5 (common practice, no source) */
  maxUtilityDiameterM?: number;
  /** Largest compact structure (footing, tank, vault, grave), m. @default 6 (common practice, no source) */
  maxStructureM?: number;
  /** An echo lies below its object sharing at least this fraction of the smaller one's cells (same plan position). @default 0.6 */
  echoOverlap?: number;
  /** Lines an object in the near-surface zone must cross to be kept (with deeper members). @default 3 */
  nearSurfaceLines?: number;
  /**
   * A slice counts as below the near-surface zone when no more than this fraction of its thickness lies
   * inside the zone. Half (its mid-depth below the zone): on the TUNE half of the field bench
   * (2026-12-03) a tenth took 45 near-surface targets that matched nothing, but also a 100 MHz scene's
   * sewer 0.35-0.63 m deep, whose slice reached a third into the zone. @default 0.5
   */
  nearSurfaceOverlap?: number;
  /**
   * Take as near-surface clutter an anomaly that starts in the near-surface zone, is both strongest and
   * largest inside it, and is no longer than a point scatterer's response reaching its bottom
   * (`isZoneResidue`). @default true
   */
  zoneResidue?: boolean;
  /** Largest angle between a strip and a survey line for the strip to run along that line, degrees. @default 15 */
  alongLineDeg?: number;
  /**
   * Point-sized anomalies (`isPointSized`) are the site's point scatterers (stones, roots crossed) unless
   * their strength lies above the upper Tukey fence, Q3 + 1.5 IQR, of at least this many of them (an
   * outlier of the population: a small man-made object, kept as a structure); with fewer, all of them
   * stay structures (no population to be weak against). @default 5
   */
  pointPopulationMin?: number;
  /** Tukey's fence factor k of Q3 + k IQR (1.5, Tukey 1977: the usual "outside" fence). @default 1.5 */
  pointFenceIqr?: number;
  /**
   * Shortest a linear anomaly may be and still be a utility when no other linear anomaly lies in line
   * with it (`inLineWith`): a utility runs on, a root or a stone's smear does not. Chosen on the field
   * bench's TUNE populations of random scenes (odd seeds 1-95 and 145-239, 2026-12-05: 1.5, 2, 2.5 and 3 m
   * tried; 2 m took the most unmatched targets for the least utility length), not from physics. 0 turns the
   * rule off. @default 2
   */
  minUtilityLengthM?: number;
}

/** Angle between two axes given as azimuths in degrees (no heading), in [0, 90]. */
export function axisDiffDeg(a: number, b: number): number {
  const d = Math.abs(a - b) % 180;
  return Math.min(d, 180 - d);
}

/** Largest angle between two pieces of one utility, degrees (`joinAlignedPieces`, `inLineWith`; common practice, no source). */
export const IN_LINE_ANGLE_DEG = 20;

export interface Classified {
  class: AnomalyClass;
  /** Why, in words (for the viewer and the report). */
  reason: string;
  /** Index of the object this anomaly repeats below itself (ringing, multiples), if one. */
  echoOf?: number;
}

/**
 * First Fresnel zone radius of a normal-incidence reflection at depth z, m: sqrt(lambda z / 2) with
 * lambda = v / f (from memory: the usual two-way form, e.g. Sheriff and Geldart, Exploration
 * Seismology). It bounds how wide a reflector's response is before focusing.
 */
export function fresnelRadiusM(depthM: number, velocityMPerNs: number, frequencyMHz: number): number {
  const lambda = (1000 * velocityMPerNs) / frequencyMHz;
  return Math.sqrt((lambda * Math.max(depthM, 0)) / 2);
}

/**
 * Widest an anomaly seen on a single line may look, m: gridding spreads a line's values halfway to its
 * neighbours on each side (one line spacing in all), and cells round it up by one cell.
 */
export function oneLineWidthM(lineSpacingM: number, cellM: number): number {
  return lineSpacingM + cellM;
}

/**
 * Widest a strip drawn out along a single line may look across it, m: the gridding's search radius
 * across the lines is one line spacing on either side, so two spacings and a cell (`isOneLineStrip`,
 * and the pieces drawn along a line that `joinAlignedPieces` takes).
 */
export function oneLineFootprintM(lineSpacingM: number, cellM: number): number {
  return 2 * lineSpacingM + cellM;
}

/** Widest a utility at depth z may look, m: its diameter plus the Fresnel zone, plus one line spacing of across-line sampling. */
export function maxUtilityWidthM(depthM: number, ctx: ClassifyContext, options: ClassifyOptions = {}): number {
  return (options.maxUtilityDiameterM ?? MAX_UTILITY_DIAMETER_M) + 2 * fresnelRadiusM(depthM, ctx.velocityMPerNs, ctx.frequencyMHz) + ctx.lineSpacingM;
}

/** Largest a compact structure at depth z may look, m: its size plus the Fresnel zone and one line spacing. */
export function maxStructureExtentM(depthM: number, ctx: ClassifyContext, options: ClassifyOptions = {}): number {
  return (options.maxStructureM ?? 6) + 2 * fresnelRadiusM(depthM, ctx.velocityMPerNs, ctx.frequencyMHz) + ctx.lineSpacingM;
}

/**
 * Too large for any object at depth z: longer than a structure and wider than a utility, and, when
 * linear (a band), wider than a structure too: a band a few metres wide along a utility is a utility
 * with its surroundings, a layer spreads both ways (a gently dipping one crosses a slice in a band as
 * wide as the slice thickness over the dip, metres).
 */
export function isExtensive(shape: Shape, depthM: number, ctx: ClassifyContext, options: ClassifyOptions = {}): boolean {
  const s = maxStructureExtentM(depthM, ctx, options);
  return shape.lengthM > s && shape.widthM > maxUtilityWidthM(depthM, ctx, options) && (shape.kind !== 'linear' || shape.widthM > s);
}

/**
 * Widest a utility running along the survey lines may look across them within one slice, m. A cylinder
 * of radius R (half the largest utility diameter, `maxUtilityDiameterM`) with its top at depth z, seen
 * from a line at lateral offset d, reflects from its surface at distance sqrt((z + R)^2 + d^2) - R (the
 * normal through its axis); that stays inside the slice of thickness dz below z while
 * d <= sqrt(2 (z + R) dz + dz^2). Both sides, plus one line spacing of sampling and a cell. A flat
 * reflector is seen in the same slice on lines further apart than that: a layer.
 */
export function sameSliceWidthM(topM: number, thicknessM: number, ctx: ClassifyContext, options: ClassifyOptions = {}): number {
  // a point's footprint (`pointFootprintM`) at the depth of the cylinder's axis
  return pointFootprintM(Math.max(topM, 0) + (options.maxUtilityDiameterM ?? MAX_UTILITY_DIAMETER_M) / 2, thicknessM, ctx);
}

/**
 * Depth of one period of the pulse at two-way time, m: v / (2 f) (v m/ns, f MHz). A GPR pulse lasts
 * about one period after the wavelet's onset (common practice, no source).
 */
export function pulseDepthM(ctx: ClassifyContext): number {
  return (1000 * ctx.velocityMPerNs) / (2 * ctx.frequencyMHz);
}

/**
 * Widest a point scatterer (a stone, a root crossed by the lines) at depth z may look in a slice of
 * thickness dz, m. Migration runs along each line, so across the lines its diffraction keeps its move-out:
 * it lies in the slice and the pulse after it (e = dz + one pulse, `pulseDepthM`) out to the offset y
 * where sqrt(z^2 + y^2) = z + e, y = sqrt(2 z e + e^2), on either side; plus one line spacing of sampling
 * across the lines and one cell. A survey in two directions leaves that extent along both, so it bounds
 * the length as well as the width.
 */
export function pointFootprintM(depthM: number, thicknessM: number, ctx: ClassifyContext): number {
  return 2 * reachM(Math.max(depthM, 0), thicknessM + pulseDepthM(ctx)) + ctx.lineSpacingM + ctx.cellM;
}

/** Lateral offset y at which a reflection from depth z arrives from z + e: sqrt(z^2 + y^2) = z + e, y = sqrt(2 z e + e^2), m. */
function reachM(z: number, e: number): number {
  return Math.sqrt(2 * z * e + e * e);
}

/**
 * An anomaly that starts inside the near-surface zone and fades below it: its strongest member and its
 * largest member both lie in slices inside the zone (`zone`, the others `deep`), and it is no longer
 * than a point scatterer's response that reaches the bottom of its deepest slice (`pointFootprintM` at
 * that depth). A buried object whose top the zone's slices catch grows or holds below the zone (its
 * body, its diffraction flanks widening with depth) or runs across several point footprints (a pipe);
 * what is biggest and strongest in the zone and small is the zone's own: the direct and ground wave's
 * residue where coupling changes, or a shallow stone or root inside the zone. The near-surface rule of
 * `classifyAnomalies` (no targets from the zone unless coherent across several lines and deeper slices).
 */
export function isZoneResidue(a: Anomaly3D, zone: readonly Member[], deep: readonly Member[], ctx: ClassifyContext): boolean {
  if (zone.length === 0 || deep.length === 0) return false;
  const most = (ms: readonly Member[], f: (m: Member) => number) => ms.reduce((best, m) => Math.max(best, f(m)), -Infinity);
  if (!(most(zone, (m) => m.strengthDb) > most(deep, (m) => m.strengthDb))) return false;
  if (!(most(zone, (m) => m.areaM2) > most(deep, (m) => m.areaM2))) return false;
  return a.shape.lengthM <= pointFootprintM(a.depthBottomM, thickestSliceM(a), ctx);
}

/** Thickness of the anomaly's thickest slice, m. */
function thickestSliceM(a: Anomaly3D): number {
  let t = 0;
  for (const m of a.members) t = Math.max(t, m.bottomM - m.topM);
  return t;
}

/**
 * No thicker than one pulse (`pulseDepthM`) plus its thickest slice, within a millimetre: slices are
 * often one pulse thick, so two of them meet the bound exactly and rounding must not decide.
 */
function isOnePulseThick(a: Anomaly3D, ctx: ClassifyContext): boolean {
  return a.depthBottomM - a.depthTopM <= pulseDepthM(ctx) + thickestSliceM(a) + 1e-3;
}

/**
 * Tukey's upper fence Q3 + k IQR of `values` (k = `pointFenceIqr`), or undefined with fewer than
 * `pointPopulationMin` of them (no population to be an outlier of).
 */
function upperFence(values: number[], options: ClassifyOptions): number | undefined {
  if (values.length < (options.pointPopulationMin ?? 5)) return undefined;
  const q1 = quantile(values, 0.25), q3 = quantile(values, 0.75);
  return q3 + (options.pointFenceIqr ?? 1.5) * (q3 - q1);
}

/**
 * Deepest a point scatterer's response reaches below its top z, m: on the lines furthest across its
 * footprint (half of `pointFootprintM` away) its diffraction arrives at sqrt(z^2 + (F/2)^2), and lasts one
 * pulse (`pulseDepthM`) after that; one slice (the thickest) more for the slicing. A stone's response is
 * thicker than one pulse because migration runs along the lines only: across them it keeps its move-out.
 */
export function pointDepthExtentM(depthM: number, thicknessM: number, ctx: ClassifyContext): number {
  const z = Math.max(depthM, 0), h = pointFootprintM(z, thicknessM, ctx) / 2;
  return Math.sqrt(z * z + h * h) - z + pulseDepthM(ctx) + thicknessM;
}

/**
 * An anomaly no longer than a point scatterer's response at its depth (`pointFootprintM`, from the top
 * of its first slice or of the zone below the near-surface zone, whichever is deeper) in any direction,
 * and no deeper than that response reaches (`pointDepthExtentM`): at the survey's resolution it may be a
 * stone, a root or a small object, and the site's population of such anomalies decides
 * (`classifyAnomalies`). The footprint across the lines is the larger one (migration focuses along
 * them), so it bounds a piece drawn out along a line as well.
 */
export function isPointSized(a: Anomaly3D, ctx: ClassifyContext): boolean {
  if (a.members.length === 0) return false;
  const r = pointResponseOf(a, ctx);
  return a.shape.lengthM <= r.acrossM && a.depthBottomM - a.depthTopM <= r.deepM + 1e-3;
}

/**
 * A point scatterer's response at an anomaly's depth (the top of its first slice or of the zone below
 * the near-surface zone, whichever is deeper) for its thickest slice: how far across (`pointFootprintM`)
 * and how deep (`pointDepthExtentM`) it reaches.
 */
function pointResponseOf(a: Anomaly3D, ctx: ClassifyContext): { acrossM: number; deepM: number } {
  const z = Math.max(a.depthTopM, ctx.nearSurfaceM), th = thickestSliceM(a);
  return { acrossM: pointFootprintM(z, th, ctx), deepM: pointDepthExtentM(z, th, ctx) };
}

/**
 * A piece a utility's response leaves where it breaks up (`joinAlignedPieces`' `alsoJoinable`): no longer
 * than a point scatterer's response at its depth (`pointFootprintM`), no thicker than one pulse plus one
 * slice, and, when linear, running across the lines (further than 45 degrees from every line direction:
 * migration focuses a piece along the lines). Narrower than `isPointSized`: a compact object beside a
 * pipe that reaches deeper slices is an object of its own, not a piece of the pipe.
 */
export function isPointPiece(a: Anomaly3D, ctx: ClassifyContext): boolean {
  if (a.members.length === 0 || !isOnePulseThick(a, ctx)) return false;
  if (a.shape.kind === 'linear' && !(axisAngleDeg(a.shape.directionDeg, ctx.lineAzimuthsDeg ?? []) > 45)) return false;
  return a.shape.lengthM <= pointResponseOf(a, ctx).acrossM;
}

/** Smallest angle between an azimuth and any of `azimuths` (all modulo 180 degrees), degrees. */
export function axisAngleDeg(az: number, azimuths: readonly number[]): number {
  let best = Infinity;
  for (const b of azimuths) best = Math.min(best, axisDiffDeg(az, b));
  return best;
}

/**
 * A linear anomaly that runs along one survey line and is seen on that line only, at a depth where
 * anything buried would be seen on the neighbouring lines too. Two tests, either suffices:
 * - no wider than the line spacing, where a point object's response is wider: in a slice half a
 *   wavelength thick a point object shows on the lines within its first Fresnel zone radius (beyond it
 *   its diffraction arrives more than a quarter period late and falls in the next slice), so its
 *   response is at least 2 rF wide, less one line spacing lost to the sampling across the lines;
 * - no wider than one line's gridded footprint (the gridding's search radius across the lines is one
 *   line spacing on either side: 2 spacings and a cell), where an object running along the lines would
 *   reach the neighbouring lines within the slice: at lateral offset d its reflection comes from
 *   sqrt(z^2 + d^2), inside a slice of thickness dz from its top z for d < sqrt(2 z dz + dz^2), so it shows
 *   on both neighbours when that exceeds the line spacing.
 * A strip narrower than that is a per-line artefact: a layer edge or a patchy layer left by that line's
 * background removal, a change of coupling or of time-zero along the line.
 */
export function isOneLineStrip(a: Anomaly3D, ctx: ClassifyContext, options: ClassifyOptions = {}): boolean {
  const azimuths = ctx.lineAzimuthsDeg ?? [];
  if (a.shape.kind !== 'linear' || azimuths.length === 0 || !(ctx.lineSpacingM > 0)) return false;
  if (axisAngleDeg(a.shape.directionDeg, azimuths) > (options.alongLineDeg ?? 15)) return false;
  const rF = fresnelRadiusM(0.5 * (a.depthTopM + a.depthBottomM), ctx.velocityMPerNs, ctx.frequencyMHz);
  if (a.shape.widthM <= ctx.lineSpacingM && 2 * rF - ctx.lineSpacingM > a.shape.widthM) return true;
  if (a.shape.widthM > oneLineFootprintM(ctx.lineSpacingM, ctx.cellM)) return false;
  return alongLineReachM(a, ctx) > ctx.lineSpacingM;
}

/** How far across the lines an object running along them at the anomaly's top still falls inside its thickest slice, m: sqrt(2 z dz + dz^2) (`isOneLineStrip`). */
export function alongLineReachM(a: Anomaly3D, ctx: ClassifyContext): number {
  return reachM(Math.max(a.depthTopM, ctx.nearSurfaceM), thickestSliceM(a));
}

/**
 * The class of each anomaly, in this order of rules:
 * - `above-ground`: the screening's verdict (its evidence stays on the feature);
 * - `clutter` (near surface): no member in a slice below the direct- and ground-wave zone (a slice
 *   reaching into the zone by more than `nearSurfaceOverlap` of its thickness is inside it), or members
 *   there and below that cross fewer than `nearSurfaceLines` lines (reach less than that many spacings
 *   less one across the lines, `acrossLinesM`: a strip along one line crosses one), or strongest and largest inside the
 *   zone and no longer than a point's response down to its bottom (`isZoneResidue`);
 * - `layer` (planar): flat along its line (found before background removal) and part of a group of
 *   such strips on neighbouring lines too large for any object (the caller's `planar`);
 * - echo: sharing at least `echoOverlap` of the smaller one's cells with a stronger subsurface anomaly that ends above it
 *   (same plan position, later time, weaker: ringing or a multiple): it takes that object's class and
 *   gets `echoOf`;
 * - `layer`: too large for any object (`isExtensive`: a laterally extensive reflector);
 * - `clutter` (one-line strip): linear along a survey line, narrower than a buried object's response
 *   at its depth (`isOneLineStrip`), unless the lines of a second survey direction that cross it record
 *   it too (the caller's `crossed`: screening's `CrossingLines`);
 * - `utility`: linear and no wider than a utility may be;
 * - `clutter` (point-like): compact, seen on one line only (`oneLineWidthM`), spanning at most two
 *   slices (one pulse) — a stone or a root at the survey's resolution;
 * - `clutter` (point-sized): a structure or a utility no larger than a point scatterer's response in
 *   length and depth (`isPointSized`) and not an outlier of the site's population of such anomalies
 *   by strength (`pointPopulationMin`, Tukey's upper fence); the outliers keep their class (compact ones
 *   as structures), and so do all of them when there are too few to judge;
 * - `structure`: the other compact anomalies (a footing or a tank is wider than a point's response, or thick);
 * - `clutter` (short, in line with nothing): a utility shorter than `minUtilityLengthM` that no other
 *   linear subsurface anomaly continues (`inLineWith`).
 */
export function classifyAnomalies(items: { anomaly: Anomaly3D; aboveGround: boolean; planar?: boolean; crossed?: boolean }[], ctx: ClassifyContext, options: ClassifyOptions = {}): Classified[] {
  const lines = options.nearSurfaceLines ?? 3;
  const oneLine = new Set<Anomaly3D>();
  // the zone's residue stays in the populations below (it is what they are made of) but keeps its class
  const zoneResidue = new Set<Anomaly3D>();
  const own = items.map(({ anomaly: a, aboveGround, planar, crossed }): Classified => {
    if (aboveGround) return { class: 'above-ground', reason: 'air-wave screening' };
    const slack = options.nearSurfaceOverlap ?? 0.5;
    const deep = a.members.filter((m) => m.topM >= ctx.nearSurfaceM - slack * (m.bottomM - m.topM));
    if (deep.length === 0) return { class: 'clutter', reason: `inside the near-surface zone (top ${round(ctx.nearSurfaceM)} m): no slice below it` };
    const across = deep.length < a.members.length ? acrossLinesM(a, ctx) : Infinity;
    if (across < (lines - 1) * ctx.lineSpacingM) {
      return { class: 'clutter', reason: `starts in the near-surface zone and crosses fewer than ${lines} lines (${round(across)} m across them, lines ${round(ctx.lineSpacingM)} m apart)` };
    }
    if ((options.zoneResidue ?? true) && isZoneResidue(a, a.members.filter((m) => !deep.includes(m)), deep, ctx)) {
      zoneResidue.add(a);
      return { class: 'clutter', reason: `starts in the near-surface zone (top ${round(ctx.nearSurfaceM)} m), strongest and largest inside it, weaker and smaller below, and no longer than a point scatterer's response down to its bottom (${round(pointFootprintM(a.depthBottomM, thickestSliceM(a), ctx))} m): a shallow stone, a root or the zone's residue` };
    }
    if (planar) return { class: 'layer', reason: 'flat along its line and beside such strips on the neighbouring lines: a planar reflector that background removal takes out of the slices' };
    const z = a.depthBottomM;
    const slices = new Set(a.members.map((m) => m.slice)).size;
    if (isExtensive(a.shape, z, ctx, options)) return { class: 'layer', reason: 'laterally extensive: wider than a utility and longer than a structure' };
    if (a.shape.kind === 'linear' && !crossed && isOneLineStrip(a, ctx, options)) {
      return { class: 'clutter', reason: `a strip along one line where a buried object would show on the next lines too (Fresnel zone ${round(fresnelRadiusM(0.5 * (a.depthTopM + a.depthBottomM), ctx.velocityMPerNs, ctx.frequencyMHz))} m, reach within its slice ${round(alongLineReachM(a, ctx))} m, lines ${round(ctx.lineSpacingM)} m apart)` };
    }
    if (a.shape.kind === 'linear') {
      if (a.shape.widthM <= maxUtilityWidthM(z, ctx, options)) return { class: 'utility', reason: crossed ? 'linear, no wider than a utility, along one set of lines and seen by the lines crossing it' : 'linear, no wider than a utility' };
      return { class: 'structure', reason: 'linear but wider than a utility' };
    }
    if (a.shape.widthM <= oneLineWidthM(ctx.lineSpacingM, ctx.cellM) && slices <= 2) {
      oneLine.add(a);
      return { class: 'clutter', reason: 'point-like: seen on one line, one pulse thick' };
    }
    return { class: 'structure', reason: 'compact, wider than a line spacing or thicker than a pulse' };
  });
  // point-sized structures: the site's point scatterers, but for the outliers of their strengths
  const points = own.flatMap((c, i) => ((c.class === 'structure' || c.class === 'utility') && isPointSized(items[i]!.anomaly, ctx) ? [i] : []));
  // the population: these, the point-like ones seen on one line and the point-sized residue of the zone
  const residue = [...zoneResidue];
  const strengths = [...points.map((i) => items[i]!.anomaly), ...oneLine, ...residue.filter((a) => isPointSized(a, ctx))].map((a) => a.strengthDb).filter(Number.isFinite);
  const fence = upperFence(strengths, options);
  if (fence !== undefined) {
    for (const i of points) {
      const a = items[i]!.anomaly;
      // an outlier keeps its class: a utility stays one, a compact one is a structure (said why)
      if (a.strengthDb > fence && own[i]!.class === 'utility') continue;
      const r = pointResponseOf(a, ctx);
      const size = `${round(r.acrossM)} m across, ${round(r.deepM)} m deep`;
      own[i] = a.strengthDb > fence
        ? { class: 'structure', reason: `point-sized (within a point scatterer's response at its depth, ${size}) but stronger than the site's ${strengths.length} point-sized anomalies (above ${round(fence)} dB, Tukey's upper fence): a small object` }
        : { class: 'clutter', reason: `point-sized: within a point scatterer's response at its depth (${size}), no stronger than the site's other point-sized anomalies (fence ${round(fence)} dB): a stone, a root or an object too small to tell` };
    }
  }
  // Shallow compact structures: starting inside the near-surface zone and one pulse thick, so not
  // continuing into deeper slices. Where a site has enough of them they are its shallow clutter (stones,
  // roots, rubble, the zone's residue: size tells nothing there), but for the outliers of their strengths.
  const shallow = own.flatMap((c, i) => {
    const a = items[i]!.anomaly;
    return c.class === 'structure' && a.shape.kind !== 'linear' && a.depthTopM < ctx.nearSurfaceM && isOnePulseThick(a, ctx) ? [i] : [];
  });
  const shallowStrengths = [...shallow.map((i) => items[i]!.anomaly), ...residue.filter((a) => a.shape.kind !== 'linear' && isOnePulseThick(a, ctx))].map((a) => a.strengthDb).filter(Number.isFinite);
  const shallowFence = upperFence(shallowStrengths, options);
  if (shallowFence !== undefined) {
    for (const i of shallow) {
      if (items[i]!.anomaly.strengthDb > shallowFence) continue;
      own[i] = { class: 'clutter', reason: `starts in the near-surface zone (top ${round(ctx.nearSurfaceM)} m), one pulse thick, no stronger than the site's ${shallowStrengths.length} such anomalies (fence ${round(shallowFence)} dB): shallow stones, roots or the zone's residue` };
    }
  }
  // Short utilities in line with nothing: a utility runs on (into further pieces, or across the survey);
  // a short linear anomaly that no other continues is a root, a stone's smear or a piece too short to call
  const minLength = options.minUtilityLengthM ?? 2;
  if (minLength > 0) {
    const linear = items.filter((it) => !it.aboveGround && it.anomaly.shape.kind === 'linear').map((it) => it.anomaly);
    const centroids = new Map(linear.map((b) => [b, centroidOf(b)] as const));
    own.forEach((c, i) => {
      const a = items[i]!.anomaly;
      if (c.class !== 'utility' || !(a.shape.lengthM < minLength)) return;
      if (linear.some((b) => b !== a && inLineWith(a, b, ctx, centroids))) return;
      own[i] = { class: 'clutter', reason: `linear but ${round(a.shape.lengthM)} m long, under the ${round(minLength)} m a utility shows, and in line with no other linear anomaly: a root, a stone's smear or a piece too short to call` };
    });
  }
  // echoes: below a stronger object, mostly inside its plan cells
  const overlap = options.echoOverlap ?? 0.6;
  const order = items.map((_, i) => i).sort((p, q) => items[p]!.anomaly.depthTopM - items[q]!.anomaly.depthTopM);
  for (const i of order) {
    const c = own[i]!;
    if (c.class === 'above-ground' || c.class === 'layer') continue;
    const a = items[i]!.anomaly;
    for (const j of order) {
      const b = items[j]!.anomaly;
      if (b.depthTopM >= a.depthTopM) break;
      const cb = own[j]!;
      if (j === i || cb.class === 'above-ground' || cb.class === 'layer' || cb.class === 'clutter') continue;
      if (b.depthBottomM > a.depthTopM + 1e-9 || !(b.strengthDb > a.strengthDb)) continue;
      if (sharedCells(a.cells, b.cells) >= overlap * Math.min(a.cells.length, b.cells.length)) {
        const root = own[j]!.echoOf ?? j;
        own[i] = { class: own[root]!.class, reason: `echo below ${b.id}: same plan position, later, weaker`, echoOf: root };
        break;
      }
    }
  }
  return own;
}

const round = (v: number) => Math.round(v * 100) / 100;

/**
 * How far an anomaly reaches across the survey lines, m: L |sin d| + W |cos d| for its length L, width W
 * and the angle d between its axis and the lines, for the direction of lines it crosses most (a strip
 * drawn out along one line reaches across no more lines than its width). Without line directions, the
 * larger of its length and width.
 */
export function acrossLinesM(a: Anomaly3D, ctx: ClassifyContext): number {
  const azimuths = ctx.lineAzimuthsDeg ?? [];
  if (azimuths.length === 0) return Math.max(a.shape.lengthM, a.shape.widthM);
  let best = 0;
  for (const b of azimuths) {
    const d = (axisDiffDeg(a.shape.directionDeg, b) * Math.PI) / 180;
    best = Math.max(best, a.shape.lengthM * Math.sin(d) + a.shape.widthM * Math.cos(d));
  }
  return best;
}

/** Plan centroid of an anomaly, site units: its members' centroids weighted by their areas. */
function centroidOf(a: Anomaly3D): [number, number] {
  let x = 0, y = 0, w = 0;
  for (const m of a.members) {
    x += m.areaM2 * m.x;
    y += m.areaM2 * m.y;
    w += m.areaM2;
  }
  return w > 0 ? [x / w, y / w] : [NaN, NaN];
}

/**
 * Whether linear anomaly `a` lies in line with linear anomaly `b`: their directions within
 * `IN_LINE_ANGLE_DEG`, and a's centroid within half b's width plus one line spacing (where the gridding
 * puts a piece of a line it samples once per line) of b's axis, anywhere along it. `centroids`: the
 * anomalies' plan centroids worked out once, where a caller asks of many pairs.
 */
export function inLineWith(a: Anomaly3D, b: Anomaly3D, ctx: ClassifyContext, centroids?: ReadonlyMap<Anomaly3D, [number, number]>): boolean {
  if (axisDiffDeg(a.shape.directionDeg, b.shape.directionDeg) > IN_LINE_ANGLE_DEG) return false;
  const [ax, ay] = centroids?.get(a) ?? centroidOf(a), [bx, by] = centroids?.get(b) ?? centroidOf(b);
  const t = (b.shape.directionDeg * Math.PI) / 180;
  // azimuth clockwise from grid north: the axis runs along (sin t, cos t)
  const acrossM = Math.abs(-(ax - bx) * Math.cos(t) + (ay - by) * Math.sin(t)) * (ctx.metresPerUnit ?? 1);
  return acrossM <= 0.5 * b.shape.widthM + ctx.lineSpacingM;
}
