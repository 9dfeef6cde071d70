import { C_M_PER_NS, type HyperbolaFit, type Origin, type VelocityModel, type VelocityReport } from './model';
import { medianHigh, weightedMedian } from '@lamina/stats';
import { permittivityFromVelocity, TOPP_CAUTION, TOPP_METHOD, toppMoisture } from './physics';

/** Fits whose permittivity is below this are above-ground (air-wave) reflections. Common practice, no source. @default 2 */
export const ABOVE_GROUND_MAX_PERMITTIVITY = 2;

/**
 * Fits above this permittivity are `implausible`, flagged and left out of the site model: the wettest
 * soils of the Davis & Annan (1989) table (saturated clay) reach K 40; beyond that only water (K 80).
 * @default 40
 */
export const MAX_SOIL_PERMITTIVITY = 40;

/**
 * The driest soils of the Davis & Annan (1989) table (dry sand, K 3-5; from memory): a layer of a
 * two-layer model slower than this is not soil but an artefact of the Dix inversion. @default 3
 */
export const MIN_SOIL_PERMITTIVITY = 3;

/**
 * Relative standard uncertainty of the velocity that one object gives the site, whatever the scatter of
 * its own fits says: a box's flat top, a pipe's unresolved radius, an oblique crossing or a layer above it
 * bias every fit of one object alike, and no scatter among them shows it. Measured, not physics: on the
 * 120 TUNE scenes of `pnpm bench field` (odd seeds 1-47, 49-95, 145-191, 193-239, 241-287; session 28),
 * the site velocity of the 12 scenes resting on one object was off the truth by rms 0.22 in ln v
 * (1.4826 x median |ln v / v_true| 0.20). @default 0.2
 */
export const ONE_OBJECT_RELATIVE_UNCERTAINTY = 0.2;

/**
 * Relative standard uncertainty of the assumed velocity when no fit qualifies: the common soils, from
 * dry sand to wet clay, span K 4 to 30 (v 0.055 to 0.15 m/ns; the Davis & Annan 1989 table, from memory);
 * as a uniform spread in ln v that is half the log range over sqrt 3, 0.29.
 */
export const ASSUMED_RELATIVE_UNCERTAINTY = Math.log(Math.sqrt(30 / 4)) / 2 / Math.sqrt(3);

/**
 * Standard uncertainty (m/ns) of a site velocity as an estimate of the soil's: the standard error of a
 * median of `objects` independent samples (1.2533 x the spread over sqrt n), each sample at least as
 * uncertain as one object is (`ONE_OBJECT_RELATIVE_UNCERTAINTY`), since the fits' spread cannot show an
 * error that all fits of an object share; with no object (an assumed velocity),
 * `ASSUMED_RELATIVE_UNCERTAINTY`. On the TUNE scenes above, |ln v / v_true| was within one such
 * uncertainty on 81 % and within two on 95 %; the fits' spread alone covered 72 %.
 */
export function siteVelocityUncertainty(velocityMPerNs: number, spreadMPerNs: number, objects: number): number {
  if (!(objects >= 1)) return ASSUMED_RELATIVE_UNCERTAINTY * velocityMPerNs;
  return Math.max(1.2533 * spreadMPerNs, ONE_OBJECT_RELATIVE_UNCERTAINTY * velocityMPerNs) / Math.sqrt(objects);
}

/**
 * Flag of a fit whose apex lies in the direct-wave zone (`earlyApexPeriods` of `detectHyperbolas`): it may
 * be the residue of the direct and ground waves, so the site model takes such fits only when no other fit
 * qualifies (`earlyApexes`).
 */
export const EARLY_APEX_FLAG = 'apex in the direct-wave zone';

