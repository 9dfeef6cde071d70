import { z } from 'zod';
import { featureCollectionOf, featureOf, geometrySchema, num } from './common';

/** APWA uniform colour code categories a target may be given in review (@lamina/targets has the colours). */
export const UTILITY_TYPES = [
  'electric',
  'communication',
  'gas',
  'water',
  'reclaimed',
  'sewer',
  'temporary-survey',
  'proposed-excavation',
  'unknown',
] as const;
export type UtilityType = (typeof UTILITY_TYPES)[number];

const text = z.string().nullable();
const metres = num.nullable();

/**
 * The fixed fields of a target, in order: the attribute table of targets.gpkg, the columns of
 * targets.csv and the first properties of a targets.geojson feature (written by @lamina/targets).
 * Depths in metres and feet; null where unknown.
 */
export const targetFieldsSchema = z.object({
  id: z.string(),
  depthTopM: num,
  depthBottomM: num,
  origin: z.enum(['subsurface', 'above-ground']),
  /** The detection's class of the anomaly (utility, structure, or another accepted in review); null without classes. */
  class: text,
  /** The screening's probability, 0..1, that the anomaly is an above-ground (air-wave) reflection. */
  pAboveGround: num.nullable(),
  /** Strength of the anomaly above its slice's noise level, dB. */
  strengthDb: num.nullable(),
  depthTopFt: metres,
  depthBottomFt: metres,
  /** Depth uncertainty of the top: velocity spread, half the slice thickness and a quarter wavelength in quadrature. */
  depthUncertaintyM: metres,
  depthUncertaintyFt: metres,
  depthBottomUncertaintyM: metres,
  depthBottomUncertaintyFt: metres,
  kind: z.enum(['linear', 'compact']),
  utilityType: z.enum(UTILITY_TYPES).nullable(),
  apwaColour: text,
  apwaColourName: text,
  label: text,
  lengthM: metres,
  /** CI/ASCE 38 quality level: "B" only for a target accepted in review. */
  qualityLevel: z.literal('B').nullable(),
  method: z.string(),
  surveyDate: text,
  /** From site.json's survey block. */
  operator: text,
  equipment: text,
  positioning: text,
  positioningAccuracyM: metres,
  exportDate: z.string(),
  decision: z.enum(['accepted', 'candidate']),
  note: text,
  reviewedAt: text,
  screenedOrigin: z.enum(['subsurface', 'above-ground']),
  site: z.string(),
});
export type TargetFields = z.infer<typeof targetFieldsSchema>;

/** Properties of a targets.geojson feature: the fields, then the geometry helpers of the map. */
export const targetPropertiesSchema = targetFieldsSchema.extend({
  centroid: z.tuple([num, num]).optional(),
  /** A linear target's outline (WGS84). */
  outline: geometrySchema.optional(),
  /** Depth of each vertex of a linear target's centreline, m. */
  vertexDepthsM: z.array(num).optional(),
});
export type TargetProperties = z.infer<typeof targetPropertiesSchema>;
export const targetFeatureSchema = featureOf(targetPropertiesSchema);
export const targetsSchema = featureCollectionOf(targetFeatureSchema);
