import type { Anomaly3D, Member } from '@lamina/anomalies';
import { cellCentreX, cellCentreY, type SliceGrid } from '@lamina/slices';
import type { HyperbolaFit, VelocityModel } from '@lamina/velocity';
import { locusAtHeight, type SliceLocus } from './context';
import { WEIGHTS, type Evidence } from './evidence';
import { C_M_PER_NS, depthAtVerticalTimeNs } from '@lamina/velocity';
import { median, medianHigh, quantileSorted } from '@lamina/stats';
import { cellResidual } from './surgery';
import { alongDistance, distanceTo, nearestSegmentAzimuth, type Reflector } from './reflectors';

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
}

export interface MemberFit {
  member: Member;
  medianM: number;
  iqrM: number;
  residualM: number;
  passed: boolean;
}

export interface MoveOutResult {
  reflector: number;
  fits: MemberFit[];
  fraction: number;
}

const MAX_SAMPLES = 400;

/**
 * Signed residuals (m) of a member's cells from a reflector's locus at radius r (see cellResidual).
 */
function memberResiduals(m: Member, refl: Reflector, field: Float32Array, radiusM: number, ctx: ScreenContext): Float64Array {
  const step = Math.max(1, Math.ceil(m.cells.length / MAX_SAMPLES));
  const out = new Float64Array(Math.ceil(m.cells.length / step));
  let n = 0;
  for (let i = 0; i < m.cells.length; i += step) out[n++] = cellResidual(m.cells[i]!, refl, field, radiusM, ctx);
  return out.subarray(0, n).sort();
}

/** Member against one reflector's locus at the member's depth. */
export function fitMember(m: Member, refl: Reflector, field: Float32Array, ctx: ScreenContext): MemberFit {
  const locus = locusOf(ctx, refl, m.slice);
  if (!Number.isFinite(locus.radiusM)) return { member: m, medianM: NaN, iqrM: NaN, residualM: Infinity, passed: false };
  const res = memberResiduals(m, refl, field, locus.radiusM, ctx);
  const residualM = quantileSorted(res, 0.5);
  const medianM = locus.radiusM + residualM;
  const iqrM = quantileSorted(res, 0.75) - quantileSorted(res, 0.25);
  // on the locus, and shaped like it: the cells keep to the band rather than crossing it
  const passed = Math.abs(residualM) <= locus.toleranceM && iqrM <= 2 * (locus.bandHalfM + ctx.positionM);
  return { member: m, medianM, iqrM, residualM, passed };
}

/** A reflector's locus in slice k (an overhead object's lies nearer and wider: locusAtHeight). */
export function locusOf(ctx: ScreenContext, refl: Reflector, k: number): SliceLocus {
  return locusAtHeight(ctx.loci[k]!, refl.heightM);
}

/** Test 1 (distance part): the reflector whose locus holds most members of the anomaly. */
export function bestMoveOut(a: Anomaly3D, ctx: ScreenContext): MoveOutResult | undefined {
  let best: MoveOutResult | undefined;
  let bestResidual = Infinity;
  let reach = 0;
  for (const m of a.members) reach = Math.max(reach, ctx.loci[m.slice]!.radiusM + 2 * ctx.loci[m.slice]!.toleranceM);
  for (let r = 0; r < ctx.reflectors.length; r++) {
    const field = ctx.fields[r];
    if (!field) continue;
    let near = Infinity;
    for (let i = 0; i < a.cells.length; i++) near = Math.min(near, field[a.cells[i]!]!);
    if (near > reach) continue;
    const fits = a.members.map((m) => fitMember(m, ctx.reflectors[r]!, field, ctx));
    const fraction = fits.filter((f) => f.passed).length / fits.length;
    const residual = fits.reduce((s, f) => s + Math.abs(f.residualM) / locusOf(ctx, ctx.reflectors[r]!, f.member.slice).toleranceM, 0) / fits.length;
    if (!best || fraction > best.fraction || (fraction === best.fraction && residual < bestResidual)) {
      best = { reflector: r, fits, fraction };
      bestResidual = residual;
    }
  }
  return best;
}

