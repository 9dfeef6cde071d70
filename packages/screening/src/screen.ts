import { medianHigh } from '@lamina/stats';
import {
  buildAnomaly,
  classifyAnomalies,
  extractAnomalies,
  fitNoiseLaw,
  joinAlignedPieces,
  cellShape,
  isExtensive,
  isOneLineStrip,
  isPointPiece,
  maxUtilityWidthM,
  sameSliceWidthM,
  noiseMean,
  traceOutline,
  linkMembers,
  robustScores,
  stationaryChains,
  type Anomaly3D,
  type ClassifyContext,
  type ClassifyOptions,
  type ExtractOptions,
  type Member,
  type Shape,
} from '@lamina/anomalies';
import type { AnomalyProperties } from '@lamina/contracts';
import type { PlanFeature } from '@lamina/site';
import type { SliceGrid, SliceStack } from '@lamina/slices';
import type { VelocityReport } from '@lamina/velocity';
import { separateCrossings } from './crossings';
import { bridgeThroughFields } from './bridges';
import { piecesOfBuried } from './inside-buried';
import { apexLines, carveSoilApexes, soilApexes } from './soil-apexes';
import { alongLineMembers, nearestLineLabels, planarGroups } from './along-line';
import { CrossingLines, type DirectionStack } from './crossing-lines';
import { lineSpacingM, sliceLoci, surveyedMask, type Line, type ToleranceOptions } from './context';
import { combine, WEIGHTS, type Evidence } from './evidence';
import { CAUTION } from '@lamina/constants';
import { forecastLoci } from './forecast';
import { lineToWgs84, outlineToWgs84, pointToWgs84, type FeatureCollection, type GeoJsonFeature, type ToWgs84 } from './geojson';
import { C_M_PER_NS, nearSurfaceDepthM } from '@lamina/velocity';
import { distanceField, reflectorsOf } from './reflectors';
import {
  fitMember,
  beforeBackgroundEvidence,
  bestMoveOut,
  edgeEvidence,
  hyperbolaHits,
  moveOutEvidence,
  postEvidence,
  postTrains,
  slopeEvidence,
  unsurveyedEvidence,
  type MoveOutResult,
} from './checks';
import type { ScreenContext } from './context';
import type { ScreenedAnomaly } from './screened';

export interface ScreenInput {
  stack: SliceStack;
  plan: PlanFeature[];
  velocity: VelocityReport;
  lines: Line[];
  /** Median line spacing, m, as `lineSpacingM` gives it (for callers holding the lines thinned). @default lineSpacingM(lines) */
  lineSpacingM?: number;
  metresPerUnit: number;
  toWgs84: ToWgs84;
  /** Same grid, made before background removal: optional evidence for flat air events. */
  beforeBackgroundStack?: SliceStack;
  /**
   * A survey in two directions: each direction's slices gridded from its own lines alone (same grid),
   * for the one-line strip rule (`CrossingLines`).
   */
  directionStacks?: DirectionStack[];
}

