import { InputError } from '@lamina/errors';
import { C_M_PER_NS, type VelocityModel } from '@lamina/velocity';
import { airRadiusM, type FeatureCollection } from '@lamina/screening';
import { ANOMALY_CLASSES, permittivityAt, ringsArea, surveyedAreaM2, targetPolygons } from './precision';

type XY = [number, number];
type XYZ = [number, number, number];

/** The parts of truth.json scoring reads (DEVELOPERS.md; the simulator may add fields). */
export interface ScoreTruth {
  soil: { permittivity: number; velocityMPerNs: number; layers?: { topM: number; bottomM: number | null; velocityMPerNs: number; permittivity: number }[] };
  crs: string;
  metresPerUnit: number;
  /**
   * A compact object's `topDepthM` / `bottomDepthM` (truth.json) give its vertical extent; without them
   * (and for pipes and cables) it is its centre or axis depth +- radiusM.
   */
  buried: {
    id: string;
    kind: string;
    utility?: string;
    from?: XYZ;
    to?: XYZ;
    center?: XYZ;
    radiusM: number;
    topDepthM?: number;
    bottomDepthM?: number;
    /** The simulator's record of the object's own response (traces: on how many traces above 3x the noise). */
    response?: { traces?: number };
  }[];
  aboveGround: {
    id: string;
    planFeatureId?: string;
    kind: string;
    from?: XY | XYZ;
    to?: XY | XYZ;
    center?: XY | XYZ;
    heightM?: number;
    /** The simulator's record of the air wave it drew (traces: on how many traces). */
    airWave?: { traces?: number };
  }[];
  /** Written by the simulator; the pulse length widens the locus band. */
  antenna?: { frequencyMHz?: number };
}

export interface ScoreOptions {
  /** Plan distance within which a target covers a utility, m (plus the utility's radius). @default 0.5 */
  planToleranceM?: number;
  /** Depth tolerance, m: max(this, depthFraction * depth). @default 0.25 */
  depthToleranceM?: number;
  /** @default 0.25 */
  depthFraction?: number;
  /** Sampling step along a utility, m. @default 0.1 */
  stepM?: number;
  /** Tolerance on a locus beyond the band [r(top), r(bottom)] of the slice window, m.
   * @default 0.25 m (position) + c T / 4 (half the pulse's radial extent, T = 1 / antenna frequency), or 0.5 m without a frequency */
  locusToleranceM?: number;
  /**
   * The velocity model the run converted time to depth with (its velocity.json). An anomaly's depth is a
   * label given by that model, so the two-way time it was seen at (and so the air-wave radius c t / 2)
   * follows from the same model. @default the truth soil
   */
  runModel?: VelocityModel;
  /**
   * The survey lines (site CRS vertices). A radar sees only what it passed over: buried recall is then
   * also reported over each utility's surveyed part, the samples within `coverM` of a line.
   */
  survey?: { lines: XY[][]; coverM?: number };
  /** The run's fitted site permittivity (velocity.json `site.permittivity`): scored against the truth soil. */
  runPermittivity?: number;
}

/** Counts behind each precision figure, so that scenes pool by summing (see README, "Frozen definitions"). */
export interface PrecisionReport {
  /** Targets scored (origin not above-ground), and of them: covering a buried object, air-wave, neither. */
  targets: number;
  buriedTargets: number;
  airTargets: number;
  clutterTargets: number;
  /** buriedTargets / targets (1 with no targets). */
  byCount: number;
  /** Plan area of all targets and of those covering a buried object, m2; byArea = buried / all (1 with no area). */
  areaM2: number;
  buriedAreaM2: number;
  byArea: number;
  /** Area within the survey's cover of a line, m2 (null without survey lines); clutter targets per 100 m2 of it. */
  surveyedAreaM2: number | null;
  clutterPer100M2: number | null;
  /** Distinct targets covering each pipe/cable; mean and max over those covered by at least one. */
  pieces: { id: string; pieces: number }[];
  piecesMean: number | null;
  piecesMax: number;
  /** The target of largest plan area. */
  largest: { id: string; areaM2: number; depthExtentM: number } | null;
  /** Air-flag counts per anomaly: on a locus (not ambiguous) and flagged; real (covering a buried object, on no locus) and flagged. */
  airFlags: { onLocus: number; onLocusFlagged: number; real: number; realFlagged: number; recall: number; realFlaggedShare: number };
  /** Fitted vs truth permittivity (relative error = fitted / truth - 1); per buried object when the truth soil is layered. */
  siteK: {
    truth: number;
    fitted: number | null;
    relError: number | null;
    atObjects: { id: string; depthM: number; truth: number; fitted: number; relError: number }[];
  };
  /** Anomalies by `properties.class` (or `none`) against what they match: buried, air, ambiguous (both), unmatched. */
  classes: Record<string, { buried: number; air: number; ambiguous: number; unmatched: number }>;
}

