import { z } from 'zod';
import { siteIdentitySchema } from './run';
import { UTILITY_TYPES } from './targets';

/**
 * One review decision. Decisions are matched to anomalies by id first, then by geometry (`anchor`),
 * because a rerun with a changed recipe renumbers anomalies (`matchDecisions` in @lamina/targets).
 */
export const decisionSchema = z
  .object({
    anomalyId: z.string().min(1),
    anchor: z
      .object({
        lon: z.number().min(-180).max(180),
        lat: z.number().min(-90).max(90),
        depthTopM: z.number(),
        depthBottomM: z.number(),
      })
      .strict(),
    decision: z.enum(['accept', 'reject', 'undecided']),
    /** Relabel: the user's origin when it differs from the screening's. */
    origin: z.enum(['subsurface', 'above-ground']).optional(),
    utilityType: z.enum(UTILITY_TYPES).optional(),
    label: z.string().max(200).optional(),
    note: z.string().max(4000).optional(),
    updatedAt: z.string().datetime(),
    by: z.string().max(200).optional(),
  })
  .strict();
export type Decision = z.infer<typeof decisionSchema>;

/** review.json: the user's decisions, kept across reruns of `process` (written by @lamina/targets and the viewer's server). */
export const reviewSchema = z
  .object({
    version: z.literal(1),
    site: siteIdentitySchema,
    decisions: z.array(decisionSchema),
  })
  .strict();
export type Review = z.infer<typeof reviewSchema>;