export function moveOutEvidence(mo: MoveOutResult, ctx: ScreenContext): Evidence[] {
  const refl = ctx.reflectors[mo.reflector]!;
  const n = mo.fits.length;
  return mo.fits.map((f) => {
    const l = locusOf(ctx, refl, f.member.slice);
    return {
      test: 'move-out',
      featureId: refl.featureId,
      measured: f.medianM,
      expected: l.radiusM,
      tolerance: l.toleranceM,
      units: 'm',
      passed: f.passed,
      weight: ((f.passed ? 1 : -1) * WEIGHTS.moveOut) / n,
      slice: f.member.slice,
      detail: `slice ${f.member.slice} (${l.topM.toFixed(2)}-${l.bottomM.toFixed(2)} m): median distance to ${refl.kind}${refl.source === 'posts' ? ' posts' : ''} ${refl.featureId} ${f.medianM.toFixed(2)} m (IQR ${f.iqrM.toFixed(2)} m), locus z c/v ${l.radiusM.toFixed(2)} m`,
    } satisfies Evidence;
  });
}

/** Least-squares slope of y on x with its standard error (NaN when it cannot be estimated). */
function slope(x: number[], y: number[]): { b: number; se: number; rms: number } {
  const n = x.length;
  const mx = x.reduce((s, v) => s + v, 0) / n, my = y.reduce((s, v) => s + v, 0) / n;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i]! - mx) ** 2;
    sxy += (x[i]! - mx) * (y[i]! - my);
  }
  const b = sxx > 0 ? sxy / sxx : NaN;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (y[i]! - my - b * (x[i]! - mx)) ** 2;
  const rms = Math.sqrt(ss / n);
  const se = n > 2 && sxx > 0 ? Math.sqrt(ss / (n - 2) / sxx) : NaN;
  return { b, se, rms };
}

/** Test 1 (slope part): fitted dr/dz of the member distances against c / v over the depth range. */
export function slopeEvidence(mo: MoveOutResult, ctx: ScreenContext): Evidence | undefined {
  // one point per slice (the median over its members), so a slice with many pieces does not dominate
  const per = new Map<number, number[]>();
  for (const f of mo.fits) {
    const l = per.get(f.member.slice);
    if (l) l.push(f.medianM);
    else per.set(f.member.slice, [f.medianM]);
  }
  const ks = [...per.keys()].sort((p, q) => p - q);
  const zs = ks.map((k) => ctx.loci[k]!.depthM);
  const ds = ks.map((k) => {
    return median(per.get(k)!);
  });
  const zmin = Math.min(...zs), zmax = Math.max(...zs);
  if (zmax - zmin <= 0) return undefined;
  const refl = ctx.reflectors[mo.reflector]!;
  const lmin = locusOf(ctx, refl, ks[zs.indexOf(zmin)]!), lmax = locusOf(ctx, refl, ks[zs.indexOf(zmax)]!);
  const expected = (lmax.radiusM - lmin.radiusM) / (zmax - zmin);
  if (!Number.isFinite(expected)) return undefined;
  const fit = slope(zs, ds);
  const se = Number.isFinite(fit.se) ? fit.se : (Math.SQRT2 * ctx.positionM) / (zmax - zmin);
  const tolerance = ctx.rateTolerance * expected + 2 * se;
  // A line-bound strip sits on its line for as long as the line lies within the locus band: an air event
  // on one line spans the depth over which the band (half-width b) sweeps past it, a shift of 2 (b + position).
  const band = ctx.lineBound ? 2 * (0.5 * (lmin.bandHalfM + lmax.bandHalfM) + ctx.positionM) : 2 * ctx.positionM;
  const measurable = expected * (zmax - zmin) >= band && 2 * se <= 0.5 * expected;
  const passed = Math.abs(fit.b - expected) <= tolerance;
  return {
    test: 'move-out-slope',
    featureId: refl.featureId,
    measured: fit.b,
    expected,
    tolerance,
    units: 'm/m',
    passed: measurable && passed,
    weight: !measurable ? 0 : passed ? WEIGHTS.slopePass : WEIGHTS.slopeFail,
    detail: `${ks.length} slices over ${zmin.toFixed(2)}-${zmax.toFixed(2)} m: dr/dz ${fit.b.toFixed(2)} +- ${se.toFixed(2)} against c/v ${expected.toFixed(2)}${measurable ? '' : ' (inconclusive: shift too small against position error)'}`,
  };
}