export interface ScreenOptions extends ExtractOptions, ToleranceOptions {
  /** A linear anomaly within this angle of an edge is parallel to it, degrees. @default 15 (common practice, no source) */
  parallelToleranceDeg?: number;
  /** Relative tolerance on a move-out rate against c / v. @default 0.25 (common practice, no source) */
  rateTolerance?: number;
  /**
   * Let the unsurveyed-obstruction test (an anomaly no plan feature explains that moves out at the air
   * rate about a point or a line of its own) count towards the verdict. Off by default: on the TUNE half
   * of the field bench with every plan feature left out of the plans (LAMINA_BENCH_FIELD_UNSURVEYED=1,
   * 34 above-ground objects nobody surveyed, 2026-12-03) it passed on no air-wave anomaly and on 16
   * anomalies of buried pipes (their pieces drift across thin slices), and with complete plans it passed
   * only on buried objects too. Its result stays in the evidence, with no weight, for the reviewer.
   * @default false
   */
  countUnsurveyed?: boolean;
  /** Also screen linear anomalies along the survey lines found only before background removal. @default true */
  alongLineFromBeforeBackground?: boolean;
  /** Shortest such anomaly, m. @default 2 */
  minAlongLineLengthM?: number;
  /**
   * The velocity the stack was migrated with along the lines (m/ns), when it was: migration moves air
   * waves towards their objects (see cellResidual); the stack before background removal is taken as
   * unmigrated. @default undefined (not migrated)
   */
  migrationVelocityMPerNs?: number;
  /** Split an above-ground anomaly's off-locus members into their own anomaly when they span this many slices. @default 2 */
  splitMinSlices?: number;
  /** Forecast the loci (`forecast` of the result); false leaves it empty (a caller screening in bands forecasts once). @default true */
  forecast?: boolean;
  /** Depth of the near-surface zone, m. @default `nearSurfaceDepthM` of the antenna and the velocity model (0 without an antenna frequency) */
  nearSurfaceM?: number;
  /** Bounds of the classes (`classifyAnomalies`). */
  classes?: ClassifyOptions;
  /** Join subsurface pieces that line up in plan and depth into one anomaly (`joinAlignedPieces`). @default true */
  joinPieces?: boolean;
  /** Take back above-ground pieces lying in a buried object's footprint at its depth (`piecesOfBuried`). @default true */
  piecesOfBuried?: boolean;
  /** Screen the objects inside a laterally extensive subsurface anomaly on their own (`objectsOfExtensive`). @default true */
  splitExtensive?: boolean;
  /**
   * A buried object inside an air-wave anomaly (soil-apexes.ts): where the apexes of soil-velocity fits
   * on at least `soilApexLines` survey lines lie on a member in their slice, the member's cells about
   * them are cut out when an air-wave band holds the rest (`carveSoilApexes`); such members count as off
   * the locus in the on/off-locus split, so they are screened apart from the air-wave part; and an
   * anomaly holding them gets the soil-hyperbola item at `soilApexes` (evidence.ts). On by default since
   * session 27 (weighed on four TUNE populations and the held-out halves, DEVELOPERS.md). @default true
   */
  soilApexSplit?: boolean;
  /** Survey lines whose soil-velocity fits must have their apex on a member for `soilApexSplit`. @default 2 */
  soilApexLines?: number;
}

export interface ScreenSummary {
  anomalies: number;
  aboveGround: number;
  subsurface: number;
  slices: number;
  reflectors: number;
  /** Anomalies with a passed item, per test. */
  passedByTest: Record<string, number>;
  positionToleranceM: number;
  lineSpacingM: number;
  /** Members cut where a target crossed an air-wave band. */
  crossingsCut: number;
  /** Linear objects joined through an above-ground field (bridges.ts). */
  bridges: number;
  /** Above-ground pieces taken back as pieces of a buried object (inside-buried.ts). */
  piecesTaken: number;
  elapsedMs: number;
}

export interface ScreenResult {
  /** anomalies.geojson (WGS84), built on first use. */
  readonly anomalies: FeatureCollection;
  /**
   * The same features one at a time, built as they are taken, in the same order: for writing a large
   * collection to disk without holding it (its `caution` member is `CAUTION`).
   */
  anomalyFeatures(): Generator<GeoJsonFeature>;
  forecast: FeatureCollection;
  summary: ScreenSummary;
  /** The screened anomalies in the site CRS (for the targets package and tests). */
  screened: ScreenedAnomaly[];
}

/** The `soilApexes` item of an anomaly whose `members` hold the apexes of soil-velocity fits on several lines. */
function soilApexEvidence(members: Member[], soilLines: Map<number, Set<string>>, minLines: number): Evidence {
  const lines = new Set(members.flatMap((m) => [...(soilLines.get(m.id) ?? [])]));
  const slices = [...new Set(members.map((m) => m.slice))].sort((p, q) => p - q);
  return {
    test: 'soil-hyperbola',
    featureId: null,
    measured: lines.size,
    expected: minLines,
    tolerance: 0,
    units: 'lines',
    passed: true,
    weight: WEIGHTS.soilApexes,
    slice: slices[0]!,
    detail: `soil-velocity hyperbolas on ${lines.size} lines (${[...lines].sort().join(', ')}) with their apexes on its slice ${slices.join(', ')} member${members.length > 1 ? 's' : ''}: no air wave draws a hyperbola at soil velocity`,
  };
}

/**
 * Subsurface one-line strips (`isOneLineStrip`) of a survey in two directions that the crossing lines
 * record too (`CrossingLines`).
 */
