import type { IdwOptions } from './idw';
import type { SliceGrid } from './stack';
import type { SurveyGeometry } from './survey';

export interface GridOptions {
  /** Site CRS as given (`EPSG:nnnn` or proj4). */
  crs: string;
  /** @default 1 */
  metresPerUnit?: number;
  /** @default false */
  isGeographic?: boolean;
  /** Cell size, m. @default a quarter of the line spacing, at least the trace spacing */
  cellSizeM?: number;
  /** Search radius along the survey direction, m. @default half the line spacing (parallel lines), else the line spacing */
  radiusM?: number;
  /** Search radius across the survey direction, m. @default the line spacing (parallel lines), else `radiusM` */
  radiusAcrossM?: number;
  /** Survey direction, degrees counter-clockwise from east. @default estimated from the lines */
  directionDeg?: number;
  /** @default 2 */
  power?: number;
  /** @default 12 */
  maxPoints?: number;
  /** @default 1 */
  minPoints?: number;
  /** Line-level levelling (see `levelLines`). @default false */
  level?: boolean;
  /** @default -9999 */
  nodata?: number;
  /** Grid extent [minX, minY, maxX, maxY] in CRS units. @default the traces' bounding box */
  bounds?: [number, number, number, number];
  /** Worker threads for `gridAsync` / `buildSlices`. @default os.availableParallelism() */
  threads?: number;
}

/** Lines whose axial directions agree this well (mean resultant length) count as a parallel survey. Common practice, no source. */
const PARALLEL = 0.9;

/** Resolved gridding parameters in CRS units, from options and the survey geometry. */
export function resolveGrid(geometry: SurveyGeometry, options: GridOptions): { grid: SliceGrid; idw: Required<IdwOptions> } {
  const mpu = options.metresPerUnit ?? 1;
  const { traceSpacing } = geometry;
  // One line: no line spacing to go by, so take 20 trace spacings. Common practice, no source.
  const lineSpacing = Number.isFinite(geometry.lineSpacing) && geometry.lineSpacing > 0 ? geometry.lineSpacing : 20 * (traceSpacing || 1 / mpu);
  const parallel = geometry.parallelism >= PARALLEL;
  // Cell a quarter of the line spacing, not finer than the traces. Common practice, no source.
  const cellSize = options.cellSizeM !== undefined ? options.cellSizeM / mpu : Math.max(lineSpacing / 4, traceSpacing || 0);
  const radius = options.radiusM !== undefined ? options.radiusM / mpu : parallel ? lineSpacing / 2 : lineSpacing;
  const radiusAcross = options.radiusAcrossM !== undefined ? options.radiusAcrossM / mpu : parallel ? lineSpacing : radius;
  if (!(cellSize > 0)) throw new Error(`cell size must be positive, found ${cellSize}`);
  const [minX, minY, maxX, maxY] = options.bounds ?? geometry.bounds;
  const originX = Math.floor(minX / cellSize) * cellSize;
  const originY = Math.ceil(maxY / cellSize) * cellSize;
  const width = Math.max(1, Math.ceil((maxX - originX) / cellSize + 1e-9));
  const height = Math.max(1, Math.ceil((originY - minY) / cellSize + 1e-9));
  if (width * height > 4e8) {
    throw new Error(`grid of ${width} x ${height} cells is too large: choose a larger cell size (now ${cellSize * mpu} m)`);
  }
  const grid: SliceGrid = {
    crs: options.crs,
    originX,
    originY,
    cellSize,
    width,
    height,
    nodata: options.nodata ?? -9999,
    metresPerUnit: mpu,
    isGeographic: options.isGeographic ?? false,
  };
  const idw: Required<IdwOptions> = {
    radius,
    radiusAcross,
    directionDeg: options.directionDeg ?? geometry.directionDeg,
    power: options.power ?? 2,
    maxPoints: options.maxPoints ?? 12,
    minPoints: options.minPoints ?? 1,
  };
  return { grid, idw };
}

