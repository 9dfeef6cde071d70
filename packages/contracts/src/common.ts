import { z } from 'zod';

/** A finite number (JSON has no NaN or Infinity). */
export const num = z.number();
/** [west, south, east, north] or [minX, minY, maxX, maxY]. */
export const bbox = z.tuple([num, num, num, num], { error: 'expected [west, south, east, north]' });
export type Box = z.infer<typeof bbox>;

/** A GeoJSON geometry of the types the output folder writes (RFC 7946; coordinates not checked deeply). */
export const geometrySchema = z.object({
  type: z.enum(['Point', 'MultiPoint', 'LineString', 'MultiLineString', 'Polygon', 'MultiPolygon']),
  coordinates: z.array(z.unknown()),
});
export type Geometry = z.infer<typeof geometrySchema>;

/** A FeatureCollection whose features are checked by `feature` (the head's other members are kept). */
export const featureCollectionOf = <F extends z.ZodType>(feature: F) =>
  z.object({ type: z.literal('FeatureCollection', { error: 'expected a GeoJSON FeatureCollection' }), features: z.array(feature) });

/** A Feature with the given properties. */
export const featureOf = <P extends z.ZodType>(properties: P) =>
  z.object({
    type: z.literal('Feature'),
    id: z.union([z.string(), z.number()]).optional(),
    geometry: geometrySchema.nullable(),
    properties,
  });