/** Origin and flags of a fit from its velocity. */
export function classifyVelocity(
  velocityMPerNs: number,
  options: { aboveGroundMaxPermittivity?: number; maxSoilPermittivity?: number } = {},
): { origin: Origin; flags: string[] } {
  const k = permittivityFromVelocity(velocityMPerNs);
  const flags: string[] = [];
  if (velocityMPerNs > C_M_PER_NS) flags.push('v > c');
  const kMax = options.maxSoilPermittivity ?? MAX_SOIL_PERMITTIVITY;
  if (k > kMax) {
    flags.push(`K > ${kMax}`);
    return { origin: 'implausible', flags };
  }
  return { origin: k < (options.aboveGroundMaxPermittivity ?? ABOVE_GROUND_MAX_PERMITTIVITY) ? 'above-ground' : 'subsurface', flags };
}

/**
 * Groups of fits that are one object seen on several lines (single linkage: apexes within `linkM`
 * metres in plan, apex times within `tolerance` of each other). Returns each fit's group index and the
 * groups' sizes. A pipe crossing 17 lines is one sample of the soil, not 17. The velocities are not
 * compared: they are what differs between fits of one object (a point fit of a pipe whose radius a line
 * does not resolve reads it fast by about sqrt(zc / (zc - R)), a resolved one does not).
 */
export function objectGroups(
  fits: HyperbolaFit[],
  options: { metresPerUnit?: number; linkM?: number; tolerance?: number } = {},
): { group: Int32Array; sizes: number[] } {
  const mpu = options.metresPerUnit ?? 1;
  const link = options.linkM ?? 1.5;
  const tol = options.tolerance ?? 0.1;
  const n = fits.length;
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const root = (i: number): number => {
    while (parent[i] !== i) i = parent[i] = parent[parent[i]!]!;
    return i;
  };
  const close = (a: number, b: number, rel: number) => Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b));
  for (let i = 0; i < n; i++) {
    const a = fits[i]!;
    for (let j = i + 1; j < n; j++) {
      const b = fits[j]!;
      // Fits that `correctObliqueCrossings` put on one straight strike are one linear object, however far
      // apart their apexes lie (a pipe crossing the lines at 30 degrees moves its apex 1 m per 0.5 m line;
      // one crossing lines 2.5 m apart at right angles, 2.5 m per line).
      const strike = a.strike !== undefined && a.strike === b.strike;
      if (!strike) {
        if (Math.hypot(a.x - b.x, a.y - b.y) * mpu > link) continue;
        if (!close(a.t0Ns, b.t0Ns, tol)) continue;
      }
      const ra = root(i);
      const rb = root(j);
      if (ra !== rb) parent[ra] = rb;
    }
  }
  const index = new Map<number, number>();
  const group = new Int32Array(n);
  const sizes: number[] = [];
  for (let i = 0; i < n; i++) {
    const r = root(i);
    let g = index.get(r);
    if (g === undefined) {
      g = sizes.length;
      index.set(r, g);
      sizes.push(0);
    }
    group[i] = g;
    sizes[g]!++;
  }
  return { group, sizes };
}

/**
 * A fit counts in the site model when it is subsurface, not flagged, with a finite uncertainty, and the
 * velocity it gives the model (`siteVelocityOf`) is a soil's: a radius-free velocity outside the soils'
 * range (`classifyVelocity`: K above 40 or below 2) is the v-R trade-off run into a corner (a velocity
 * no soil has with a "radius" to match), and the point fit beside it is biased fast by the radius it
 * could not resolve, so the fit does not read the soil. With `earlyApexes`, a fit whose only flag is
 * `EARLY_APEX_FLAG` counts too.
 */
export function usableForSite(f: HyperbolaFit, options?: { earlyApexes?: boolean }): boolean {
  const earlyApexes = options?.earlyApexes === true;
  if (!(f.origin === 'subsurface' && (f.flags ?? []).every((g) => earlyApexes && g === EARLY_APEX_FLAG) && Number.isFinite(f.uncertaintyMPerNs) && f.velocityMPerNs > 0)) return false;
  const c = classifyVelocity(siteVelocityOf(f));
  return c.origin === 'subsurface' && c.flags.length === 0;
}

