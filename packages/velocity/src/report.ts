import type { VelocityJson } from '@lamina/contracts';
import { writeFileAtomic } from '@lamina/atomic';
import type { RadarLine } from '@lamina/radar-data';
import { detectHyperbolas, type DetectOptions, type DetectedHyperbola } from './detect';
import type { PointFit } from './fit';
import { C_M_PER_NS, type HyperbolaFit, type VelocityReport } from './model';
import { correctObliqueCrossings, lineDirection, type ObliqueOptions } from './oblique';
import { permittivityFromVelocity } from './physics';
import { ABOVE_GROUND_MAX_PERMITTIVITY, classifyVelocity, siteVelocityModel, type SiteModelOptions } from './site-model';

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

/** Detect and fit the hyperbolas of one processed line, classified. */
export function lineHyperbolas(line: RadarLine, options: DetectOptions & { aboveGroundMaxPermittivity?: number } = {}): HyperbolaFit[] {
  const dir = lineDirection(line);
  return detectHyperbolas(line, options).map((d: DetectedHyperbola) => ({ ...toHyperbolaFit(line.id, d, 'auto', options), lineDirection: dir }));
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
}

/** The velocity.json content from all fits of a site, oblique crossings corrected (see `correctObliqueCrossings`). */
export function buildVelocityReport(fits: HyperbolaFit[], options: ReportOptions = {}): VelocityReport {
  const dirs: Record<string, [number, number]> = { ...options.lineDirections };
  for (const f of fits) if (f.lineDirection && !dirs[f.line]) dirs[f.line] = f.lineDirection;
  const all = options.noObliqueCorrection ? fits : correctObliqueCrossings(fits, dirs, options);
  const { site, model } = siteVelocityModel(all, options);
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