function crossedStrips(screened: ScreenedAnomaly[], directionStacks: DirectionStack[] | undefined, lowThreshold: number, classCtx: ClassifyContext, options: ScreenOptions): Set<Anomaly3D> {
  const out = new Set<Anomaly3D>();
  if (!directionStacks?.length) return out;
  const crossing = new CrossingLines(directionStacks, { lowThreshold });
  for (const s of screened) {
    if (s.verdict.origin !== 'above-ground' && isOneLineStrip(s.anomaly, classCtx, options.classes) && crossing.seen(s.anomaly) === true) out.add(s.anomaly);
  }
  return out;
}

/**
 * The pipeline's entry: extract anomalies from the slices, screen them for air-wave reflections
 * against the plan, the velocity model and the fitted hyperbolas, and forecast the loci.
 */
export function screenSite(input: ScreenInput, options: ScreenOptions = {}): ScreenResult {
  const t0 = performance.now();
  const { stack, plan, velocity, lines, metresPerUnit: mpu, toWgs84 } = input;
  const grid = stack.grid;
  const cellM = grid.cellSize * mpu;
  const spacing = input.lineSpacingM ?? lineSpacingM(lines, mpu);
  const positionM = options.positionToleranceM ?? Math.max(cellM, Number.isFinite(spacing) ? 0.5 * spacing : 0);
  const loci = sliceLoci(stack, velocity, positionM, options);
  const reflectors = reflectorsOf(plan, mpu);
  const mask = surveyedMask(stack);
  const deepest = Math.max(0, ...loci.map((l) => l.radiusM + 2 * l.toleranceM));
  const fields = reflectors.map((r) => {
    const f = distanceField(r, grid, mpu);
    let near = Infinity;
    for (let i = 0; i < f.length; i++) if (mask[i] && f[i]! < near) near = f[i]!;
    return near <= deepest ? f : null;
  });
  const f = options.antennaFrequencyMHz;
  const classCtx: ClassifyContext = {
    velocityMPerNs: velocity.site.velocityMPerNs,
    frequencyMHz: f && f > 0 ? f : Infinity,
    // lineSpacingM is taken within each direction of a two-direction grid (context.ts)
    lineSpacingM: Number.isFinite(spacing) ? spacing : cellM,
    nearSurfaceM: options.nearSurfaceM ?? (f && f > 0 ? nearSurfaceDepthM(f, options.antennaSeparationM ?? 0, velocity.model) : 0),
    cellM,
    metresPerUnit: mpu,
    lineAzimuthsDeg: lineAzimuths(lines),
  };
  const isLayer = (shape: Shape, z: number) => isExtensive(shape, z, classCtx, options.classes);
  let beforeScores: Float32Array[] | undefined;
  const bb = input.beforeBackgroundStack;
  if (bb && bb.grid.width === grid.width && bb.grid.height === grid.height && bb.slices.length === stack.slices.length) {
    beforeScores = bb.slices.map((s) => robustScores(s.values, bb.grid.nodata));
  }
  const ctx: ScreenContext = {
    grid,
    metresPerUnit: mpu,
    loci,
    reflectors,
    fields,
    positionM,
    parallelToleranceDeg: options.parallelToleranceDeg ?? 15,
    rateTolerance: options.rateTolerance ?? 0.25,
    ...(beforeScores ? { beforeScores } : {}),
  };
  // the stack before background removal is never migrated: its strips are screened on the plain loci
  // (this context is taken before `migration` is set), and each of them lies along one line (lineBound)
  const ctxUnmigrated: ScreenContext = { ...ctx, lineBound: true };
  const vMig = options.migrationVelocityMPerNs;
  const dir = surveyDirection(lines);
  if (vMig !== undefined && vMig > 0 && vMig < C_M_PER_NS && Number.isFinite(dir)) {
    const az = (dir * Math.PI) / 180;
    ctx.migration = { k2: (vMig / C_M_PER_NS) ** 2, ux: Math.sin(az), uy: Math.cos(az) };
  }
  // utilities crossing in a slice: bands as wide as a utility's response (crossingObjects of
  // @lamina/anomalies); none in the near-surface zone, whose residue runs in bands along the lines
  const bandWidthM = (top: number, z: number) => (top >= classCtx.nearSurfaceM ? maxUtilityWidthM(z, classCtx, options.classes) : NaN);
  // a band along some reflector's locus (a side of a post row's field, a wall's band) is not split off
  const bandOnLocus = (cells: Int32Array, slice: number) => reflectors.some((r, i) => fields[i] !== null && fitMember({ cells, slice }, r, fields[i]!, ctx).passed);
  const extraction = extractAnomalies(stack, { isLayer, bandWidthM, bandOnLocus, ...options, metresPerUnit: mpu });
  // cut buried targets out of the air-wave bands they cross, then link again
  const sep = separateCrossings(extraction.members, stack, extraction.scores, ctx, options.minCells ?? 6, mpu, options.threshold ?? 5);
  // a buried object sharing a member with an air-wave band, where soil-velocity fits put their apexes
  // (`soilApexSplit`): cut out of the member, and screened apart below
  const soilSplit = options.soilApexSplit ?? true;
  const apexOptions = { minLines: options.soilApexLines ?? 2, metresPerUnit: mpu, velocityMPerNs: velocity.site.velocityMPerNs, ...(f && f > 0 ? { frequencyMHz: f } : {}) };
  const apexes = soilSplit ? soilApexes(velocity.hyperbolas ?? [], velocity.model, ctx, apexOptions) : [];
  const carved = apexes.length ? carveSoilApexes(sep.members, apexes, stack, extraction.scores, ctx, { ...apexOptions, minCells: options.minCells ?? 6 }) : { members: sep.members, cut: 0 };
  const members = carved.members;
  const linked =
    sep.cut === 0 && carved.cut === 0
      ? extraction.anomalies
      : linkMembers(members, grid.width * grid.height, grid.cellSize, options).map((g) => buildAnomaly('A', g.map((i) => members[i]!), stack, { ...options, metresPerUnit: mpu }));
  const trains = postTrains(members, ctx);
  const hyper = hyperbolaHits(members, velocity.hyperbolas ?? [], velocity.model, ctx);
  const soilLines = apexLines(members, apexes, stack, apexOptions);
  // (nothing to look up where no member holds soil apexes: every anomaly's evaluation asks)
  const soilMembers = (a: Anomaly3D) => (soilLines.size === 0 ? [] : a.members.filter((m) => soilLines.has(m.id)));
  const evaluate = (a: Anomaly3D, c: ScreenContext = ctx): ScreenedAnomaly & { mo?: MoveOutResult } => {
    const evidence: Evidence[] = [];
    const mo = bestMoveOut(a, c);
    if (mo) {
      evidence.push(...moveOutEvidence(mo, c));
      if (mo.fraction > 0) {
        const s = slopeEvidence(mo, c);
        if (s) evidence.push(s);
        const e = edgeEvidence(mo, c);
        if (e) evidence.push(e);
        const b = beforeBackgroundEvidence(mo, c, options.lowThreshold ?? 3);
        if (b) evidence.push(b);
      }
    }
    const p = postEvidence(a, trains);
    if (p) evidence.push(p);
    const hs = a.members.map((m) => hyper.get(m.id)).filter((e): e is Evidence => !!e);
    const air = hs.find((e) => e.test === 'air-hyperbola');
    const soil = soilMembers(a);
    if (air) evidence.push(air);
    else if (hs[0] && soil.length === 0) evidence.push(hs[0]);
    if (soil.length > 0) evidence.push(soilApexEvidence(soil, soilLines, apexOptions.minLines));
    if (!mo || mo.fraction < 0.5) {
      const u = unsurveyedEvidence(a, c);
      if (u && u.passed && !options.countUnsurveyed) {
        u.weight = 0;
        u.detail += ' (information only: this test is not counted, see countUnsurveyed)';
      }
      if (u) evidence.push(u);
    }
    return { anomaly: a, evidence, verdict: combine(evidence), ...(mo ? { mo } : {}) };
  };
  const splitMin = options.splitMinSlices ?? 2;
  const build = (ms: Member[]) => buildAnomaly('A', ms, stack, { ...options, metresPerUnit: mpu });
  const screened: ScreenedAnomaly[] = [];
  // Linking can join objects whose loci cross (two rings, an air band over a buried pipe). When the
  // members on the best locus make an above-ground anomaly by themselves and the rest span at least
  // splitMin slices, the rest are relinked and screened on their own (twice at most).
  const screenOne = (a: Anomaly3D, depth: number, c: ScreenContext = ctx) => {
    const s = evaluate(a, c);
    const explained = s.evidence.some((e) => e.test === 'unsurveyed-obstruction' && e.passed && e.weight > 0);
    if (depth < 3 && s.mo && !explained) {
      // a member holding soil-velocity apexes on several lines (`soilApexSplit`) is a buried object's,
      // whether or not it lies on a locus: it goes with the off-locus part
      const soil = new Set(soilMembers(a));
      const off = s.mo.fits.filter((f) => !f.passed || soil.has(f.member)).map((f) => f.member);
      const on = s.mo.fits.filter((f) => f.passed && !soil.has(f.member)).map((f) => f.member);
      if (on.length > 0 && off.length > 0 && (new Set(off.map((m) => m.slice)).size >= splitMin || off.some((m) => soil.has(m)))) {
        // Off-locus pieces of one slice each, with the whole anomaly above-ground, are the skirts of
        // the same air event (the pulse's tails just outside the band): they stay with it.
        const groups = relink(off, grid.width * grid.height, grid.cellSize, options);
        const skirtsOnly = groups.every((g) => new Set(g.map((m) => m.slice)).size < splitMin && !g.some((m) => soil.has(m)));
        const onPart = skirtsOnly && s.verdict.origin === 'above-ground' ? undefined : evaluate(build(on), c);
        if (onPart && onPart.verdict.origin === 'above-ground') {
          screened.push(strip(onPart));
          for (const g of groups) screenOne(build(g), depth + 1, c);
          return;
        }
      }
    }
    // a subsurface anomaly too large for any object (a layer and what it joined): the objects inside it
    // are screened on their own (the stack's own anomalies; strips found before background removal lie
    // along one line each)
    if (depth < 3 && c === ctx && s.verdict.origin !== 'above-ground' && options.splitExtensive !== false) {
      const parts = objectsOfExtensive(a, isLayer, build, (ms) => relink(ms, grid.width * grid.height, grid.cellSize, options));
      if (parts.length > 1) {
        for (const part of parts) screenOne(part, depth + 1, c);
        return;
      }
    }
    screened.push(strip(s));
  };
  for (const a of linked) screenOne(a, 0);
  // pipes swallowed by ghost fields: collinear pieces on both sides, joined through the field
  const bridged = bridgeThroughFields(screened, stack, extraction.scores, ctx, { lowThreshold: options.lowThreshold ?? 3 });
  if (bridged.bridges > 0) screened.splice(0, screened.length, ...bridged.screened);
  // flagged pieces of buried objects: inside one's footprint at its depth
  const piecesTaken = options.piecesOfBuried === false ? 0 : piecesOfBuried(screened, (s) => isLayer(s.anomaly.shape, s.anomaly.depthBottomM));
  // Background removal takes out a utility running along the survey lines (a flat event on its line).
  // Strips of the stack made before it, line by line and slice by slice, that no main member holds,
  // linear and along their line (alongLineMembers), are linked across depth, screened too and marked
  // `source: before-background`.
  const fromBefore = new Set<Anomaly3D>();
  // ids of before-background strips that together with their neighbours make a planar reflector
  const planar = new Set<number>();
  if (bb && beforeScores && (options.alongLineFromBeforeBackground ?? true)) {
    const reach = Number.isFinite(spacing) ? Math.max(1, Math.ceil((0.5 * spacing) / cellM)) : 1;
    const labels = nearestLineLabels(grid, lines, reach);
    const strips = alongLineMembers(bb, beforeScores, members, lines, labels, {
      threshold: options.threshold ?? 5,
      lowThreshold: options.lowThreshold ?? 3,
      minCells: options.minCells ?? 6,
      minLengthM: options.minAlongLineLengthM ?? 2,
      parallelToleranceDeg: ctx.parallelToleranceDeg,
      metresPerUnit: mpu,
      firstId: members.length,
    });
    // the strips' strength against the before-background slices' own noise
    const laws = new Map<number, number>();
    for (const m of strips) {
      if (!laws.has(m.slice)) {
        const law = fitNoiseLaw(bb.slices[m.slice]!.values, bb.grid.nodata);
        laws.set(m.slice, law ? noiseMean(law) : Number.NaN);
      }
      m.noiseEnergy = laws.get(m.slice)!;
      m.strengthDb = m.noiseEnergy > 0 ? 10 * Math.log10(Math.max(m.peakValue, 1e-300) / m.noiseEnergy) : Number.NaN;
    }
    const groups = planarGroups(strips, grid, Number.isFinite(spacing) ? spacing / cellM : 1, (acrossM, z, top) => acrossM > Math.min(maxUtilityWidthM(z, classCtx, options.classes), sameSliceWidthM(top, z - top, classCtx, options.classes)), mpu);
    const groupDirectionDeg = new Map<number, number>();
    for (const g of groups) {
      const shape = cellShape(Int32Array.from(new Set(g.flatMap((m) => Array.from(m.cells)))).sort(), grid, { ...options, metresPerUnit: mpu });
      for (const m of g) {
        planar.add(m.id);
        if (shape.kind === 'linear') groupDirectionDeg.set(m.id, shape.directionDeg);
      }
    }
    const ctxStrips: ScreenContext = { ...ctxUnmigrated, groupDirectionDeg };
    for (const g of relink(strips, grid.width * grid.height, grid.cellSize, options)) {
      const before = screened.length;
      screenOne(buildAnomaly('A', g, bb, { ...options, metresPerUnit: mpu }), 0, ctxStrips);
      for (let i = before; i < screened.length; i++) fromBefore.add(screened[i]!.anomaly);
    }
  }
  if (options.joinPieces ?? true) joinPieces(screened, fromBefore, classCtx, grid, stack, options, mpu);
  screened.sort((p, q) => p.anomaly.depthTopM - q.anomaly.depthTopM || p.anomaly.members[0]!.x - q.anomaly.members[0]!.x);
  screened.forEach((s, i) => (s.anomaly.id = `A${String(i + 1).padStart(4, '0')}`));
  const crossed = crossedStrips(screened, input.directionStacks, extraction.lowThreshold, classCtx, options);
  const classes = classifyAnomalies(
    screened.map((s) => ({
      anomaly: s.anomaly,
      aboveGround: s.verdict.origin === 'above-ground',
      planar: planar.size > 0 && 2 * s.anomaly.members.filter((m) => planar.has(m.id)).length >= s.anomaly.members.length,
      crossed: crossed.has(s.anomaly),
    })),
    classCtx,
    options.classes,
  );
  classes.forEach((c, i) => {
    screened[i]!.classified = { class: c.class, reason: c.reason, ...(c.echoOf !== undefined ? { echoOf: screened[c.echoOf]!.anomaly.id } : {}) };
  });

  function* features(): Generator<GeoJsonFeature> {
    for (const sa of screened) {
      const f = anomalyFeature(sa, grid, toWgs84, mpu);
      f.properties.source = fromBefore.has(sa.anomaly) ? 'before-background' : 'slices';
      yield f;
    }
  }
  const forecast: FeatureCollection = options.forecast === false ? { type: 'FeatureCollection', features: [], caution: CAUTION } : siteForecast(plan, velocity, lines, stack, mask, toWgs84, mpu, options);
  const passedByTest: Record<string, number> = {};
  for (const s of screened) for (const t of new Set(s.evidence.filter((e) => e.passed).map((e) => e.test))) passedByTest[t] = (passedByTest[t] ?? 0) + 1;
  const aboveGround = screened.filter((s) => s.verdict.origin === 'above-ground').length;
  const summary: ScreenSummary = {
    anomalies: screened.length,
    aboveGround,
    subsurface: screened.length - aboveGround,
    slices: stack.slices.length,
    reflectors: reflectors.length,
    passedByTest,
    positionToleranceM: positionM,
    lineSpacingM: spacing,
    crossingsCut: sep.cut,
    bridges: bridged.bridges,
    piecesTaken,
    elapsedMs: performance.now() - t0,
  };
  let collection: FeatureCollection | undefined;
  return {
    get anomalies(): FeatureCollection {
      collection ??= { type: 'FeatureCollection', features: [...features()], caution: CAUTION };
      return collection;
    },
    anomalyFeatures: features,
    forecast,
    summary,
    screened,
  };
}