/** Weighted median and spread (1.4826 x weighted median absolute deviation, the normal-consistent scale). */
export function robustCentre(values: ArrayLike<number>, weights: ArrayLike<number>): { centre: number; spread: number } {
  const centre = weightedMedian(values, weights);
  const dev = Array.from(values, (v) => Math.abs(v - centre));
  return { centre, spread: 1.4826 * weightedMedian(dev, weights) };
}

export interface SiteModelOptions {
  /** Velocity used when no fit qualifies (K about 9, common practice for moist soil, no source). @default 0.1 */
  fallbackVelocityMPerNs?: number;
  /** Metres per site CRS unit of the fits' x, y (for `objectGroups`). @default 1 */
  metresPerUnit?: number;
  /** Weights are 1 / max(sigma, floor * median v)^2, so no single near-exact fit outweighs the rest. @default 0.02 */
  uncertaintyFloor?: number;
  /** Try a two-layer (Dix) model. @default true */
  layered?: boolean;
  /** Independent objects (see `objectGroups`) needed in each depth group of a layered model. @default 4 */
  minFitsPerLayer?: number;
  /**
   * Smallest difference of the two layers' velocities worth a layer, as a fraction of the shallow one:
   * below it a layer is within the systematic error of a fit (time-zero, radius, oblique crossings).
   * @default 0.02
   */
  layerSystematic?: number;
  /**
   * Velocity of a fit whose radius is not resolved: `radiusFree`, the fit with the radius free, which
   * goes with its uncertainty (`siteVelocityOf`); `point`, the point fit (the fast end of the v-R
   * trade-off). @default 'radiusFree'
   */
  unresolvedVelocity?: 'radiusFree' | 'point';
  /**
   * `perFit`: each fit weighs 1 / sigma^2 of its own; `shared`: the fits of one object (`objectGroups`)
   * share one object's weight. @default 'perFit' (see `siteVelocityModel`)
   */
  objectWeights?: 'perFit' | 'shared';
  /** Fits flagged `EARLY_APEX_FLAG` (and nothing else) count (`buildVelocityReport`: when no other fit does). @default false */
  earlyApexes?: boolean;
}

/**
 * The velocity a fit gives the site model: with its radius unresolved, the radius-free fit's velocity
 * (`radiusFreeVelocityMPerNs`) that its uncertainty belongs to, otherwise `velocityMPerNs`.
 */
export function siteVelocityOf(f: HyperbolaFit): number {
  const v = f.radiusResolved === false ? f.radiusFreeVelocityMPerNs : undefined;
  return v !== undefined && v > 0 ? v : f.velocityMPerNs;
}

/**
 * The per-fit weights of the site's weighted median over the usable fits: 1 / sigma^2, sigma the fit's
 * relative uncertainty times the plain median velocity (relative: K's relative error is twice v's, and a
 * slow fit is not more certain for being slow), floored at `uncertaintyFloor` of that median (`floor`,
 * m/ns) so no single near-exact fit outweighs the rest. `vOf` is the velocity each fit gives the site.
 */
export function fitWeights(usable: HyperbolaFit[], vOf: (f: HyperbolaFit) => number = siteVelocityOf, uncertaintyFloor = 0.02): { fitWeight: (f: HyperbolaFit) => number; floor: number } {
  const plainMedian = usable.length > 0 ? medianHigh(usable.map(vOf)) : 0.1;
  const floor = uncertaintyFloor * plainMedian;
  return { fitWeight: (f) => 1 / Math.max((f.uncertaintyMPerNs / vOf(f)) * plainMedian, floor) ** 2, floor };
}

