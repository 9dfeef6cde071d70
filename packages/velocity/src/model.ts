/** Speed of light in vacuum, m/ns. */
export const C_M_PER_NS = 0.2998;

export type Origin = 'subsurface' | 'above-ground';

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
  /** Apex depth, m (for an above-ground fit: the horizontal distance to the reflector, m). */
  depthM: number;
  /** One standard deviation of the velocity, m/ns. */
  uncertaintyMPerNs: number;
  origin: Origin;
  /** Picks used: offsets along the line (m) and two-way times (ns). */
  picks?: { offsetM: number[]; timeNs: number[] };
  /** Why the fit was set aside, e.g. `v > c`. */
  flags?: string[];
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
    fitCount: number;
    moisture?: { volumetricWaterContent: number; method: string; caution: string };
  };
  model: VelocityModel;
  hyperbolas: HyperbolaFit[];
}