/** The forecast of the loci over a stack's grid, clipped to its surveyed cells (as `screenSite` gives it). */
export function siteForecast(
  plan: PlanFeature[],
  velocity: VelocityReport,
  lines: Line[],
  stack: { grid: SliceGrid; slices: { topM: number; bottomM: number }[] },
  surveyed: Uint8Array,
  toWgs84: ToWgs84,
  metresPerUnit: number,
  options: Pick<ScreenOptions, 'antennaFrequencyMHz' | 'antennaSeparationM'> = {},
): FeatureCollection {
  return forecastLoci(plan, velocity, lines, metresPerUnit, toWgs84, {
    grid: stack.grid,
    surveyed,
    slices: stack.slices.map((s, i) => ({ index: i, topM: s.topM, bottomM: s.bottomM })),
    ...(options.antennaFrequencyMHz ? { antennaFrequencyMHz: options.antennaFrequencyMHz } : {}),
    ...(options.antennaSeparationM ? { antennaSeparationM: options.antennaSeparationM } : {}),
  });
}


/** Azimuth of each line's end-to-end chord, degrees clockwise from grid north in [0, 180) (lines of one point left out). */
function chordAzimuths(lines: ScreenInput['lines']): number[] {
  const az: number[] = [];
  for (const l of lines) {
    const n = l.x.length;
    if (n < 2) continue;
    const dx = l.x[n - 1]! - l.x[0]!, dy = l.y[n - 1]! - l.y[0]!;
    if (dx === 0 && dy === 0) continue;
    az.push(((((Math.atan2(dx, dy) * 180) / Math.PI) % 180) + 180) % 180);
  }
  return az;
}

