import { z } from 'zod';
import { num } from './common';

/**
 * `subsurface`: a buried reflector; `above-ground`: an air-wave reflection; `implausible`: a fit whose
 * permittivity no soil has (listed, never used). See @lamina/velocity.
 */
export const ORIGINS = ['subsurface', 'above-ground', 'implausible'] as const;
export type Origin = (typeof ORIGINS)[number];

/** A number written by velocity.json's writer, which writes a non-finite value (never expected) as null. */
const maybe = num.nullable();

/** One fitted diffraction hyperbola (velocity.json `hyperbolas[]`). Units: m, ns, m/ns; x, y in the site CRS. */
export const hyperbolaSchema = z.object({
  line: z.string(),
  trace: num,
  x: num,
  y: num,
  t0Ns: num,
  velocityMPerNs: num,
  permittivity: maybe,
  /** Depth of the target's top, m. */
  depthM: maybe,
  /** Fitted radius, m (0: a point, or not resolved). Absent in files written before radii were fitted. */
  radiusM: maybe.optional(),
  radiusUncertaintyM: maybe.optional(),
  radiusResolved: z.boolean().optional(),
  uncertaintyMPerNs: maybe,
  origin: z.enum(ORIGINS),
  picks: z.object({ offsetM: z.array(num), timeNs: z.array(num) }).optional(),
  flags: z.array(z.string()).optional(),
  source: z.enum(['auto', 'manual']).optional(),
  x0M: maybe.optional(),
  t0UncertaintyNs: maybe.optional(),
  rmsNs: maybe.optional(),
  inliers: num.optional(),
  strike: z.string().optional(),
  crossing: z
    .object({ feature: z.string(), angleDeg: num, apparentVelocityMPerNs: num, apparentDepthM: num, apparentRadiusM: num.optional(), lines: num })
    .optional(),
  lineDirection: z.tuple([num, num]).optional(),
  /** Place of the fit in its whole line's list (a tile's run, `lamina process-tile`; the merge restores the order of an untiled run with it). */
  lineOrder: num.optional(),
});
export type VelocityHyperbola = z.infer<typeof hyperbolaSchema>;

/** Interval velocity layer, depth in metres. */
export const velocityLayerSchema = z.object({ topM: num, bottomM: num, velocityMPerNs: num, permittivity: maybe.optional() });
export type VelocityLayerJson = z.infer<typeof velocityLayerSchema>;

export const velocityModelSchema = z.object({
  kind: z.enum(['constant', 'layered']),
  /** Contiguous from 0 m; the last layer extends to any depth below its top. */
  layers: z.array(velocityLayerSchema),
});

/** velocity.json (written by @lamina/velocity). Only `site.velocityMPerNs` is needed by every reader. */
export const velocitySchema = z.object({
  site: z.object({
    velocityMPerNs: num.positive({ error: 'expected a positive velocity in m/ns' }),
    permittivity: maybe.optional(),
    spreadMPerNs: maybe.optional(),
    /** Standard uncertainty of the site velocity itself (additive: older files lack it). */
    uncertaintyMPerNs: maybe.optional(),
    fitCount: num.optional(),
    /** Independent objects among the fits that count. */
    objectCount: num.optional(),
    moisture: z.object({ volumetricWaterContent: maybe, method: z.string(), caution: z.string() }).optional(),
    note: z.string().optional(),
  }, { error: 'expected an object with "site"' }),
  model: velocityModelSchema.optional(),
  hyperbolas: z.array(hyperbolaSchema).optional(),
  /** Antenna separation (m), c (m/ns), the above-ground permittivity limit. */
  method: z.object({ separationM: num, cMPerNs: num, aboveGroundMaxPermittivity: num }).optional(),
});
export type VelocityJson = z.infer<typeof velocitySchema>;