/**
 * Site velocity from the usable fits: weighted median with a 1.4826 x weighted-MAD spread (at least the
 * `uncertaintyFloor`); weights 1/sigma^2 of each fit (`objectWeights` 'perFit'). Each line that crosses a
 * pipe samples the soil above another stretch of it, and the fits of one compact object are few: shared
 * per object (`shared`, each object one vote), a box (a tank or a footing, whose flat top reads as faster
 * soil) weighed as much as a pipe seen on a dozen lines. Replayed on the fits of the 120 TUNE scenes of
 * `pnpm bench field` (odd seeds 1-239), site K mean |error| 16.8 % shared, 15.6 % per fit; on the scenes
 * with six objects or more 6.6 / 6.2 / 15.2 / 7.5 / 5.8 % -> 6.4 / 4.0 / 9.6 / 4.6 / 5.3 % (seeds 1-47,
 * 49-95, 97-143, 145-191, 193-239).
 * The layer test below keeps the weights shared among an object's fits: its BIC counts objects (n), the
 * independent samples, and its residuals must weigh them as such (with per-fit weights the one layered
 * truth among the 168 field-bench scenes that the model had found, random-183, came out constant).
 * A layered model is chosen only when it beats the constant one by the Bayesian information criterion
 * (Schwarz 1978), BIC = n ln(WRSS / sum w) + k ln n with n the number of objects, k = 1 for a constant
 * velocity and 3 for two layers (v1, v2, the interface time): the fits' velocities are RMS velocities at
 * their zero-offset times t, v_rms(t)^2 = (v1^2 t1 + v2^2 (t - t1)) / t below t1 (Dix 1955); each
 * group needs `minFitsPerLayer` objects, v2 must be real and below c, the layers must differ by more than
 * `layerSystematic`, and the deep group's median time must lie a tenth beyond t1. The first layer ends
 * at z1 = v1 t1 / 2.
 */
export function siteVelocityModel(fits: HyperbolaFit[], options: SiteModelOptions = {}): Pick<VelocityReport, 'site' | 'model'> {
  const usable = fits.filter((f) => usableForSite(f, options));
  const vOf = (f: HyperbolaFit) => (options.unresolvedVelocity === 'point' ? f.velocityMPerNs : siteVelocityOf(f));
  const { fitWeight, floor } = fitWeights(usable, vOf, options.uncertaintyFloor);
  const { group, sizes } = objectGroups(usable, { metresPerUnit: options.metresPerUnit ?? 1 });
  const objectOf = new Map<HyperbolaFit, number>(usable.map((f, i) => [f, group[i]!]));
  // per fit for the site's median unless asked (`objectWeights`), for the layer test always shared among
  // an object's fits: its BIC counts objects, the independent samples
  const objectWeight = (f: HyperbolaFit) => fitWeight(f) / sizes[objectOf.get(f)!]!;
  const weightOf = options.objectWeights === 'shared' ? objectWeight : fitWeight;
  const deepest = usable.reduce((m, f) => Math.max(m, f.depthM), 0);
  const bottom = Math.max(deepest, 1);
  if (usable.length === 0) {
    const v = options.fallbackVelocityMPerNs ?? 0.1;
    return {
      site: { velocityMPerNs: v, permittivity: permittivityFromVelocity(v), spreadMPerNs: 0, uncertaintyMPerNs: siteVelocityUncertainty(v, 0, 0), fitCount: 0, note: `no usable subsurface hyperbola fit: assumed ${v} m/ns; depths are uncertain (the site velocity by about ${Math.round(100 * ASSUMED_RELATIVE_UNCERTAINTY)} %, the range of common soils)` },
      model: { kind: 'constant', layers: [{ topM: 0, bottomM: bottom, velocityMPerNs: v, permittivity: permittivityFromVelocity(v) }] },
    };
  }
  const { centre, spread } = robustCentre(
    usable.map(vOf),
    usable.map(weightOf),
  );
  const k = permittivityFromVelocity(centre);
  // the weighted MAD is 0 when one object holds over half the weight with one velocity; no fit is
  // taken as more certain than the floor, so neither is the site
  const spreadMPerNs = Math.max(spread, floor);
  const site: VelocityReport['site'] = {
    velocityMPerNs: centre,
    permittivity: k,
    spreadMPerNs,
    uncertaintyMPerNs: siteVelocityUncertainty(centre, spreadMPerNs, sizes.length),
    fitCount: usable.length,
    objectCount: sizes.length,
    ...moisture(k, false),
    ...(usable.some((f) => f.flags?.includes(EARLY_APEX_FLAG))
      ? { note: 'no fit below the direct-wave zone: the site rests on fits whose apexes lie inside it (one pulse to 1.5 periods after time-zero), which may be residue of the direct and ground waves; depths are uncertain' }
      : {}),
  };
  const constant: VelocityModel = { kind: 'constant', layers: [{ topM: 0, bottomM: bottom, velocityMPerNs: centre, permittivity: k }] };
  if (options.layered === false) return { site, model: constant };
  const layered = twoLayer(usable, vOf, objectWeight, (f) => objectOf.get(f)!, options, bottom);
  return { site, model: layered ?? constant };
}