/** Median azimuth of the lines' end-to-end chords, degrees in [0, 180); NaN without lines. */
function surveyDirection(lines: ScreenInput['lines']): number {
  const az = chordAzimuths(lines);
  return az.length === 0 ? NaN : medianHigh(az);
}

/** The lines' chord azimuths to the whole degree, each once (`ClassifyContext.lineAzimuthsDeg`). */
function lineAzimuths(lines: ScreenInput['lines']): number[] {
  return [...new Set(chordAzimuths(lines).map((a) => Math.round(a) % 180))];
}

/**
 * Joins subsurface anomalies that line up in plan and depth (pieces of one utility) in place: each
 * group becomes one anomaly of all its members, with the evidence and verdict of its largest piece.
 */
function joinPieces(screened: ScreenedAnomaly[], fromBefore: Set<Anomaly3D>, ctx: ClassifyContext, grid: SliceGrid, stack: SliceStack, options: ScreenOptions, mpu: number): void {
  const idx = screened.map((_s, i) => i).filter((i) => screened[i]!.verdict.origin !== 'above-ground' && !fromBefore.has(screened[i]!.anomaly));
  const groups = joinAlignedPieces(idx.map((i) => screened[i]!.anomaly), grid, ctx.lineSpacingM, (z) => maxUtilityWidthM(z, ctx, options.classes), { ...options, metresPerUnit: mpu, alsoJoinable: (a) => isPointPiece(a, ctx), lineAzimuthsDeg: ctx.lineAzimuthsDeg ?? [] });
  const drop = new Set<number>();
  for (const g of groups) {
    if (g.length < 2) continue;
    const parts = g.map((k) => idx[k]!);
    const largest = parts.reduce((p, q) => (screened[q]!.anomaly.cells.length > screened[p]!.anomaly.cells.length ? q : p));
    const members = parts.flatMap((k) => screened[k]!.anomaly.members);
    screened[largest] = { ...screened[largest]!, anomaly: buildAnomaly('A', members, stack, { ...options, metresPerUnit: mpu }) };
    for (const k of parts) if (k !== largest) drop.add(k);
  }
  if (drop.size === 0) return;
  const kept = screened.filter((_, i) => !drop.has(i));
  screened.length = 0;
  screened.push(...kept);
}