export interface BuriedScore {
  id: string;
  kind: string;
  lengthM: number;
  /**
   * Fraction of the surveyed length (compact: 0 or 1) covered by targets; without `survey`, of the
   * whole length.
   */
  recall: number;
  /** Fraction of the whole length from -> to covered by targets. */
  recallFullLength: number;
  /** Length within the survey's cover, m (the whole length without `survey`). */
  surveyedLengthM: number;
  /**
   * The data record the object: truth.json gives no `response.traces`, or a positive one. An object the
   * simulator drew on no trace above three times the noise (too deep for the record, too weak, too small)
   * counts in the `...All` recall figures only.
   */
  recorded: boolean;
  targets: string[];
}

export interface ScoreReport {
  buried: BuriedScore[];
  /**
   * Length-weighted recall of the recorded pipes and cables (over their surveyed length), and the fraction
   * of recorded compact objects found; `linearAll` / `compactAll` over every buried object, recorded or not.
   */
  buriedRecall: { linear: number; compact: number; minimum: number; linearFullLength: number; minimumFullLength: number; linearAll: number; compactAll: number; unrecorded: number };
  targets: { id: string; matches: string; kind: 'buried' | 'air' | 'unmatched' }[];
  /** Fraction of targets that are air-wave reflections (on a reflector's locus, matching no buried target). */
  targetAirFraction: number;
  aboveGround: { truePositive: number; falsePositive: number; falseNegative: number; ambiguous: number; precision: number; recall: number };
  anomalies: { id: string; origin: string; reflector: string | null; buried: string | null }[];
  precision: PrecisionReport;
  definitions: string[];
}

type Geo = { type: string; coordinates: unknown };

function flatPoints(g: Geo | null | undefined): XY[] {
  const out: XY[] = [];
  const walk = (c: unknown): void => {
    if (Array.isArray(c) && typeof c[0] === 'number') out.push([c[0] as number, c[1] as number]);
    else if (Array.isArray(c)) for (const x of c) walk(x);
  };
  if (g) walk(g.coordinates);
  return out;
}

/** Segments and polygons of a geometry in the site CRS. */
interface Shape {
  segs: number[];
  rings: XY[][];
}
function shapeOf(g: Geo | null | undefined, from: (lon: number, lat: number) => XY): Shape {
  const s: Shape = { segs: [], rings: [] };
  if (!g) return s;
  const line = (cs: number[][]) => {
    const p = cs.map((c) => from(c[0]!, c[1]!));
    if (p.length === 1) s.segs.push(p[0]![0], p[0]![1], p[0]![0], p[0]![1]);
    for (let i = 0; i + 1 < p.length; i++) s.segs.push(p[i]![0], p[i]![1], p[i + 1]![0], p[i + 1]![1]);
    return p;
  };
  const c = g.coordinates as never;
  switch (g.type) {
    case 'Point':
      line([c]);
      break;
    case 'LineString':
      line(c);
      break;
    case 'MultiLineString':
    case 'MultiPoint':
      for (const l of c as number[][][]) line(g.type === 'MultiPoint' ? [l as unknown as number[]] : l);
      break;
    case 'Polygon':
      for (const r of c as number[][][]) s.rings.push(line(r));
      break;
    case 'MultiPolygon':
      for (const p of c as number[][][][]) for (const r of p) s.rings.push(line(r));
      break;
  }
  return s;
}

