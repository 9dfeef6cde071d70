import type { VelocityJson } from '@lamina/contracts';
import { writeFileAtomic } from '@lamina/atomic';
import type { RadarLine } from '@lamina/radar-data';
import { detectHyperbolas, type DetectOptions, type DetectedHyperbola } from './detect';
import type { PointFit } from './fit';
import { C_M_PER_NS, type HyperbolaFit, type VelocityReport } from './model';
import { correctObliqueCrossings, lineDirection, type ObliqueOptions } from './oblique';
import { permittivityFromVelocity } from './physics';
import { ABOVE_GROUND_MAX_PERMITTIVITY, classifyVelocity, EARLY_APEX_FLAG, siteVelocityModel, usableForSite, type SiteModelOptions } from './site-model';

/** One entry of `hyperbolas[]` from a fit on a line. */
export function toHyperbolaFit(
  lineId: string,
  fit: PointFit & { trace: number; x: number; y: number; offsetM: ArrayLike<number>; timeNs: ArrayLike<number> },
  source: 'auto' | 'manual',
  options: { aboveGroundMaxPermittivity?: number } = {},
): HyperbolaFit {
  const { origin, flags } = classifyVelocity(fit.velocityMPerNs, options);
  const out: HyperbolaFit = {
    line: lineId,
    trace: fit.trace,
    x: fit.x,
    y: fit.y,
    t0Ns: fit.t0Ns,
    velocityMPerNs: fit.velocityMPerNs,
    permittivity: permittivityFromVelocity(fit.velocityMPerNs),
    depthM: fit.zM,
    radiusM: fit.radiusM,
    radiusUncertaintyM: fit.sigmaRadiusM,
    radiusResolved: fit.radiusResolved,
    // With the radius unresolved the velocity is uncertain by the whole R-v trade-off.
    uncertaintyMPerNs: fit.sigmaVelocityRadiusFree ?? fit.sigmaVelocity,
    ...(fit.radiusResolved ? {} : { radiusFreeVelocityMPerNs: fit.velocityRadiusFree }),
    origin,
    source,
    x0M: fit.x0M,
    t0UncertaintyNs: fit.sigmaT0Ns,
    rmsNs: fit.rmsNs,
    inliers: fit.inliers,
    picks: { offsetM: Array.from(fit.offsetM), timeNs: Array.from(fit.timeNs) },
  };
  if (flags.length > 0) out.flags = flags;
  return out;
}

/**
 * Detect and fit the hyperbolas of one processed line, classified. On a line whose later fits give the
 * site model nothing (`usableForSite`), apexes from one period after time-zero (one pulse: the
 * direct-wave zone) are examined too, after all later ones, and their fits carry `EARLY_APEX_FLAG`
 * (`buildVelocityReport` takes them only for a site that no later fit serves; a site with later fits
 * drops them, so examining them only on such lines changes no result).
 */
export function lineHyperbolas(line: RadarLine, options: DetectOptions & { aboveGroundMaxPermittivity?: number } = {}): HyperbolaFit[] {
  const dir = lineDirection(line);
  const nothingLater = (late: DetectedHyperbola[]) => !late.some((d) => usableForSite(toHyperbolaFit(line.id, d, 'auto', options)));
  return detectHyperbolas(line, { earlyApexPeriods: 1, earlyApexIf: nothingLater, ...options }).map((d: DetectedHyperbola) => {
    const f: HyperbolaFit = { ...toHyperbolaFit(line.id, d, 'auto', options), lineDirection: dir };
    if (d.early) f.flags = [...(f.flags ?? []), EARLY_APEX_FLAG];
    return f;
  });
}

export interface ReportOptions extends SiteModelOptions, ObliqueOptions {
  /** Antenna separation, m (recorded in `method`). @default 0 */
  separationM?: number;
  /** @default 2 (common practice, no source) */
  aboveGroundMaxPermittivity?: number;
  /**
   * Unit direction of each line (`lineDirection`), by line id, for the oblique-crossing correction.
   * @default the `lineDirection` the fits carry (set by `lineHyperbolas`)
   */
  lineDirections?: Record<string, [number, number]>;
  /** Skip the oblique-crossing correction. @default false */
  noObliqueCorrection?: boolean;
  /**
   * Independent objects (`objectGroups`) whose fits in the direct-wave zone a site without later fits
   * needs to take them: one object's fits share its own error (a pipe crossed obliquely, a tank, direct-wave
   * residue along a line), and three is the fewest whose median outvotes one of them. @default 3
   */
  minEarlyObjects?: number;
}