function strip(s: ScreenedAnomaly & { mo?: MoveOutResult }): ScreenedAnomaly {
  return { anomaly: s.anomaly, evidence: s.evidence, verdict: s.verdict };
}

/**
 * The objects inside a laterally extensive anomaly (`isLayer` of its union): a layer crossing the depths
 * of a pipe or a footing joins them with it through the slices where they meet, and the whole is too
 * large for any object (class `layer`), the pipe lost with it. Chains of its members that keep their
 * plan position over two slices or more (`stationaryChains`) and are not extensive themselves are
 * objects; chains that the usual links join again (pieces of one pipe) are one object unless that makes
 * it extensive. The other members are linked again among themselves (a layer's bands, which move
 * down-dip from slice to slice, stay one anomaly). Any other anomaly comes back as it is.
 */
export function objectsOfExtensive(a: Anomaly3D, isLayer: (shape: Shape, depthM: number) => boolean, build: (ms: Member[]) => Anomaly3D, relinkMembers: (ms: Member[]) => Member[][]): Anomaly3D[] {
  if (a.members.length < 3 || !isLayer(a.shape, a.depthBottomM)) return [a];
  const chains = stationaryChains(a.members)
    .map((g) => g.map((i) => a.members[i]!))
    .filter((g) => new Set(g.map((m) => m.slice)).size >= 2)
    .map(build)
    .filter((o) => !isLayer(o.shape, o.depthBottomM));
  if (chains.length === 0) return [a];
  // chains of one object (a pipe whose members share less than a chain asks from slice to slice) are
  // linked again among themselves as usual; the members of a group too large for an object stay in
  // their chains (each member in one object at most)
  const objects: Anomaly3D[] = [];
  const inLarge = new Set<Member>();
  for (const g of relinkMembers(chains.flatMap((o) => o.members))) {
    const o = build(g);
    if (isLayer(o.shape, o.depthBottomM)) for (const m of g) inLarge.add(m);
    else objects.push(o);
  }
  for (const c of chains) {
    const part = c.members.filter((m) => inLarge.has(m));
    if (new Set(part.map((m) => m.slice)).size >= 2) objects.push(part.length === c.members.length ? c : build(part));
  }
  const taken = new Set(objects.flatMap((o) => o.members));
  const rest = a.members.filter((m) => !taken.has(m));
  return [...objects, ...(rest.length > 0 ? relinkMembers(rest).map(build) : [])];
}

