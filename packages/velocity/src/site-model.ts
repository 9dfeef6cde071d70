import { C_M_PER_NS, type HyperbolaFit, type Origin, type VelocityModel, type VelocityReport } from './model';
import { permittivityFromVelocity, dixInterval, TOPP_CAUTION, TOPP_METHOD, toppMoisture } from './physics';

/** Fits whose permittivity is below this are above-ground (air-wave) reflections. Common practice, no source. @default 2 */
export const ABOVE_GROUND_MAX_PERMITTIVITY = 2;

/**
 * Fits above this permittivity are flagged and left out of the site model: the wettest soils of the
 * Davis & Annan (1989) table (clay) reach K 40; beyond that only water (K 80). @default 40
 */
export const MAX_SOIL_PERMITTIVITY = 40;

/** Origin and flags of a fit from its velocity. */
export function classifyVelocity(
  velocityMPerNs: number,
  options: { aboveGroundMaxPermittivity?: number; maxSoilPermittivity?: number } = {},
): { origin: Origin; flags: string[] } {
  const k = permittivityFromVelocity(velocityMPerNs);
  const flags: string[] = [];
  if (velocityMPerNs > C_M_PER_NS) flags.push('v > c');
  const kMax = options.maxSoilPermittivity ?? MAX_SOIL_PERMITTIVITY;
  if (k > kMax) flags.push(`K > ${kMax}`);
  return { origin: k < (options.aboveGroundMaxPermittivity ?? ABOVE_GROUND_MAX_PERMITTIVITY) ? 'above-ground' : 'subsurface', flags };
}

/** A fit counts in the site model when it is subsurface, not flagged, with a finite uncertainty. */
export function usableForSite(f: HyperbolaFit): boolean {
  return f.origin === 'subsurface' && (f.flags?.length ?? 0) === 0 && Number.isFinite(f.uncertaintyMPerNs) && f.velocityMPerNs > 0;
}

/** Weighted median (the smallest value whose cumulative weight reaches half the total). */
export function weightedMedian(values: ArrayLike<number>, weights: ArrayLike<number>): number {
  const idx = Array.from({ length: values.length }, (_, i) => i).sort((a, b) => values[a]! - values[b]!);
  let total = 0;
  for (let i = 0; i < weights.length; i++) total += weights[i]!;
  if (!(total > 0)) return Number.NaN;
  let acc = 0;
  for (const i of idx) {
    acc += weights[i]!;
    if (acc >= total / 2) return values[i]!;
  }
  return values[idx[idx.length - 1]!]!;
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
  /** Weights are 1 / max(sigma, floor * median v)^2, so no single near-exact fit outweighs the rest. @default 0.02 */
  uncertaintyFloor?: number;
  /** Try a two-layer (Dix) model. @default true */
  layered?: boolean;
  /** Fits needed in each depth group of a layered model. @default 4 */
  minFitsPerLayer?: number;
  /** Difference of the group velocities, in combined standard errors, that calls for layers. @default 3 */
  layerSignificance?: number;
  /** Systematic error of a group velocity, as a fraction of it, added to its standard error. @default 0.02 */
  layerSystematic?: number;
}

/**
 * Site velocity from the usable fits: weighted median (weights 1/sigma^2) with a 1.4826 x weighted-MAD
 * spread. A layered model is chosen when the fits, split by apex time into a shallow and a deep group,
 * differ by more than `layerSignificance` standard errors: the group medians are RMS velocities, at the
 * shallow group's deepest zero-offset time t1 and the deep group's median time t2; the first layer ends
 * at z1 = v1 t1 / 2 and the interval velocity below it follows Dix (1955):
 * v_int^2 = (v2^2 t2 - v1^2 t1) / (t2 - t1).
 */