function angleDiff(a: number, b: number): number {
  const d = Math.abs(a - b) % 180;
  return Math.min(d, 180 - d);
}

/** Test 2: linear members parallel to the wall / edge / fence line at the predicted offset. */
export function edgeEvidence(mo: MoveOutResult, ctx: ScreenContext): Evidence | undefined {
  const refl = ctx.reflectors[mo.reflector]!;
  if (refl.segments.length === 0) return undefined;
  const lin = mo.fits.filter((f) => f.member.shape.kind === 'linear');
  if (lin.length === 0) return undefined;
  const diffs = lin.map((f) => angleDiff(f.member.shape.directionDeg, nearestSegmentAzimuth(refl, f.member.x, f.member.y)));
  const ok = lin.filter((f, i) => f.passed && diffs[i]! <= ctx.parallelToleranceDeg).length;
  const med = medianHigh(diffs);
  const passed = ok / lin.length >= 0.5;
  return {
    test: 'edge-alignment',
    featureId: refl.featureId,
    measured: med,
    expected: 0,
    tolerance: ctx.parallelToleranceDeg,
    units: 'deg',
    passed,
    weight: passed ? WEIGHTS.edge : 0,
    detail: `${ok} of ${lin.length} linear members parallel to ${refl.kind} ${refl.featureId} (median angle ${med.toFixed(1)} deg) at the predicted offset`,
  };
}

/** Result of the post-spacing test for one member (test 3). */
export interface PostTrainHit {
  member: Member;
  featureId: string;
  spacingM: number;
  measuredM: number;
  coherence: number;
  onRing: boolean;
  passed: boolean;
}

/**
 * Test 3: per slice and fence with posts, the members near the fence (within the locus band plus
 * half a spacing) projected onto the fence line; their along-fence positions s_i are tested for the
 * post period p by the Rayleigh coherence R = |mean exp(2 pi i s_i / p)| (1 for a perfect train,
 * about 1/sqrt(n) for random positions; a train with missing posts still scores 1). A train passes
 * with n >= 3 and R >= 0.7; a member passes when its train does and it lies on the ring of a post.
 * Members far from the fence are never considered: regular spacing alone is not air.
 */
export function postTrains(members: Member[], ctx: ScreenContext): Map<number, PostTrainHit> {
  const hits = new Map<number, PostTrainHit>();
  const mpu = ctx.metresPerUnit;
  for (let r = 0; r < ctx.reflectors.length; r++) {
    const posts = ctx.reflectors[r]!;
    const field = ctx.fields[r];
    if (posts.source !== 'posts' || !posts.postSpacingM || !field) continue;
    const line = ctx.reflectors.find((q) => q.featureId === posts.featureId && q.source === 'line');
    if (!line) continue;
    const p = posts.postSpacingM;
    const bySlice = new Map<number, Member[]>();
    for (const m of members) {
      const l = ctx.loci[m.slice]!;
      if (distanceTo(line, m.x, m.y) * mpu > l.radiusM + l.toleranceM + 0.5 * p) continue;
      const list = bySlice.get(m.slice);
      if (list) list.push(m);
      else bySlice.set(m.slice, [m]);
    }
    for (const [, list] of bySlice) {
      if (list.length < 3) continue;
      const s = list.map((m) => alongDistance(line, m.x, m.y) * mpu);
      let re = 0, im = 0;
      for (const v of s) {
        re += Math.cos((2 * Math.PI * v) / p);
        im += Math.sin((2 * Math.PI * v) / p);
      }
      const coherence = Math.hypot(re, im) / s.length;
      const sorted = [...s].sort((a, b) => a - b);
      const gaps: number[] = [];
      for (let i = 1; i < sorted.length; i++) {
        const g = sorted[i]! - sorted[i - 1]!;
        const k = Math.max(1, Math.round(g / p));
        if (g > 0.25 * p) gaps.push(g / k);
      }
      gaps.sort((a, b) => a - b);
      const measuredM = gaps.length ? gaps[gaps.length >> 1]! : NaN;
      const train = coherence >= 0.7;
      for (const m of list) {
        const fit = fitMember(m, posts, field, ctx);
        const onRing = Math.abs(fit.residualM) <= ctx.loci[m.slice]!.toleranceM;
        const prev = hits.get(m.id);
        const hit = { member: m, featureId: posts.featureId, spacingM: p, measuredM, coherence, onRing, passed: train && onRing };
        if (!prev || (hit.passed && !prev.passed)) hits.set(m.id, hit);
      }
    }
  }
  return hits;
}

