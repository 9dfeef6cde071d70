import { CAUTION } from '@lamina/constants';
import type { ForecastProperties } from '@lamina/contracts';
import { traceOutline } from '@lamina/anomalies';
import type { PlanFeature } from '@lamina/site';
import { cellCentreX, cellCentreY, type SliceGrid } from '@lamina/slices';
import type { VelocityReport } from '@lamina/velocity';
import { C_M_PER_NS } from '@lamina/velocity';
import { lineSpacingM, locusAtHeight, type Line } from './context';
import { outlineToWgs84, type FeatureCollection, type GeoJsonFeature, type ToWgs84 } from './geojson';
import { airRadiusM, airRate } from './physics';
import { distanceField, reflectorsOf } from './reflectors';

export interface ForecastSlice {
  index: number;
  topM: number;
  bottomM: number;
}

export interface ForecastOptions {
  /** Grid to forecast on (the slices' grid); by default one over the lines' extent. */
  grid?: SliceGrid;
  /** Surveyed cells of `grid` (1 = surveyed); by default the cells within `coverM` of a line. */
  surveyed?: Uint8Array;
  /** Slices; by default `depthStepM` steps down to `maxDepthM`. */
  slices?: ForecastSlice[];
  /** @default 0.1 */
  depthStepM?: number;
  /** @default 2 */
  maxDepthM?: number;
  /** Cell size of the default grid, metres. @default 0.2 */
  cellM?: number;
  /** Distance from a line that counts as surveyed, metres. @default half the median line spacing, at least 0.25 */
  coverM?: number;
  antennaFrequencyMHz?: number;
  antennaSeparationM?: number;
  crs?: string;
}

/** A grid over the lines' extent and the cells within `coverM` of a line. */
export function surveyGrid(lines: Line[], metresPerUnit: number, cellM: number, coverM: number, crs = ''): { grid: SliceGrid; surveyed: Uint8Array } {
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (const l of lines) for (let i = 0; i < l.x.length; i++) {
    x0 = Math.min(x0, l.x[i]!); x1 = Math.max(x1, l.x[i]!); y0 = Math.min(y0, l.y[i]!); y1 = Math.max(y1, l.y[i]!);
  }
  const cell = cellM / metresPerUnit;
  const cover = coverM / metresPerUnit;
  const originX = x0 - cover, originY = y1 + cover;
  const width = Math.max(1, Math.ceil((x1 + cover - originX) / cell));
  const height = Math.max(1, Math.ceil((originY - (y0 - cover)) / cell));
  const grid: SliceGrid = { crs, originX, originY, cellSize: cell, width, height, nodata: -9999 };
  const surveyed = new Uint8Array(width * height);
  const reach = Math.ceil(cover / cell);
  for (const l of lines) for (let i = 0; i < l.x.length; i++) {
    const c = Math.floor((l.x[i]! - originX) / cell), r = Math.floor((originY - l.y[i]!) / cell);
    for (let rr = Math.max(0, r - reach); rr <= Math.min(height - 1, r + reach); rr++)
      for (let cc = Math.max(0, c - reach); cc <= Math.min(width - 1, c + reach); cc++) {
        if (surveyed[rr * width + cc]) continue;
        const cx = cellCentreX(grid, cc), cy = cellCentreY(grid, rr);
        if (Math.hypot(cx - l.x[i]!, cy - l.y[i]!) <= cover) surveyed[rr * width + cc] = 1;
      }
  }
  return { grid, surveyed };
}

/**
 * Forecast of air-wave loci: for every slice and every plan feature, the band of points at distance
 * r(z) = c t(z) / 2 from it (see physics.ts), as wide as the slice window and the pulse cover,
 * clipped to the surveyed area. One feature per (slice, reflector) with the band's outline (WGS84).
 */
export function forecastLoci(plan: PlanFeature[], velocity: VelocityReport, lines: Line[], metresPerUnit: number, toWgs84: ToWgs84, options: ForecastOptions = {}): FeatureCollection {
  let grid = options.grid;
  let surveyed = options.surveyed;
  if (!grid) {
    const spacing = lineSpacingM(lines, metresPerUnit);
    const cover = options.coverM ?? Math.max(0.25, Number.isFinite(spacing) ? 0.5 * spacing : 0.25);
    const sg = surveyGrid(lines, metresPerUnit, options.cellM ?? 0.2, cover, options.crs);
    grid = sg.grid;
    surveyed = surveyed ?? sg.surveyed;
  }
  const mask = surveyed ?? new Uint8Array(grid.width * grid.height).fill(1);
  const step = options.depthStepM ?? 0.1;
  const slices =
    options.slices ??
    Array.from({ length: Math.round((options.maxDepthM ?? 2) / step) }, (_, i) => ({ index: i, topM: i * step, bottomM: (i + 1) * step }));
  const refls = reflectorsOf(plan, metresPerUnit);
  const kinds = new Map(plan.map((f) => [f.id, f.kind]));
  const features: GeoJsonFeature[] = [];
  const deepest = Math.max(...slices.map((s) => s.bottomM), 0);
  const rMax = airRadiusM(deepest, velocity.model, options.antennaSeparationM ?? 0) + 1;
  const field = new Float32Array(grid.width * grid.height);
  for (const r of refls) {
    distanceField(r, grid, metresPerUnit, field);
    let near = Infinity;
    for (let i = 0; i < field.length; i++) if (mask[i] && field[i]! < near) near = field[i]!;
    if (near > rMax) continue;
    for (const s of slices) {
      const z = 0.5 * (s.topM + s.bottomM);
      const slant = airRadiusM(z, velocity.model, options.antennaSeparationM ?? 0);
      const rate = airRate(z, velocity.model);
      const thick = s.bottomM - s.topM;
      const pulse = options.antennaFrequencyMHz ? (C_M_PER_NS * (1000 / options.antennaFrequencyMHz)) / 2 : rate * thick;
      const slantHalf = 0.5 * (rate * thick + pulse);
      // an overhead object's air wave travels the slant distance (locusAtHeight)
      const l = locusAtHeight({ index: s.index, depthM: z, topM: s.topM, bottomM: s.bottomM, radiusM: slant, rate, bandHalfM: slantHalf, toleranceM: slantHalf }, r.heightM);
      if (!Number.isFinite(l.radiusM)) continue;
      const radius = l.radiusM;
      const half = Math.max(l.bandHalfM, 0.5 * grid.cellSize * metresPerUnit);
      const cells: number[] = [];
      for (let i = 0; i < field.length; i++) if (mask[i] && Math.abs(field[i]! - radius) <= half) cells.push(i);
      if (cells.length === 0) continue;
      features.push({
        type: 'Feature',
        geometry: outlineToWgs84(traceOutline(cells, grid), toWgs84),
        properties: {
          slice: s.index,
          topM: s.topM,
          bottomM: s.bottomM,
          depthM: z,
          featureId: r.featureId,
          featureKind: kinds.get(r.featureId) ?? 'other',
          reflector: r.kind,
          source: r.source,
          radiusM: radius,
          bandHalfWidthM: half,
          ...(r.heightM !== undefined ? { heightM: r.heightM } : {}),
        } satisfies ForecastProperties,
      });
    }
  }
  return {
    type: 'FeatureCollection',
    features,
    caution: CAUTION,
  };
}