/**
 * Axis of a target's centreline (its geometry when a LineString or MultiLineString, else a LineString
 * `properties.centreline`), radians in [0, pi): the length-weighted mean of its segments' directions on
 * doubled angles (a centreline has no heading). Null when it has none or no length.
 */
function axisOf(g: Geo | null | undefined, centreline: Geo | undefined, from: (lon: number, lat: number) => XY): number | null {
  const line = g && (g.type === 'LineString' || g.type === 'MultiLineString') ? g : centreline && centreline.type === 'LineString' ? centreline : null;
  if (!line) return null;
  const segs = shapeOf(line, from).segs;
  let c = 0, sn = 0;
  for (let i = 0; i < segs.length; i += 4) {
    const dx = segs[i + 2]! - segs[i]!, dy = segs[i + 3]! - segs[i + 1]!;
    const l2 = dx * dx + dy * dy;
    if (!(l2 > 0)) continue;
    // length-weighted cos / sin of the doubled angle: (dx^2 - dy^2) / l and 2 dx dy / l
    const l = Math.sqrt(l2);
    c += (dx * dx - dy * dy) / l;
    sn += (2 * dx * dy) / l;
  }
  if (c === 0 && sn === 0) return null;
  const a = 0.5 * Math.atan2(sn, c);
  return a < 0 ? a + Math.PI : a;
}

/** Angle between two axes (radians, any sign or turn), in [0, pi / 2]. */
function axisAngle(a: number, b: number): number {
  const d = Math.abs(a - b) % Math.PI;
  return Math.min(d, Math.PI - d);
}

function segDist(x: number, y: number, s: number[]): number {
  let best = Infinity;
  for (let i = 0; i < s.length; i += 4) {
    const ax = s[i]!, ay = s[i + 1]!, dx = s[i + 2]! - ax, dy = s[i + 3]! - ay;
    const l2 = dx * dx + dy * dy;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = Math.max(0, Math.min(1, t));
    best = Math.min(best, Math.hypot(x - ax - t * dx, y - ay - t * dy));
  }
  return best;
}

function inside(x: number, y: number, rings: XY[][]): boolean {
  let n = false;
  for (const ring of rings)
    for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
      const [xi, yi] = ring[i]!, [xj, yj] = ring[j]!;
      if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) n = !n;
    }
  return n;
}

function shapeDist(x: number, y: number, s: Shape): number {
  if (s.rings.length && inside(x, y, s.rings)) return 0;
  return segDist(x, y, s.segs);
}

/** Median distance from each line's middle vertex to the nearest other line, m. */
function surveySpacingM(lines: XY[][], mpu: number): number {
  const d: number[] = [];
  for (let i = 0; i < lines.length; i++) {
    const a = lines[i]!;
    if (a.length === 0) continue;
    const [mx, my] = a[a.length >> 1]!;
    let best = Infinity;
    for (let j = 0; j < lines.length; j++) {
      if (j === i) continue;
      const b = lines[j]!;
      const segs: number[] = [];
      for (let k = 0; k + 1 < b.length; k++) segs.push(b[k]![0], b[k]![1], b[k + 1]![0], b[k + 1]![1]);
      if (b.length === 1) segs.push(b[0]![0], b[0]![1], b[0]![0], b[0]![1]);
      best = Math.min(best, segDist(mx, my, segs));
    }
    if (Number.isFinite(best)) d.push(best * mpu);
  }
  if (d.length === 0) return 0;
  d.sort((p, q) => p - q);
  return d[d.length >> 1]!;
}

function truthModel(t: ScoreTruth): VelocityModel {
  const layers = (t.soil.layers ?? []).filter((l) => l.velocityMPerNs > 0);
  if (layers.length === 0) return { kind: 'constant', layers: [{ topM: 0, bottomM: 1e6, velocityMPerNs: t.soil.velocityMPerNs, permittivity: t.soil.permittivity }] };
  return { kind: 'layered', layers: layers.map((l) => ({ topM: l.topM, bottomM: l.bottomM ?? 1e6, velocityMPerNs: l.velocityMPerNs, permittivity: l.permittivity })) };
}