export function postEvidence(a: Anomaly3D, hits: Map<number, PostTrainHit>): Evidence | undefined {
  const mine = a.members.map((m) => hits.get(m.id)).filter((h): h is PostTrainHit => !!h);
  if (mine.length === 0) return undefined;
  const h = mine.find((x) => x.passed) ?? mine[0]!;
  return {
    test: 'post-spacing',
    featureId: h.featureId,
    measured: h.measuredM,
    expected: h.spacingM,
    tolerance: 0.15 * h.spacingM,
    units: 'm',
    passed: h.passed,
    weight: h.passed ? WEIGHTS.postSpacing : 0,
    slice: h.member.slice,
    detail: `train along fence ${h.featureId}: coherence ${h.coherence.toFixed(2)} at the ${h.spacingM} m post spacing (pass >= 0.7), member ${h.onRing ? 'on' : 'not on'} a post ring`,
  };
}

/**
 * Test 4: members that coincide with a fitted hyperbola's apex in the slice of its depth.
 *
 * An above-ground object at horizontal distance r from a line draws t(x) = 2 sqrt(r^2 + x^2) / c on
 * it: a hyperbola of velocity c (K = 1) with apex time t0 = 2 r / c at the trace nearest the object.
 * So a fit counts as an air-wave hyperbola only when its velocity is c within
 * max(airVelocityTolerance x c, 2 sigma_v): a fit faster than light, or between air and soil, is the
 * misfit of a flat or flat-topped event (a slab, a pier top), not air, and gives no evidence. It weighs
 * `airHyperbola` when a plan reflector stands at r = c t0 / 2 from the apex within the slice's locus
 * tolerance, and only `airHyperbolaUnexplained` when none does (an unsurveyed object, or a misfit:
 * by itself not enough to call a candidate target air).
 */