function relink(ms: Member[], cells: number, cellSize: number, options: ScreenOptions): Member[][] {
  const copies = ms.map((m, i) => ({ ...m, id: i }));
  return linkMembers(copies, cells, cellSize, options).map((g) => g.map((i) => ms[i]!));
}

/**
 * One anomaly as a GeoJSON feature (WGS84). Geometry: outline of the union over depth. A linear
 * anomaly also carries its centreline as `properties.centreline` (a GeoJSON LineString, WGS84).
 */
export function anomalyFeature(s: ScreenedAnomaly, grid: SliceGrid, toWgs84: ToWgs84, metresPerUnit: number): GeoJsonFeature {
  const a = s.anomaly;
  const evidence = s.evidence.map((e) => {
    const { geometry, ...rest } = e;
    if (!geometry) return rest;
    return { ...rest, geometry: geometry.type === 'Point' ? pointToWgs84(geometry.coordinates, toWgs84) : lineToWgs84(geometry.coordinates, toWgs84) };
  });
  return {
    type: 'Feature',
    id: a.id,
    geometry: outlineToWgs84(a.outline, toWgs84),
    properties: {
      id: a.id,
      depthTopM: a.depthTopM,
      depthBottomM: a.depthBottomM,
      origin: s.verdict.origin,
      confidence: round(s.verdict.confidence),
      pAboveGround: round(s.verdict.pAboveGround),
      evidence,
      kind: a.shape.kind,
      areaM2: round(a.areaM2),
      directionDeg: round(a.shape.directionDeg),
      elongation: round(a.shape.elongation),
      lengthM: round(a.shape.lengthM),
      widthM: round(a.shape.widthM),
      slices: [...new Set(a.members.map((m) => m.slice))],
      peakValue: a.peakValue,
      peakScore: round(a.peakScore),
      strengthDb: Number.isFinite(a.strengthDb) ? Math.round(a.strengthDb * 100) / 100 : null,
      ...(s.classified ? { class: s.classified.class, classReason: s.classified.reason, ...(s.classified.echoOf ? { echoOf: s.classified.echoOf } : {}) } : {}),
      centroid: toWgs84(...centroidOf(a)),
      ...(a.centreline ? { centreline: lineToWgs84(a.centreline, toWgs84) } : {}),
      members: a.members.map((m) => ({
        slice: m.slice,
        topM: m.topM,
        bottomM: m.bottomM,
        centroid: toWgs84(m.x, m.y),
        outline: outlineToWgs84(traceOutline(m.cells, grid), toWgs84),
        areaM2: round(m.areaM2),
        kind: m.shape.kind,
        directionDeg: round(m.shape.directionDeg),
        peakScore: round(m.peakScore),
        strengthDb: Number.isFinite(m.strengthDb) ? Math.round(m.strengthDb * 100) / 100 : null,
      })),
      metresPerUnit,
    } satisfies AnomalyProperties,
  };
}

/** Cell-weighted centroid of an anomaly's members, site CRS. */
export function centroidOf(a: Anomaly3D): [number, number] {
  let w = 0, x = 0, y = 0;
  for (const m of a.members) {
    w += m.cells.length;
    x += m.cells.length * m.x;
    y += m.cells.length * m.y;
  }
  return [x / w, y / w];
}

const round = (v: number) => Math.round(v * 1e6) / 1e6;
