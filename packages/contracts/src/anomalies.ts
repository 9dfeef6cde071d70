import { z } from 'zod';
import { featureCollectionOf, featureOf, geometrySchema, num } from './common';
import { evidenceRowSchema } from './evidence';

/** What an anomaly is taken to be (`class`): utility, structure, layer, clutter or above-ground (@lamina/anomalies). */
export const ANOMALY_CLASSES = ['utility', 'structure', 'layer', 'clutter', 'above-ground'] as const;
export type AnomalyClassName = (typeof ANOMALY_CLASSES)[number];

const lonLat = z.tuple([num, num]);

/** One slice's piece of an anomaly (the screening writes every field; hand-made folders may give fewer). */
export const memberSchema = z.object({
  slice: num,
  topM: num,
  bottomM: num,
  centroid: lonLat.optional(),
  outline: geometrySchema.optional(),
  areaM2: num.optional(),
  kind: z.string().optional(),
  directionDeg: num.optional(),
  peakScore: num.optional(),
  strengthDb: num.nullable().optional(),
});

/**
 * Properties of an anomalies.geojson feature (written by @lamina/screening through the pipeline).
 * Required: what every reader needs; the rest is what the current screening writes (absent in older
 * folders). Depths in metres, positions WGS84.
 */
export const anomalyPropertiesSchema = z.object({
  id: z.string().min(1, { error: 'expected a non-empty string' }),
  depthTopM: z.number({ error: 'expected a depth in metres' }),
  depthBottomM: z.number({ error: 'expected a depth in metres' }),
  origin: z.enum(['subsurface', 'above-ground'], { error: 'expected "subsurface" or "above-ground"' }),
  confidence: z.number({ error: 'expected a number in 0..1' }),
  evidence: z.array(evidenceRowSchema).optional(),
  pAboveGround: num.optional(),
  /** Plan shape: `linear` or `compact`. */
  kind: z.string().optional(),
  areaM2: num.optional(),
  directionDeg: num.optional(),
  elongation: num.optional(),
  lengthM: num.optional(),
  widthM: num.optional(),
  slices: z.array(num).optional(),
  peakValue: num.optional(),
  peakScore: num.optional(),
  /** 10 log10(peak / mean noise energy) of the slice; null when not finite. */
  strengthDb: num.nullable().optional(),
  /** One of ANOMALY_CLASSES (a string here so that a reader of an older or newer folder still opens it). */
  class: z.string().optional(),
  classReason: z.string().optional(),
  /** Id of the stronger object this anomaly is an echo of. */
  echoOf: z.string().optional(),
  centroid: lonLat.optional(),
  /** A linear anomaly's centreline (WGS84 LineString). */
  centreline: geometrySchema.optional(),
  members: z.array(memberSchema).optional(),
  metresPerUnit: num.optional(),
});
export type AnomalyProperties = z.infer<typeof anomalyPropertiesSchema>;

export const anomalyFeatureSchema = featureOf(anomalyPropertiesSchema);
export type AnomalyFeature = z.infer<typeof anomalyFeatureSchema>;
export const anomaliesSchema = featureCollectionOf(anomalyFeatureSchema);

/** interfaces.geojson: each `layer` anomaly as a depth map, one polygon per slice. */
export const interfacePropertiesSchema = z.object({
  anomalyId: z.string(),
  slice: num,
  depthTopM: num,
  depthBottomM: num,
  /** Mid depth of the slice, m. */
  depthM: num,
  areaM2: num,
  strengthDb: num.nullable(),
});
export type InterfaceProperties = z.infer<typeof interfacePropertiesSchema>;
export const interfacesSchema = featureCollectionOf(featureOf(interfacePropertiesSchema));

/**
 * forecast.geojson: predicted air-wave loci per slice (@lamina/screening writes every field; the viewer
 * needs the slice and its depth range).
 */
export const forecastPropertiesSchema = z.object({
  slice: num,
  topM: num,
  bottomM: num,
  featureId: z.string(),
  depthM: num.optional(),
  featureKind: z.string().optional(),
  reflector: z.string().optional(),
  source: z.string().optional(),
  radiusM: num.optional(),
  bandHalfWidthM: num.optional(),
  /** Height of an overhead reflector above the ground, m. */
  heightM: num.optional(),
});
export type ForecastProperties = z.infer<typeof forecastPropertiesSchema>;
export const forecastSchema = featureCollectionOf(featureOf(forecastPropertiesSchema));