function str(v: unknown): string {
  return typeof v === 'string' ? v : typeof v === 'number' ? String(v) : '';
}

function num(v: unknown, file: string, field: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) throw new InputError(file, `expected a number, found ${JSON.stringify(v)}`, { field });
  return v;
}

/** The data record a buried object: truth.json gives no `response.traces` (not from our simulator), or a positive one. */
function recordedOf(b: ScoreTruth['buried'][number]): boolean {
  return b.response?.traces === undefined || b.response.traces > 0;
}

/**
 * Scores a run against the simulator's truth.
 *
 * Buried recall: each pipe or cable is sampled every `stepM` along from -> to; a sample is covered
 * when a target (properties.origin not `above-ground`) lies within planToleranceM + radiusM in plan
 * (inside its polygon or its `properties.outline`, the plan extent a linear target keeps beside its
 * centreline, or near its outline, centreline or point) and its depth range widened by
 * max(depthToleranceM, depthFraction * depth) holds the sample's depth. Compact targets: found or not.
 * The recall figures count the objects the data record (`recorded`); `linearAll` / `compactAll` every one.
 *
 * Above-ground flags: reflector R's locus at depth z is the set of points at r(z) = c t(z) / 2 from
 * R (t from the truth soil; R a segment from -> to, or a point). A slice member of an anomaly is on
 * the locus when the median distance of its outline's vertices (its centroid when it has no outline)
 * to R lies in [r(topM) - tol, r(bottomM) + tol], tol = locusToleranceM. An anomaly is an air-wave
 * reflection of R when at least half its members are on R's locus; an anomaly that is also within
 * the plan and depth tolerance of a buried target is ambiguous and left out of precision and recall.
 * Precision = flagged reflections / flagged; recall = flagged reflections / reflections.
 * A target is an air reflection when its outline's median vertex distance to some R is within the
 * tolerance of r over its depth range and it covers no buried target.
 */