export function siteVelocityModel(fits: HyperbolaFit[], options: SiteModelOptions = {}): Pick<VelocityReport, 'site' | 'model'> {
  const usable = fits.filter(usableForSite);
  const sortedV = usable.map((f) => f.velocityMPerNs).sort((a, b) => a - b);
  const plainMedian = sortedV.length > 0 ? sortedV[sortedV.length >> 1]! : 0.1;
  const floor = (options.uncertaintyFloor ?? 0.02) * plainMedian;
  const weightOf = (f: HyperbolaFit) => 1 / Math.max(f.uncertaintyMPerNs, floor) ** 2;
  const deepest = usable.reduce((m, f) => Math.max(m, f.depthM), 0);
  const bottom = Math.max(deepest, 1);
  if (usable.length === 0) {
    const v = options.fallbackVelocityMPerNs ?? 0.1;
    return {
      site: { velocityMPerNs: v, permittivity: permittivityFromVelocity(v), spreadMPerNs: 0, fitCount: 0, note: `no usable subsurface hyperbola fit: assumed ${v} m/ns; depths are uncertain` },
      model: { kind: 'constant', layers: [{ topM: 0, bottomM: bottom, velocityMPerNs: v, permittivity: permittivityFromVelocity(v) }] },
    };
  }
  const { centre, spread } = robustCentre(
    usable.map((f) => f.velocityMPerNs),
    usable.map(weightOf),
  );
  const k = permittivityFromVelocity(centre);
  const site: VelocityReport['site'] = { velocityMPerNs: centre, permittivity: k, spreadMPerNs: spread, fitCount: usable.length, ...moisture(k, false) };
  const constant: VelocityModel = { kind: 'constant', layers: [{ topM: 0, bottomM: bottom, velocityMPerNs: centre, permittivity: k }] };
  if (options.layered === false) return { site, model: constant };
  const layered = twoLayer(usable, weightOf, options, bottom);
  return { site, model: layered ?? constant };
}

function moisture(k: number, assumed: boolean): { moisture?: VelocityReport['site']['moisture'] } {
  if (assumed) return {};
  return { moisture: { volumetricWaterContent: toppMoisture(k), method: TOPP_METHOD, caution: TOPP_CAUTION } };
}

function twoLayer(usable: HyperbolaFit[], weightOf: (f: HyperbolaFit) => number, options: SiteModelOptions, bottom: number): VelocityModel | null {
  const minN = options.minFitsPerLayer ?? 4;
  const sig = options.layerSignificance ?? 3;
  const systematic = options.layerSystematic ?? 0.02;
  // Zero-offset two-way time of each fit's apex.
  const sorted = usable.map((f) => ({ f, tzo: (2 * f.depthM) / f.velocityMPerNs, w: weightOf(f) })).sort((a, b) => a.tzo - b.tzo);
  if (sorted.length < 2 * minN) return null;
  let best: { stat: number; k: number } | null = null;
  const group = (g: typeof sorted, deep: boolean) => {
    const { centre, spread } = robustCentre(
      g.map((e) => e.f.velocityMPerNs),
      g.map((e) => e.w),
    );
    const meanSigma = g.reduce((m, e) => m + e.f.uncertaintyMPerNs, 0) / g.length;
    // Standard error of a median, 1.2533 sigma / sqrt(n), plus a systematic part that more fits do not
    // reduce (time-zero error, target radius, oblique crossings): `layerSystematic` of v.
    const se = Math.hypot((1.2533 * Math.max(spread, meanSigma)) / Math.sqrt(g.length), systematic * centre);
    // The shallow velocity holds down to the group's deepest fit; the deep group sits at its median time.
    const t = deep
      ? weightedMedian(
          g.map((e) => e.tzo),
          g.map(() => 1),
        )
      : g[g.length - 1]!.tzo;
    return { v: centre, se, t };
  };
  // The best split by significance among those giving a real Dix interval velocity over a time gap of
  // at least a tenth of the deeper time.
  let chosen: { a: ReturnType<typeof group>; b: ReturnType<typeof group>; vInt: number } | null = null;
  for (let k = minN; k <= sorted.length - minN; k++) {
    if (sorted[k]!.tzo === sorted[k - 1]!.tzo) continue;
    const a = group(sorted.slice(0, k), false);
    const b = group(sorted.slice(k), true);
    const stat = Math.abs(a.v - b.v) / Math.hypot(a.se, b.se);
    if (!(stat > sig) || (best && stat <= best.stat)) continue;
    if (!(b.t - a.t >= 0.1 * b.t)) continue;
    const vInt = dixInterval(a.v, a.t, b.v, b.t);
    if (!Number.isFinite(vInt) || vInt <= 0 || vInt > C_M_PER_NS) continue;
    best = { stat, k };
    chosen = { a, b, vInt };
  }
  if (!chosen) return null;
  const { a, vInt } = chosen;
  const z1 = (a.v * a.t) / 2;
  return {
    kind: 'layered',
    layers: [
      { topM: 0, bottomM: z1, velocityMPerNs: a.v, permittivity: permittivityFromVelocity(a.v) },
      { topM: z1, bottomM: Math.max(bottom, z1), velocityMPerNs: vInt, permittivity: permittivityFromVelocity(vInt) },
    ],
  };
}
