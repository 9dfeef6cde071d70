import { z } from 'zod';
import { num } from './common';

/** The screening's checks, in the order of the evidence table. See @lamina/screening. */
export const TEST_NAMES = [
  'move-out',
  'move-out-slope',
  'edge-alignment',
  'post-spacing',
  'air-hyperbola',
  'soil-hyperbola',
  'unsurveyed-obstruction',
  'before-background',
  'continuity',
] as const;
export type TestName = (typeof TEST_NAMES)[number];

const point = z.object({ type: z.literal('Point'), coordinates: z.tuple([num, num]) });
const line = z.object({ type: z.literal('LineString'), coordinates: z.array(z.tuple([num, num])) });

/** One piece of screening evidence, as the screening writes it (a row of the viewer's evidence table). */
export const evidenceSchema = z.object({
  test: z.enum(TEST_NAMES),
  /** Plan feature the test was run against; null for a test against no feature (unsurveyed obstruction). */
  featureId: z.string().nullable(),
  measured: num,
  expected: num,
  tolerance: num,
  units: z.string(),
  passed: z.boolean(),
  detail: z.string(),
  /** Log-odds this item adds for "above-ground"; 0 when inconclusive. */
  weight: num,
  /** Slice index the item refers to, when it refers to one. */
  slice: num.optional(),
  /** Where an unsurveyed object must stand (WGS84 in anomalies.geojson, site CRS inside the screening). */
  geometry: z.union([point, line]).optional(),
});
export type Evidence = z.infer<typeof evidenceSchema>;

/**
 * An evidence row as readers may rely on it: any object, its fields shown when present (rows of other
 * versions and of hand-made folders are displayed, never computed with).
 */
export const evidenceRowSchema = z.object({
  test: z.string().optional(),
  featureId: z.string().nullable().optional(),
  measured: z.unknown().optional(),
  expected: z.unknown().optional(),
  tolerance: z.unknown().optional(),
  units: z.string().optional(),
  passed: z.boolean().optional(),
  detail: z.string().optional(),
  weight: num.optional(),
  slice: num.optional(),
});
export type EvidenceRow = z.infer<typeof evidenceRowSchema>;