export function scoreRun(
  targets: FeatureCollection | undefined,
  anomalies: FeatureCollection,
  truth: ScoreTruth,
  fromWgs84: (lon: number, lat: number) => XY,
  options: ScoreOptions = {},
): ScoreReport {
  const mpu = truth.metresPerUnit;
  const planTol = options.planToleranceM ?? 0.5;
  const dTol = options.depthToleranceM ?? 0.25;
  const dFrac = options.depthFraction ?? 0.25;
  const step = options.stepM ?? 0.1;
  const f = truth.antenna?.frequencyMHz;
  const locTol = options.locusToleranceM ?? (f && f > 0 ? 0.25 + (C_M_PER_NS * (1000 / f)) / 4 : 0.5);
  const model = truthModel(truth);
  const airModel = options.runModel ?? model;

  interface Obj {
    id: string;
    top: number;
    bottom: number;
    shape: Shape;
    origin: string;
    members: { top: number; bottom: number; pts: XY[] }[];
    areaM2: number;
    cls: string;
    /** Axis of its centreline, radians in [0, pi) (`axisOf`); null for a target with none (a polygon, a point). */
    axis: number | null;
  }
  const read = (fc: FeatureCollection | undefined, file: string): Obj[] =>
    (fc?.features ?? []).map((f, i) => {
      const p = f.properties ?? {};
      const top = num(p.depthTopM, file, `features[${i}].properties.depthTopM`);
      const bottom = num(p.depthBottomM, file, `features[${i}].properties.depthBottomM`);
      const shape = shapeOf(f.geometry as Geo, fromWgs84);
      const cl = p.centreline as Geo | undefined;
      if (cl && cl.type === 'LineString') shape.segs.push(...shapeOf(cl, fromWgs84).segs);
      // a linear target's plan extent: targets.geojson keeps the anomaly outline beside the centreline
      const ol = p.outline as Geo | undefined;
      if (ol && (ol.type === 'Polygon' || ol.type === 'MultiPolygon')) {
        const o = shapeOf(ol, fromWgs84);
        shape.segs.push(...o.segs);
        shape.rings.push(...o.rings);
      }
      const ms = Array.isArray(p.members) ? (p.members as Record<string, unknown>[]) : [];
      const outlinePts = flatPoints(f.geometry as Geo).map((q) => fromWgs84(q[0], q[1]));
      const members = ms.length
        ? ms.map((m) => {
            const o = flatPoints(m.outline as Geo | undefined).map((q) => fromWgs84(q[0], q[1]));
            const c = Array.isArray(m.centroid) ? [fromWgs84(m.centroid[0] as number, m.centroid[1] as number)] : [];
            return { top: Number(m.topM ?? top), bottom: Number(m.bottomM ?? bottom), pts: o.length ? o : c };
          })
        : [{ top, bottom, pts: outlinePts }];
      const areaM2 = ringsArea(targetPolygons(f.geometry as Geo, ol, fromWgs84)) * mpu * mpu;
      const axis = axisOf(f.geometry as Geo, cl, fromWgs84);
      return { id: str(p.id) || str(f.id) || `#${i}`, top, bottom, shape, origin: str(p.origin) || 'subsurface', members, areaM2, cls: str(p.class) || 'none', axis };
    });
  const tgs = read(targets, 'targets.geojson').filter((t) => t.origin !== 'above-ground');
  const ans = read(anomalies, 'anomalies.geojson');

  // the body of a buried object at depth z (axis or centre): z - up .. z + down; the tolerance follows z
  const depthOk = (z: number, up: number, down: number, o: { top: number; bottom: number }) => {
    const tol = Math.max(dTol, dFrac * z);
    return z + down >= o.top - tol && z - up <= o.bottom + tol;
  };
  const near = (x: number, y: number, z: number, radiusM: number, o: Obj, up = radiusM, down = radiusM) => depthOk(z, up, down, o) && shapeDist(x, y, o.shape) * mpu <= planTol + radiusM;
  // a compact object's vertical extent about its centre (truth topDepthM / bottomDepthM), else its radius
  const extentOf = (b: ScoreTruth['buried'][number]): [number, number] => {
    const z = b.center![2];
    return b.topDepthM !== undefined && b.bottomDepthM !== undefined && b.bottomDepthM >= b.topDepthM ? [Math.max(0, z - b.topDepthM), Math.max(0, b.bottomDepthM - z)] : [b.radiusM, b.radiusM];
  };

  // the survey's cover: within coverM (default half the median line spacing, at least 0.25 m) of a line
  const surveySegs: number[] = [];
  for (const l of options.survey?.lines ?? []) for (let i = 0; i + 1 < l.length; i++) surveySegs.push(l[i]![0], l[i]![1], l[i + 1]![0], l[i + 1]![1]);
  const coverM = options.survey?.coverM ?? Math.max(0.25, 0.5 * surveySpacingM(options.survey?.lines ?? [], mpu));
  const surveyed = (x: number, y: number) => surveySegs.length === 0 || segDist(x, y, surveySegs) * mpu <= coverM;

  const buried: BuriedScore[] = truth.buried.map((b) => {
    const hit = new Set<string>();
    if (b.center) {
      const [x, y, z] = b.center;
      const [up, down] = extentOf(b);
      for (const t of tgs) if (near(x, y, z, b.radiusM, t, up, down)) hit.add(t.id);
      const r = hit.size ? 1 : 0;
      return { id: b.id, kind: b.kind, lengthM: 0, recall: r, recallFullLength: r, surveyedLengthM: 0, recorded: recordedOf(b), targets: [...hit] };
    }
    const f = b.from!, t2 = b.to!;
    const lengthM = Math.hypot(t2[0] - f[0], t2[1] - f[1]) * mpu;
    const n = Math.max(1, Math.round(lengthM / step));
    let covered = 0, inside = 0, coveredInside = 0;
    for (let i = 0; i <= n; i++) {
      const s = i / n;
      const x = f[0] + s * (t2[0] - f[0]), y = f[1] + s * (t2[1] - f[1]), z = f[2] + s * (t2[2] - f[2]);
      let c = false;
      for (const t of tgs)
        if (near(x, y, z, b.radiusM, t)) {
          c = true;
          hit.add(t.id);
        }
      const sv = surveyed(x, y);
      if (c) covered++;
      if (sv) inside++;
      if (c && sv) coveredInside++;
    }
    const full = covered / (n + 1);
    return {
      id: b.id,
      kind: b.kind,
      lengthM,
      recall: inside > 0 ? coveredInside / inside : 1,
      recallFullLength: full,
      surveyedLengthM: (lengthM * inside) / (n + 1),
      recorded: recordedOf(b),
      targets: [...hit],
    };
  });
  // recall over the objects the data record (`recorded`); the `...All` figures over every object
  const linearRecall = (ls: BuriedScore[]) => {
    const surveyedM = ls.reduce((s, b) => s + b.surveyedLengthM, 0);
    return ls.length && surveyedM > 0 ? ls.reduce((s, b) => s + b.recall * b.surveyedLengthM, 0) / surveyedM : 1;
  };
  const compactRecall = (cs: BuriedScore[]) => (cs.length ? cs.reduce((s, b) => s + b.recall, 0) / cs.length : 1);
  const linAll = buried.filter((b) => b.lengthM > 0);
  const cmpAll = buried.filter((b) => b.lengthM === 0);
  const lin = linAll.filter((b) => b.recorded);
  const cmp = cmpAll.filter((b) => b.recorded);
  const linRecall = linearRecall(lin);
  const linFull = lin.length ? lin.reduce((s, b) => s + b.recallFullLength * b.lengthM, 0) / lin.reduce((s, b) => s + b.lengthM, 0) : 1;
  const cmpRecall = compactRecall(cmp);

  // A reflector whose air wave the simulator drew on no trace (airWave.traces 0) makes no reflection.
  // (Its distanceMinM..distanceMaxM is an amplitude summary, not a limit: it is not used.)
  const refl = truth.aboveGround
    .filter((a) => a.airWave?.traces === undefined || a.airWave.traces > 0)
    .map((a) => ({
      id: a.id,
      segs: a.center ? [a.center[0], a.center[1], a.center[0], a.center[1]] : [a.from![0], a.from![1], a.to![0], a.to![1]],
      // an overhead reflector's air wave travels the slant distance: plan distance sqrt(r^2 - h^2)
      overheadM: a.kind === 'overhead' ? (a.heightM ?? 0) : 0,
    }));
  const median = (v: number[]) => {
    const s = [...v].sort((p, q) => p - q);
    return s.length ? s[s.length >> 1]! : NaN;
  };
  const onLocus = (pts: XY[], top: number, bottom: number, r: (typeof refl)[number]) => {
    if (pts.length === 0) return false;
    const d = median(pts.map((p) => segDist(p[0], p[1], r.segs) * mpu));
    const h2 = r.overheadM * r.overheadM;
    const plan = (q: number) => (h2 > 0 ? Math.sqrt(Math.max(0, q * q - h2)) : q);
    const ra = airRadiusM(top, airModel), rb = airRadiusM(bottom, airModel);
    if (h2 > 0 && Math.max(ra, rb) < r.overheadM - locTol) return false;
    const r0 = plan(ra), r1 = plan(rb);
    const tol = locTol;
    return d >= Math.min(r0, r1) - tol && d <= Math.max(r0, r1) + tol;
  };
  const reflectorOf = (o: Obj): string | null => {
    for (const r of refl) {
      const on = o.members.filter((m) => onLocus(m.pts, m.top, m.bottom, r)).length;
      if (on >= 0.5 * o.members.length && on > 0) return r.id;
    }
    return null;
  };
  const buriedOf = (o: Obj): string | null => {
    for (const b of truth.buried) {
      if (b.center) {
        if (near(b.center[0], b.center[1], b.center[2], b.radiusM, o, ...extentOf(b))) return b.id;
        continue;
      }
      const f = b.from!, t2 = b.to!;
      const n = Math.max(1, Math.round((Math.hypot(t2[0] - f[0], t2[1] - f[1]) * mpu) / (2 * step)));
      for (let i = 0; i <= n; i++) {
        const s = i / n;
        if (near(f[0] + s * (t2[0] - f[0]), f[1] + s * (t2[1] - f[1]), f[2] + s * (t2[2] - f[2]), b.radiusM, o)) return b.id;
      }
    }
    return null;
  };
  let tp = 0, fp = 0, fn = 0, amb = 0;
  const anomalyRows = ans.map((a) => {
    const r = reflectorOf(a);
    const b = buriedOf(a);
    const flagged = a.origin === 'above-ground';
    if (r && b) amb++;
    else if (r && flagged) tp++;
    else if (r) fn++;
    else if (flagged) fp++;
    return { id: a.id, origin: a.origin, reflector: r, buried: b };
  });
  const targetRows = tgs.map((t) => {
    const b = buriedOf(t);
    if (b) return { id: t.id, matches: b, kind: 'buried' as const };
    const r = reflectorOf({ ...t, members: [{ top: t.top, bottom: t.bottom, pts: t.members.flatMap((m) => m.pts) }] });
    return r ? { id: t.id, matches: r, kind: 'air' as const } : { id: t.id, matches: '', kind: 'unmatched' as const };
  });

  const real = anomalyRows.filter((a) => a.buried && !a.reflector);
  const classes: PrecisionReport['classes'] = {};
  for (const c of [...ANOMALY_CLASSES, 'none']) classes[c] = { buried: 0, air: 0, ambiguous: 0, unmatched: 0 };
  ans.forEach((a, i) => {
    const row = anomalyRows[i]!;
    const c = (classes[a.cls] ??= { buried: 0, air: 0, ambiguous: 0, unmatched: 0 });
    c[row.buried && row.reflector ? 'ambiguous' : row.buried ? 'buried' : row.reflector ? 'air' : 'unmatched']++;
  });
  const areaOf = new Map(tgs.map((t) => [t.id, t]));
  const areaAll = tgs.reduce((s, t) => s + t.areaM2, 0);
  const areaBuried = targetRows.filter((t) => t.kind === 'buried').reduce((s, t) => s + areaOf.get(t.id)!.areaM2, 0);
  const nBuried = targetRows.filter((t) => t.kind === 'buried').length;
  const nAir = targetRows.filter((t) => t.kind === 'air').length;
  const nClutter = targetRows.length - nBuried - nAir;
  const surveyArea = surveySegs.length ? surveyedAreaM2(options.survey!.lines, mpu, coverM) : null;
  // a piece runs along the utility: a linear target whose axis crosses it at more than 45 degrees is a
  // crossing object's target (README "Pieces per utility")
  const targetOf = new Map(tgs.map((t) => [t.id, t]));
  const truthOf = new Map(truth.buried.map((b) => [b.id, b]));
  const pieces = linAll.map((b) => {
    const u = truthOf.get(b.id)!;
    const ua = Math.atan2(u.to![1] - u.from![1], u.to![0] - u.from![0]);
    const along = b.targets.filter((id) => {
      const axis = targetOf.get(id)?.axis ?? null;
      return axis === null || axisAngle(axis, ua) <= Math.PI / 4;
    });
    return { id: b.id, pieces: along.length };
  });
  const found = pieces.filter((p) => p.pieces > 0);
  const largest = tgs.reduce<Obj | null>((m, t) => (!m || t.areaM2 > m.areaM2 ? t : m), null);
  const truthK = (truth.soil.layers ?? [])[0]?.permittivity ?? truth.soil.permittivity;
  const fittedK = options.runPermittivity ?? null;
  const layeredTruth = (truth.soil.layers ?? []).length > 1;
  const atObjects =
    layeredTruth && options.runModel
      ? truth.buried.map((b) => {
          const z = b.center ? b.center[2] : (b.from![2] + b.to![2]) / 2;
          const tk = permittivityAt(z, model), fk = permittivityAt(z, options.runModel!);
          return { id: b.id, depthM: z, truth: tk, fitted: fk, relError: fk / tk - 1 };
        })
      : [];
  const nOnLocus = tp + fn;
  const realFlagged = real.filter((a) => a.origin === 'above-ground').length;
  const precision: PrecisionReport = {
    targets: targetRows.length,
    buriedTargets: nBuried,
    airTargets: nAir,
    clutterTargets: nClutter,
    byCount: targetRows.length ? nBuried / targetRows.length : 1,
    areaM2: areaAll,
    buriedAreaM2: areaBuried,
    byArea: areaAll > 0 ? areaBuried / areaAll : 1,
    surveyedAreaM2: surveyArea,
    clutterPer100M2: surveyArea ? (100 * nClutter) / surveyArea : null,
    pieces,
    piecesMean: found.length ? found.reduce((s, p) => s + p.pieces, 0) / found.length : null,
    piecesMax: Math.max(0, ...pieces.map((p) => p.pieces)),
    largest: largest ? { id: largest.id, areaM2: largest.areaM2, depthExtentM: largest.bottom - largest.top } : null,
    airFlags: {
      onLocus: nOnLocus,
      onLocusFlagged: tp,
      real: real.length,
      realFlagged,
      recall: nOnLocus ? tp / nOnLocus : 1,
      realFlaggedShare: real.length ? realFlagged / real.length : 0,
    },
    siteK: { truth: truthK, fitted: fittedK, relError: fittedK === null ? null : fittedK / truthK - 1, atObjects },
    classes,
  };
  return {
    buried,
    buriedRecall: {
      linear: linRecall,
      compact: cmpRecall,
      minimum: Math.min(1, ...lin.map((b) => b.recall)),
      linearFullLength: linFull,
      minimumFullLength: Math.min(1, ...lin.map((b) => b.recallFullLength)),
      linearAll: linearRecall(linAll),
      compactAll: compactRecall(cmpAll),
      unrecorded: buried.filter((b) => !b.recorded).length,
    },
    targets: targetRows,
    targetAirFraction: targetRows.length ? targetRows.filter((t) => t.kind === 'air').length / targetRows.length : 0,
    aboveGround: {
      truePositive: tp,
      falsePositive: fp,
      falseNegative: fn,
      ambiguous: amb,
      precision: tp + fp > 0 ? tp / (tp + fp) : 1,
      recall: tp + fn > 0 ? tp / (tp + fn) : 1,
    },
    anomalies: anomalyRows,
    precision,
    definitions: [
      surveySegs.length
        ? `buried recall over the surveyed length: samples within ${coverM.toFixed(2)} m of a survey line (full-length recall reported beside it)`
        : 'buried recall over the whole length (no survey lines given)',
      `buried sample covered: a target within ${planTol} m + radius in plan and depth within max(${dTol} m, ${dFrac} x depth) of its range`,
      `air-wave member: median outline-vertex distance to the reflector in [r(top) - ${locTol.toFixed(2)} m, r(bottom) + ${locTol.toFixed(2)} m], r(z) = c t(z)/2 (t from the run's velocity model when given, else the truth soil)`,
      'reflectors: all above-ground objects of truth.json except those whose air wave it records on no trace (airWave.traces 0)',
      'overhead reflector (kind overhead, height h): its locus lies at plan distance sqrt(r^2 - h^2); none while r(bottom) < h - tol',
      'air-wave anomaly: at least half of its members on one reflector locus; also near a buried target = ambiguous (not counted)',
      'target precision by count: targets covering a buried object (the buried-sample rule: pipes/cables sampled along the axis, compact objects at their centre) / targets; by area: their plan area / the plan area of all targets',
      `clutter targets: covering no buried object and on no reflector locus; per 100 m2 of surveyed area (cells within ${coverM.toFixed(2)} m of a line)`,
      'pieces per utility: distinct targets covering a pipe/cable and running along it (a linear target whose axis crosses it at more than 45 degrees is not a piece); mean and max over the utilities with a piece',
      'recall counts the buried objects the data record (truth response.traces > 0, or none given); linearAll / compactAll count every object',
      'air flags per anomaly: recall = flagged / on a locus (ambiguous left out); real wrongly flagged = flagged / (covering a buried object and on no locus)',
      'site K error: velocity.json site permittivity / truth top-layer permittivity - 1; layered truth: interval K of the run model / of the truth at each object depth - 1 (interfaces at their nominal depth, dip ignored)',
    ],
  };
}
