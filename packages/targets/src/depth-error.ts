/**
 * Depth uncertainty of an exported target. Three independent parts, added in quadrature:
 * - the velocity: dz = z dv / v, dv the spread of the fitted velocities (the soil's velocity varies over
 *   the site) and the uncertainty of the site velocity itself (velocity.json `uncertaintyMPerNs`: large
 *   when the site rests on one or two objects or on an assumed velocity) in quadrature
 *   (`velocityErrorMPerNs`);
 * - the slice: an anomaly's depth is known to the slice that holds it, +- half the slice thickness;
 * - the pulse: a reflection's top cannot be placed closer than about a quarter wavelength in the ground,
 *   v / (4 f) at the antenna's centre frequency (the usual vertical-resolution rule: common practice,
 *   no source).
 * The last two are a floor: a target at the surface is not known to "+- 0.00 m".
 */
import type { SlicesInfo, VelocityInfo } from './folder';
export interface DepthErrorModel {
  /** Relative velocity error dv / v (`velocityErrorMPerNs`); undefined when velocity.json gives none. */
  relativeSpread?: number;
  /** Median slice thickness, m; undefined without slices.json. */
  sliceThicknessM?: number;
  /** Quarter wavelength in the ground, v / (4 f), m; undefined without an antenna frequency. */
  quarterWavelengthM?: number;
}

/**
 * The velocity part dv of a depth's error, m/ns: velocity.json's spread and site uncertainty in quadrature;
 * undefined when the file gives neither.
 */
export function velocityErrorMPerNs(velocity: Pick<VelocityInfo, 'spreadMPerNs' | 'uncertaintyMPerNs'>): number | undefined {
  const { spreadMPerNs: s, uncertaintyMPerNs: u } = velocity;
  return s === undefined && u === undefined ? undefined : Math.hypot(s ?? 0, u ?? 0);
}

/** The model of one export from the site velocity (m/ns), its error dv (`velocityErrorMPerNs`), the slices and the antenna. */
export function depthErrorModel(velocityMPerNs: number, velocityErrorMPerNs: number | undefined, sliceThicknessesM: number[], frequencyMHz: number | undefined): DepthErrorModel {
  const sorted = sliceThicknessesM.filter((t) => t > 0 && Number.isFinite(t)).sort((a, b) => a - b);
  return {
    ...(velocityErrorMPerNs !== undefined && velocityMPerNs > 0 ? { relativeSpread: Math.abs(velocityErrorMPerNs) / velocityMPerNs } : {}),
    ...(sorted.length ? { sliceThicknessM: sorted[sorted.length >> 1]! } : {}),
    // v in m/ns, f in MHz: wavelength = v / f = (v 1e9 m/s) / (f 1e6 1/s) = 1000 v / f metres
    ...(frequencyMHz !== undefined && frequencyMHz > 0 && velocityMPerNs > 0 ? { quarterWavelengthM: (1000 * velocityMPerNs) / frequencyMHz / 4 } : {}),
  };
}

/** The uncertainty (m) of a depth z under the model; null when the model knows nothing at all. */
export function depthUncertainty(z: number, m: DepthErrorModel): number | null {
  if (m.relativeSpread === undefined && m.sliceThicknessM === undefined && m.quarterWavelengthM === undefined) return null;
  const v = m.relativeSpread !== undefined ? z * m.relativeSpread : 0;
  const s = m.sliceThicknessM !== undefined ? m.sliceThicknessM / 2 : 0;
  const q = m.quarterWavelengthM ?? 0;
  return Math.round(Math.sqrt(v * v + s * s + q * q) * 1e4) / 1e4;
}

/** The model of an output folder: velocity.json, slices.json and the antenna of run.json. */
export const folderDepthError = (velocity: VelocityInfo, slices: SlicesInfo | undefined, frequencyMHz: number | undefined): DepthErrorModel =>
  depthErrorModel(velocity.velocityMPerNs, velocityErrorMPerNs(velocity), slices?.slices.map((s) => s.bottomM - s.topM) ?? [], frequencyMHz);