function moisture(k: number, assumed: boolean): { moisture?: VelocityReport['site']['moisture'] } {
  if (assumed) return {};
  return { moisture: { volumetricWaterContent: toppMoisture(k), method: TOPP_METHOD, caution: TOPP_CAUTION } };
}

function twoLayer(
  usable: HyperbolaFit[],
  vOf: (f: HyperbolaFit) => number,
  weightOf: (f: HyperbolaFit) => number,
  objectOf: (f: HyperbolaFit) => number,
  options: SiteModelOptions,
  bottom: number,
): VelocityModel | null {
  const minN = options.minFitsPerLayer ?? 4;
  const systematic = options.layerSystematic ?? 0.02;
  // Zero-offset two-way time of each fit's apex.
  const all = usable
    .map((f) => ({ v: vOf(f), t: (2 * f.depthM) / f.velocityMPerNs, w: weightOf(f), o: objectOf(f) }))
    .sort((a, b) => a.t - b.t);
  const objects = new Set(all.map((e) => e.o)).size;
  if (objects < 2 * minN) return null;
  let sw = 0;
  let swv = 0;
  for (const e of all) {
    sw += e.w;
    swv += e.w * e.v;
  }
  const v0 = swv / sw;
  let rss0 = 0;
  for (const e of all) rss0 += e.w * (e.v - v0) ** 2;
  const bic = (rss: number, k: number) => objects * Math.log(Math.max(rss / sw, 1e-300)) + k * Math.log(objects);
  const bic0 = bic(rss0, 1);
  let best: LayerSplit | null = null;
  for (let k = 1; k < all.length; k++) {
    if (all[k]!.t === all[k - 1]!.t) continue;
    const shallow = all.slice(0, k);
    const deep = all.slice(k);
    const shallowObjects = new Set(shallow.map((e) => e.o)).size;
    const deepObjects = new Set(deep.map((e) => e.o)).size;
    if (shallowObjects < minN || deepObjects < minN) continue;
    // The shallow velocity holds down to the shallow group's deepest fit.
    const t1 = shallow[shallow.length - 1]!.t;
    let a = 0;
    let b = 0;
    for (const e of shallow) {
      a += e.w * e.v;
      b += e.w;
    }
    const v1 = a / b;
    // v2^2 by weighted least squares of v^2 t - v1^2 t1 = v2^2 (t - t1) over the deep fits.
    let num = 0;
    let den = 0;
    for (const e of deep) {
      const dt = e.t - t1;
      num += e.w * (e.v * e.v * e.t - v1 * v1 * t1) * dt;
      den += e.w * dt * dt;
    }
    const v22 = num / den;
    if (!(v22 > 0)) continue;
    const vInt = Math.sqrt(v22);
    if (vInt > C_M_PER_NS || Math.abs(vInt / v1 - 1) <= systematic) continue;
    const tDeep = weightedMedian(
      deep.map((e) => e.t),
      deep.map(() => 1),
    );
    if (!(tDeep - t1 >= 0.1 * tDeep)) continue;
    let rss = 0;
    for (const e of shallow) rss += e.w * (e.v - v1) ** 2;
    for (const e of deep) rss += e.w * (e.v - Math.sqrt((v1 * v1 * t1 + v22 * (e.t - t1)) / e.t)) ** 2;
    const score = bic(rss, 3);
    if (!best || score < best.bic) best = { bic: score, v1, vInt, t1, tDeep, shallowObjects, deepObjects };
  }
  if (!best || !(best.bic < bic0)) return null;
  const { v1, vInt, t1 } = best;
  const kInt = permittivityFromVelocity(vInt);
  if (kInt < MIN_SOIL_PERMITTIVITY || kInt > MAX_SOIL_PERMITTIVITY) return null;
  if (!significantLayer(all, best, systematic)) return null;
  const z1 = (v1 * t1) / 2;
  return {
    kind: 'layered',
    layers: [
      { topM: 0, bottomM: z1, velocityMPerNs: v1, permittivity: permittivityFromVelocity(v1) },
      { topM: z1, bottomM: Math.max(bottom, z1), velocityMPerNs: vInt, permittivity: permittivityFromVelocity(vInt) },
    ],
  };
}