export function hyperbolaHits(members: Member[], hyperbolas: HyperbolaFit[], model: VelocityModel, ctx: ScreenContext, airVelocityTolerance = 0.1): Map<number, Evidence> {
  const out = new Map<number, Evidence>();
  const g = ctx.grid;
  const tolM = Math.max(2 * g.cellSize * ctx.metresPerUnit, ctx.positionM);
  for (const h of hyperbolas) {
    if (h.flags && h.flags.length > 0 && h.origin !== 'above-ground') continue;
    const airLike = h.origin === 'above-ground' || h.permittivity < 2;
    const vTol = Math.max(airVelocityTolerance * C_M_PER_NS, 2 * (h.uncertaintyMPerNs ?? 0));
    if (airLike && !(Math.abs(h.velocityMPerNs - C_M_PER_NS) <= vTol)) continue;
    const z = depthAtVerticalTimeNs(model, h.t0Ns);
    let k = ctx.loci.findIndex((l) => z >= l.topM && z <= l.bottomM);
    if (k < 0) {
      let best = Infinity;
      ctx.loci.forEach((l, i) => {
        if (Math.abs(l.depthM - z) < best) {
          best = Math.abs(l.depthM - z);
          k = i;
        }
      });
    }
    // the reflector an air-wave hyperbola points at: r = c t0 / 2 from its apex
    let explainedBy: string | null = null;
    if (airLike) {
      const r = (C_M_PER_NS * h.t0Ns) / 2;
      const tol = ctx.loci[k]?.toleranceM ?? ctx.positionM;
      let bestMiss = Infinity;
      for (let i = 0; i < ctx.reflectors.length; i++) {
        if (!ctx.fields[i]) continue;
        const miss = Math.abs(distanceTo(ctx.reflectors[i]!, h.x, h.y) * ctx.metresPerUnit - r);
        if (miss <= tol && miss < bestMiss) {
          bestMiss = miss;
          explainedBy = ctx.reflectors[i]!.featureId;
        }
      }
    }
    // Only rows within tolM of the apex can hold a cell within tolM (cells are row-major, ascending):
    // the scan is cut to them, which gives the same dmin whenever dmin <= tolM.
    const rowFrom = Math.floor((g.originY - h.y) / g.cellSize - 0.5 - tolM / (g.cellSize * ctx.metresPerUnit)) - 1;
    const rowTo = Math.ceil((g.originY - h.y) / g.cellSize - 0.5 + tolM / (g.cellSize * ctx.metresPerUnit)) + 1;
    for (const m of members) {
      if (Math.abs(m.slice - k) > 1) continue;
      let dmin = Infinity;
      const end = lowerBound(m.cells, (rowTo + 1) * g.width);
      for (let i = lowerBound(m.cells, rowFrom * g.width); i < end; i++) {
        const c = m.cells[i]!;
        const row = (c / g.width) | 0;
        const x = cellCentreX(g, c - row * g.width), y = cellCentreY(g, row);
        dmin = Math.min(dmin, Math.hypot(x - h.x, y - h.y) * ctx.metresPerUnit);
      }
      if (dmin > tolM) continue;
      const e: Evidence = {
        test: airLike ? 'air-hyperbola' : 'soil-hyperbola',
        featureId: explainedBy,
        measured: dmin,
        expected: 0,
        tolerance: tolM,
        units: 'm',
        passed: true,
        weight: !airLike ? WEIGHTS.soilHyperbola : explainedBy ? WEIGHTS.airHyperbola : WEIGHTS.airHyperbolaUnexplained,
        slice: m.slice,
        detail:
          `hyperbola on line ${h.line} trace ${h.trace} (K ${h.permittivity.toFixed(2)}, ${h.origin}) apex ${dmin.toFixed(2)} m from slice ${m.slice} member` +
          (airLike ? (explainedBy ? `; ${explainedBy} stands at c t0/2 = ${((C_M_PER_NS * h.t0Ns) / 2).toFixed(2)} m from the apex` : `; no plan feature at c t0/2 = ${((C_M_PER_NS * h.t0Ns) / 2).toFixed(2)} m from the apex`) : ''),
      };
      const prev = out.get(m.id);
      if (!prev || e.weight > prev.weight) out.set(m.id, e);
    }
  }
  return out;
}

