import { z } from 'zod';
import { bbox, num } from './common';
import { surveySchema } from './survey';

/** The survey a review belongs to; review.json must carry the same (run.json `identity`). */
export const siteIdentitySchema = z.strictObject({
  name: z.string(),
  crs: z.string(),
  /** WGS84 bounds of the surveyed area: [west, south, east, north]. */
  extent: bbox,
});
export type SiteIdentity = z.infer<typeof siteIdentitySchema>;

export const runCrsSchema = z.object({
  /** What site.json gave: an EPSG code or a proj4 string. */
  input: z.string().optional(),
  code: z.string().optional(),
  /** The proj4 definition the run used (readers prefer it to `input`). */
  proj4: z.string().optional(),
  units: z.string().optional(),
  metresPerUnit: num.positive().optional(),
}).refine((c) => c.proj4 !== undefined || c.input !== undefined, { error: 'expected a proj4 string', path: ['proj4'] });

export const runLineSchema = z.object({
  id: z.string(),
  file: z.string().optional(),
  traces: num.optional(),
  samples: num.optional(),
  dtNs: num.optional(),
  lengthM: num.optional(),
});
export type RunLine = z.infer<typeof runLineSchema>;

/** run.json: what the output folder was made from (written by @lamina/pipeline). */
export const runSchema = z.object({
  tool: z.object({ name: z.string(), version: z.string() }).optional(),
  /** ISO time of the run. */
  createdAt: z.string().optional(),
  site: z.object({
    name: z.string(),
    dir: z.string().optional(),
    crs: runCrsSchema,
    antenna: z.object({ frequencyMHz: num.optional(), separationM: num.optional() }).optional(),
    extentWgs84: bbox.optional(),
    extentSite: bbox.optional(),
    surveyDate: z.string().optional(),
    /** Older name of `surveyDate`. */
    date: z.string().optional(),
    /** site.json's survey block (surveySchema), when it has one. */
    survey: surveySchema.optional(),
  }),
  identity: siteIdentitySchema,
  /** Bottom of the direct- and ground-wave zone, m. */
  nearSurfaceM: num.optional(),
  /** The processing recipe (schema in @lamina/processing). */
  recipe: z.unknown().optional(),
  /** What ran, step by step. */
  log: z.array(z.object({ step: z.string(), params: z.record(z.string(), z.unknown()).optional(), notes: z.array(z.unknown()).optional(), result: z.record(z.string(), z.unknown()).optional() })).optional(),
  threads: num.optional(),
  /** Absent in folders of older versions. */
  lines: z.array(runLineSchema).optional(),
});
export type RunJson = z.infer<typeof runSchema>;