/**
 * The site model of a site's fits (`siteVelocityModel`) with the rule for fits in the direct-wave zone
 * (`EARLY_APEX_FLAG`): they serve only a site that no later fit serves, when they come from
 * `minEarlyObjects` objects, and then only the subsurface ones (an air-velocity fit there is no evidence
 * of an above-ground object of its own). `prepare` makes each list of fits the model reads from the fits
 * as given (`buildVelocityReport`: the oblique correction, which is not to be applied twice). Returns the
 * fits the chosen model read, with it.
 */
export function siteModelOfFits(
  fits: HyperbolaFit[],
  options: SiteModelOptions & { minEarlyObjects?: number } = {},
  prepare: (fits: HyperbolaFit[]) => HyperbolaFit[] = (f) => f,
): Pick<VelocityReport, 'site' | 'model'> & { all: HyperbolaFit[] } {
  const isEarly = (f: HyperbolaFit) => f.flags?.includes(EARLY_APEX_FLAG) === true;
  const later = fits.filter((f) => !isEarly(f));
  const all = prepare(later);
  const chosen = { all, ...siteVelocityModel(all, options) };
  const early = fits.filter((f) => isEarly(f) && f.origin === 'subsurface');
  if (chosen.site.fitCount === 0 && early.length > 0) {
    const withEarly = prepare([...later, ...early]);
    const m = siteVelocityModel(withEarly, { ...options, earlyApexes: true });
    if ((m.site.objectCount ?? 0) >= (options.minEarlyObjects ?? 3)) return { all: withEarly, ...m };
  }
  return chosen;
}

/** The velocity.json content from all fits of a site, oblique crossings corrected (see `correctObliqueCrossings`). */
export function buildVelocityReport(fits: HyperbolaFit[], options: ReportOptions = {}): VelocityReport {
  const dirs: Record<string, [number, number]> = { ...options.lineDirections };
  for (const f of fits) if (f.lineDirection && !dirs[f.line]) dirs[f.line] = f.lineDirection;
  const corrected = (f: HyperbolaFit[]) => (options.noObliqueCorrection ? f : correctObliqueCrossings(f, dirs, options));
  const { all, site, model } = siteModelOfFits(fits, options, corrected);
  return {
    site,
    model,
    hyperbolas: all,
    method: {
      separationM: options.separationM ?? 0,
      cMPerNs: C_M_PER_NS,
      aboveGroundMaxPermittivity: options.aboveGroundMaxPermittivity ?? ABOVE_GROUND_MAX_PERMITTIVITY,
    },
  };
}

const finite = (_k: string, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? null : v);

/** JSON text of a report; non-finite numbers (never expected) become null rather than invalid JSON. */
export function velocityJson(report: VelocityReport): string {
  const json: VelocityJson = report;
  return JSON.stringify(json, finite, 2) + '\n';
}

/**
 * `velocityJson` in pieces, a hyperbola at a time (the same text when joined), so a report with many
 * fits and their picks is written without building one string of all of it.
 */
export function* velocityJsonChunks(report: VelocityReport): Generator<string> {
  const json: VelocityJson = report;
  const indent = (text: string, by: string) => text.replace(/\n/g, `\n${by}`);
  const entries = Object.entries(json).filter(([, v]) => v !== undefined && typeof v !== 'function');
  yield '{';
  for (const [i, [k, v]] of entries.entries()) {
    yield `${i > 0 ? ',' : ''}\n  ${JSON.stringify(k)}: `;
    if (k === 'hyperbolas' && Array.isArray(v) && v.length > 0) {
      yield '[';
      for (const [j, h] of (v as unknown[]).entries()) yield `${j > 0 ? ',' : ''}\n    ${indent(JSON.stringify(h, finite, 2) ?? 'null', '    ')}`;
      yield '\n  ]';
    } else yield indent(JSON.stringify(v, finite, 2), '  ');
  }
  yield entries.length > 0 ? '\n}\n' : '}\n';
}

/** Write velocity.json atomically. */
export async function writeVelocityJson(path: string, report: VelocityReport): Promise<void> {
  await writeFileAtomic(path, velocityJson(report));
}
