export { C_M_PER_NS } from '@lamina/constants';

/**
 * `subsurface`: a buried reflector; `above-ground`: an air-wave reflection (K below 2, common practice);
 * `implausible`: a fit whose permittivity no soil has (K above `MAX_SOIL_PERMITTIVITY`): a misfit, not a
 * measurement (crossing events, ringing, a flank picked on another event); listed, never used.
 */
export type Origin = 'subsurface' | 'above-ground' | 'implausible';

/** One fitted diffraction hyperbola (an entry of velocity.json `hyperbolas[]`). */
export interface HyperbolaFit {
  line: string;
  /** Trace index of the apex (nearest trace). */
  trace: number;
  /** Apex position in the site CRS. */
  x: number;
  y: number;
  /** Apex two-way time after time-zero, ns. */
  t0Ns: number;
  velocityMPerNs: number;
  permittivity: number;
  /** Depth of the target's top, m (for an above-ground fit: the horizontal distance to the reflector, m). */
  depthM: number;
  /**
   * Fitted radius of the target, m: 0 for a point, or when the picks do not resolve it
   * (`radiusResolved` false; the fit is then the point fit). Absent in files written before radii were fitted.
   */
  radiusM?: number;
  /** One standard deviation of the radius from the four-parameter fit, m (also when not resolved). */
  radiusUncertaintyM?: number;
  /** True when the fit resolved a radius > 0 (R above twice its standard deviation and a significant misfit reduction). */
  radiusResolved?: boolean;
  /** One standard deviation of the velocity, m/ns. */
  uncertaintyMPerNs: number;
  /**
   * With the radius unresolved: the velocity of the fit with the radius free (R >= 0), whose
   * uncertainty is `uncertaintyMPerNs`. The point fit's `velocityMPerNs` is the fast end of the v-R
   * trade-off. Absent for resolved fits and in older files.
   */
  radiusFreeVelocityMPerNs?: number;
  origin: Origin;
  /** Picks used: offsets along the line (m) and two-way times (ns). */
  picks?: { offsetM: number[]; timeNs: number[] };
  /** Why the fit was set aside, e.g. `v > c`. */
  flags?: string[];
  /** `auto`: found by the detector; `manual`: fitted to picks from a picks file. */
  source?: 'auto' | 'manual';
  /** Apex offset along the line from its first trace, m. */
  x0M?: number;
  /** One standard deviation of t0, ns. */
  t0UncertaintyNs?: number;
  /** Weighted RMS residual of the retained picks, ns. */
  rmsNs?: number;
  /** Picks retained by the robust fit (weight > 0) of all picks. */
  inliers?: number;
  /**
   * The straight strike of a linear reflector (`correctObliqueCrossings`) this fit lies on, corrected
   * for the crossing angle or not (near 90 degrees): the site model counts a strike's fits as one object.
   */
  strike?: string;
  /**
   * Set when the fit belongs to a linear reflector crossing several lines obliquely (see
   * `correctObliqueCrossings`): velocity and depth above are corrected by sin(angle); the apparent
   * values of the hyperbola are kept here.
   */
  crossing?: { feature: string; angleDeg: number; apparentVelocityMPerNs: number; apparentDepthM: number; apparentRadiusM?: number; lines: number };
  /** Unit direction of the fit's line (first to last trace) in the site CRS; lets the report find oblique crossings. */
  lineDirection?: [number, number];
}

/** Interval velocity layer (Dix), depth in metres. */
export interface VelocityLayer {
  topM: number;
  bottomM: number;
  velocityMPerNs: number;
  permittivity: number;
}

export interface VelocityModel {
  kind: 'constant' | 'layered';
  /** Contiguous from 0 m; the last layer extends to any depth below its top. */
  layers: VelocityLayer[];
}

/** The content of velocity.json. */
export interface VelocityReport {
  site: {
    velocityMPerNs: number;
    permittivity: number;
    spreadMPerNs: number;
    /**
     * Standard uncertainty of `velocityMPerNs` as the soil's velocity (`siteVelocityUncertainty`): small
     * with many objects, about a fifth of v with one, 0.29 v when assumed. Absent in files written
     * before 2026-12-05 (session 28).
     */
    uncertaintyMPerNs?: number;
    fitCount: number;
    /**
     * Independent objects among the fits that count: fits of one object on neighbouring lines (apexes
     * within 1.5 m, t0 and v within 10 %) are one sample of the soil, weighted as one.
     */
    objectCount?: number;
    moisture?: { volumetricWaterContent: number; method: string; caution: string };
    /** Why the site velocity is what it is when it does not come from fits (e.g. no usable fit). */
    note?: string;
  };
  model: VelocityModel;
  hyperbolas: HyperbolaFit[];
  /** How the report was made: antenna separation (m), c (m/ns), the above-ground permittivity limit. */
  method?: { separationM: number; cMPerNs: number; aboveGroundMaxPermittivity: number };
}