interface LayerSplit {
  bic: number;
  v1: number;
  vInt: number;
  t1: number;
  /** The deep group's median zero-offset time. */
  tDeep: number;
  shallowObjects: number;
  deepObjects: number;
}

/**
 * Whether the interval velocity of a split differs from the first layer's beyond what the scatter of
 * the objects allows. Dix's inversion amplifies the error of the deep RMS velocity by t2 / (t2 - t1): a
 * deep group a few percent slower than the shallow one (one big pipe's resolved fits, the radius bias
 * of point fits) turns into an interval of half the velocity, which BIC alone, with the fits' formal
 * errors, accepts. The scatter s is the objects' own (1.4826 x the median absolute residual of the
 * objects, each the weighted mean of its fits', at least `systematic` x v1); each group's velocity then
 * has the standard error of a median, 1.2533 s / sqrt(objects); propagated through v_int^2 = (vr2^2 t2 - v1^2 t1) / (t2 - t1) at the deep
 * group's median time t2, the two layers must differ by more than 3 of their combined standard errors
 * (about 0.3 % false layers in Gaussian scatter).
 */
function significantLayer(all: { v: number; t: number; w: number; o: number }[], split: LayerSplit, systematic: number): boolean {
  const { v1, vInt, t1 } = split;
  // Each object's residual is the weighted mean of its fits' (one object, one sample of the soil).
  const sum = new Map<number, { r: number; w: number }>();
  for (const e of all) {
    const r = e.v - (e.t <= t1 ? v1 : Math.sqrt((v1 * v1 * t1 + vInt * vInt * (e.t - t1)) / e.t));
    const o = sum.get(e.o) ?? { r: 0, w: 0 };
    o.r += e.w * r;
    o.w += e.w;
    sum.set(e.o, o);
  }
  const residual = [...sum.values()].map((o) => Math.abs(o.r / o.w));
  const s = Math.max(1.4826 * medianHigh(residual), systematic * v1);
  const t2 = split.tDeep;
  const vr2 = Math.sqrt((v1 * v1 * t1 + vInt * vInt * (t2 - t1)) / t2);
  const se1 = (1.2533 * s) / Math.sqrt(split.shallowObjects);
  const se2 = (1.2533 * s) / Math.sqrt(split.deepObjects);
  const dt = t2 - t1;
  const seInt2 = Math.hypot(((2 * vr2 * t2) / dt) * se2, ((2 * v1 * t1) / dt) * se1);
  const seInt = seInt2 / (2 * vInt);
  return Math.abs(vInt - v1) > 3 * Math.hypot(seInt, se1);
}
