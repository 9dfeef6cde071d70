import { z } from 'zod';
import { num } from './common';

/** How the stack was gridded (slices.json `gridding`). Radii and spacings in site CRS units. */
export const griddingSchema = z.object({
  method: z.literal('idw'),
  power: num,
  maxPoints: num,
  minPoints: num,
  /** Search radius along the survey direction and across it. */
  radius: num,
  radiusAcross: num,
  /** Survey direction, degrees counter-clockwise from east. */
  directionDeg: num,
  /** Slice value of a trace: mean of envelope^2 or mean |amplitude|. */
  mode: z.enum(['mean-square', 'mean-abs']),
  levelled: z.boolean(),
  lineCount: num,
  traceCount: num,
  lineSpacing: num,
  traceSpacing: num,
  /** Row bands the grid was filled in. @default 1 */
  rowBands: num.optional(),
});
export type GriddingJson = z.infer<typeof griddingSchema>;

/** Statistics of a slice's valid cells; null where there is none (an empty slice). */
export const sliceStatsSchema = z.object({
  min: num.nullable(),
  max: num.nullable(),
  mean: num.nullable(),
  /** Population standard deviation, as GDAL reports it. */
  std: num.nullable(),
  p2: num.nullable(),
  p98: num.nullable(),
  validCount: num.nullable(),
});
export type SliceStatsJson = z.infer<typeof sliceStatsSchema>;

export const sliceEntrySchema = z.object({
  index: num,
  /** 1-based band of slices.tif. */
  band: num,
  topM: num,
  bottomM: num,
  stats: sliceStatsSchema,
});
export type SliceEntry = z.infer<typeof sliceEntrySchema>;

/** slices.json (written by @lamina/slices beside slices.tif). */
export const slicesSchema = z.object({
  version: z.literal(1),
  /** The GeoTIFF beside this file; band `slices[k].band` is slice k. */
  file: z.string(),
  crs: z.string(),
  /** EPSG code of the CRS when it has one, else null. */
  epsg: num.nullable(),
  metresPerUnit: num.positive(),
  isGeographic: z.boolean(),
  /** Top-left corner of the top-left cell, CRS units; rows run north to south. */
  originX: num,
  originY: num,
  /** CRS units, square cells. */
  cellSize: num.positive(),
  width: num.int().nonnegative(),
  height: num.int().nonnegative(),
  nodata: num,
  /** Absent in folders of older versions. */
  gridding: griddingSchema.nullable().optional(),
  slices: z.array(sliceEntrySchema),
});
export type SlicesJson = z.infer<typeof slicesSchema>;
