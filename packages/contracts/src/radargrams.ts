import { z } from 'zod';
import { featureCollectionOf, featureOf, num } from './common';

/**
 * One line of radargrams/index.json; its `.f32` file is little-endian Float32, trace-major, of the
 * processed line (recipe without migration), every `traceStep`-th trace.
 */
export const radargramLineSchema = z.object({
  id: z.string(),
  /** Relative to the output folder. */
  file: z.string(),
  nTraces: num,
  nSamples: num,
  dtNs: num,
  timeZeroNs: num,
  traceStep: num,
  /** Positions of the kept traces: site CRS and WGS84. */
  x: z.array(num),
  y: z.array(num),
  lon: z.array(num),
  lat: z.array(num),
});
export type RadargramLine = z.infer<typeof radargramLineSchema>;

/** radargrams/index.json (written by @lamina/pipeline for the viewer). */
export const radargramIndexSchema = z.object({ lines: z.array(radargramLineSchema) });
export type RadargramIndex = z.infer<typeof radargramIndexSchema>;

/** lines.geojson: the survey lines (WGS84). */
export const linePropertiesSchema = z.object({ id: z.string(), file: z.string(), traces: num, lengthM: num });
export type LineProperties = z.infer<typeof linePropertiesSchema>;
export const linesSchema = featureCollectionOf(featureOf(linePropertiesSchema));

/** plan.geojson: the site plan (WGS84), each feature with `id` and `kind` (schema of the input plan in @lamina/site). */
export const planPropertiesSchema = z.object({ id: z.string(), kind: z.string(), heightM: num.optional(), postSpacingM: num.optional() });
export const planSchema = featureCollectionOf(featureOf(planPropertiesSchema));