/** First index of ascending `a` whose value is >= v (a.length when none). */
function lowerBound(a: Int32Array, v: number): number {
  let lo = 0, hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (a[mid]! < v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Cell centres of a member (site CRS), subsampled to at most MAX_SAMPLES. */
function memberXY(m: Member, g: SliceGrid): { x: Float64Array; y: Float64Array } {
  const step = Math.max(1, Math.ceil(m.cells.length / MAX_SAMPLES));
  const n = Math.ceil(m.cells.length / step);
  const x = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0, j = 0; i < m.cells.length; i += step, j++) {
    const c = m.cells[i]!;
    const row = (c / g.width) | 0;
    x[j] = cellCentreX(g, c - row * g.width);
    y[j] = cellCentreY(g, row);
  }
  return { x, y };
}

/**
 * Test 5: an anomaly no plan feature explains, that still moves out at the air rate. Two models:
 * a point object P (cells on rings |p - P| = r(z_k), P by Gauss-Newton from the shallowest member's
 * centroid) and, for linear anomalies, a straight object (offsets n . p = a + s r(z_k) across the
 * anomaly's axis). The better model passes when its RMS residual is within the mean locus tolerance,
 * the free slope of distance against depth matches c / v within the rate tolerance, over at least
 * three slices with a measurable shift. Its geometry is where the object must stand.
 */
export function unsurveyedEvidence(a: Anomaly3D, ctx: ScreenContext): Evidence | undefined {
  const mpu = ctx.metresPerUnit;
  const g = ctx.grid;
  const slicesSet = [...new Set(a.members.map((m) => m.slice))].sort((p, q) => p - q);
  if (slicesSet.length < 3) return undefined;
  const l0 = ctx.loci[slicesSet[0]!]!, l1 = ctx.loci[slicesSet[slicesSet.length - 1]!]!;
  const expected = (l1.radiusM - l0.radiusM) / (l1.depthM - l0.depthM);
  const tolM = slicesSet.reduce((s, k) => s + ctx.loci[k]!.toleranceM, 0) / slicesSet.length;
  const measurable = expected * (l1.depthM - l0.depthM) >= 2 * ctx.positionM;
  const pts = a.members.map((m) => ({ m, r: ctx.loci[m.slice]!.radiusM / mpu, ...memberXY(m, g) }));
  const shallow = pts.filter((p) => p.m.slice === slicesSet[0]);
  // point model
  let px = 0, py = 0, w = 0;
  for (const p of shallow) for (let i = 0; i < p.x.length; i++) { px += p.x[i]!; py += p.y[i]!; w++; }
  px /= w; py /= w;
  for (let it = 0; it < 30; it++) {
    let a11 = 0, a12 = 0, a22 = 0, b1 = 0, b2 = 0;
    for (const p of pts) for (let i = 0; i < p.x.length; i++) {
      const dx = px - p.x[i]!, dy = py - p.y[i]!;
      const d = Math.hypot(dx, dy) || 1e-9;
      const jx = dx / d, jy = dy / d, res = d - p.r;
      a11 += jx * jx; a12 += jx * jy; a22 += jy * jy; b1 += jx * res; b2 += jy * res;
    }
    const det = a11 * a22 - a12 * a12;
    if (!(Math.abs(det) > 1e-12)) break;
    const sx = (a22 * b1 - a12 * b2) / det, sy = (a11 * b2 - a12 * b1) / det;
    px -= sx; py -= sy;
    if (Math.hypot(sx, sy) < 1e-6 * g.cellSize) break;
  }
  const perSlice = (dist: (x: number, y: number) => number) => {
    const zs: number[] = [], ds: number[] = [];
    let ss = 0, n = 0;
    for (const k of slicesSet) {
      const v: number[] = [];
      for (const p of pts) if (p.m.slice === k) for (let i = 0; i < p.x.length; i++) {
        const d = dist(p.x[i]!, p.y[i]!) * mpu;
        v.push(d);
        ss += (d - ctx.loci[k]!.radiusM) ** 2;
        n++;
      }
      zs.push(ctx.loci[k]!.depthM);
      ds.push(medianHigh(v));
    }
    return { zs, ds, rms: Math.sqrt(ss / n) };
  };
  const point = perSlice((x, y) => Math.hypot(x - px, y - py));
  let best = { model: 'point' as 'point' | 'line', ...point, geometry: { type: 'Point', coordinates: [px, py] } as NonNullable<Evidence['geometry']> };
  if (a.shape.kind === 'linear') {
    const az = (a.shape.directionDeg * Math.PI) / 180;
    const ux = Math.sin(az), uy = Math.cos(az);
    const nx = uy, ny = -ux;
    // offsets across the axis per slice, then a + s r(z) by least squares for s = +1 and -1
    const off = slicesSet.map((k) => {
      const v: number[] = [];
      for (const p of pts) if (p.m.slice === k) for (let i = 0; i < p.x.length; i++) v.push(p.x[i]! * nx + p.y[i]! * ny);
      return medianHigh(v);
    });
    for (const sgn of [1, -1]) {
      const a0 = off.reduce((s, o, i) => s + o - (sgn * ctx.loci[slicesSet[i]!]!.radiusM) / mpu, 0) / off.length;
      const line = perSlice((x, y) => Math.abs(x * nx + y * ny - a0));
      if (line.rms < best.rms) {
        let cx = 0, cy = 0, n = 0;
        for (const p of pts) for (let i = 0; i < p.x.length; i++) { cx += p.x[i]!; cy += p.y[i]!; n++; }
        cx /= n; cy /= n;
        const t = cx * nx + cy * ny - a0;
        const fx = cx - t * nx, fy = cy - t * ny;
        const h = (0.5 * a.shape.lengthM) / mpu;
        best = { model: 'line', ...line, geometry: { type: 'LineString', coordinates: [[fx - ux * h, fy - uy * h], [fx + ux * h, fy + uy * h]] } };
      }
    }
  }
  const fit = slope(best.zs, best.ds);
  const se = Number.isFinite(fit.se) ? fit.se : 0;
  const tolerance = ctx.rateTolerance * expected + 2 * se;
  const conclusive = measurable && 2 * se <= 0.5 * expected;
  const passed = conclusive && best.rms <= tolM && Math.abs(fit.b - expected) <= tolerance;
  const e: Evidence = {
    test: 'unsurveyed-obstruction',
    featureId: null,
    measured: fit.b,
    expected,
    tolerance,
    units: 'm/m',
    passed,
    weight: passed ? WEIGHTS.unsurveyed : 0,
    detail: `no plan feature explains it; best ${best.model} model: distance grows ${fit.b.toFixed(2)} m per m of depth (air rate ${expected.toFixed(2)}), RMS off the locus ${best.rms.toFixed(2)} m (tolerance ${tolM.toFixed(2)}) over ${slicesSet.length} slices${conclusive ? '' : ' (inconclusive)'}`,
  };
  if (passed) {
    e.geometry = best.geometry;
    e.detail += best.model === 'point' ? '; a post-like object must stand at the back-projected point' : '; a wall or edge must stand along the back-projected line';
  }
  return e;
}

/** Energy on the locus in the stack made before background removal (flat air events survive there). */
export function beforeBackgroundEvidence(mo: MoveOutResult, ctx: ScreenContext, threshold: number): Evidence | undefined {
  const field = ctx.fields[mo.reflector];
  if (!ctx.beforeScores || !field) return undefined;
  const refl = ctx.reflectors[mo.reflector]!;
  const g = ctx.grid;
  let best: Evidence | undefined;
  for (const f of mo.fits) {
    const l = locusOf(ctx, refl, f.member.slice);
    const sc = ctx.beforeScores[f.member.slice];
    if (!sc || Math.abs(f.residualM) > l.toleranceM) continue;
    // band cells within two metres of the member's cells
    const reach = Math.ceil(2 / (g.cellSize * ctx.metresPerUnit));
    const m = f.member;
    let c0 = Infinity, c1 = -Infinity, r0 = Infinity, r1 = -Infinity;
    for (const c of m.cells) {
      const r = (c / g.width) | 0, cc = c - r * g.width;
      c0 = Math.min(c0, cc); c1 = Math.max(c1, cc); r0 = Math.min(r0, r); r1 = Math.max(r1, r);
    }
    const vals: number[] = [];
    for (let r = Math.max(0, r0 - reach); r <= Math.min(g.height - 1, r1 + reach); r++)
      for (let c = Math.max(0, c0 - reach); c <= Math.min(g.width - 1, c1 + reach); c++) {
        const k = r * g.width + c;
        if (Math.abs(field[k]! - l.radiusM) <= l.bandHalfM && Number.isFinite(sc[k]!)) vals.push(sc[k]!);
      }
    if (vals.length < 4) continue;
    const med = medianHigh(vals);
    const passed = med >= threshold;
    if (!best || (passed && !best.passed)) {
      best = {
        test: 'before-background',
        featureId: refl.featureId,
        measured: med,
        expected: threshold,
        tolerance: 0,
        units: 'robust z',
        passed,
        weight: passed ? WEIGHTS.beforeBackground : 0,
        slice: m.slice,
        detail: `median robust score ${med.toFixed(1)} on the ${refl.featureId} locus band before background removal (slice ${m.slice})`,
      };
    }
  }
  return best;
}
