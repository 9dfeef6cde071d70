import type { SliceStats } from './stats';

/**
 * A stack of depth slices on one regular grid in the site CRS.
 * Rows run north to south (row 0 is the northern edge), columns west to east, as in a GeoTIFF.
 */
export interface SliceGrid {
  /** Site CRS as given (EPSG code or proj4). */
  crs: string;
  /** Top-left corner of the top-left cell, site CRS units. */
  originX: number;
  originY: number;
  /** Cell size in site CRS units (square cells). */
  cellSize: number;
  width: number;
  height: number;
  /** Value of cells outside every search radius. */
  nodata: number;
  /** Metres per CRS unit (1, or 1200/3937 for US survey feet). @default 1 */
  metresPerUnit?: number;
  /** True when the CRS is geographic (degrees). @default false */
  isGeographic?: boolean;
}

export interface Slice {
  index: number;
  /** Depth window in metres below the ground surface. */
  topM: number;
  bottomM: number;
  /** Row-major `height * width`, nodata where no trace is near. */
  values: Float32Array;
  /** Statistics of the valid cells (filled by `writeSlices` / `readSlices`). */
  stats?: SliceStats;
}

/** How the stack was made (recorded in slices.json). Radii and spacings in site CRS units. */
export interface GriddingInfo {
  method: 'idw';
  power: number;
  maxPoints: number;
  minPoints: number;
  /** Search radius along the survey direction and across it. */
  radius: number;
  radiusAcross: number;
  /** Survey direction, degrees counter-clockwise from east. */
  directionDeg: number;
  /** Slice value of a trace: mean of envelope^2 (`mean-square`) or mean |amplitude| (`mean-abs`). */
  mode: 'mean-square' | 'mean-abs';
  levelled: boolean;
  lineCount: number;
  traceCount: number;
  lineSpacing: number;
  traceSpacing: number;
  /** Row bands the grid was filled in (points read back from disk one band at a time). @default 1 */
  rowBands?: number;
}

export interface SliceStack {
  grid: SliceGrid;
  slices: Slice[];
  gridding?: GriddingInfo;
}

/** Centre of cell (col, row) in site CRS units. */
export function cellCentre(grid: SliceGrid, col: number, row: number): [number, number] {
  return [cellCentreX(grid, col), cellCentreY(grid, row)];
}

/** x of the centre of column `col`: the origin is the grid's top-left corner, not a cell centre. */
export function cellCentreX(grid: Pick<SliceGrid, 'originX' | 'cellSize'>, col: number): number {
  return grid.originX + (col + 0.5) * grid.cellSize;
}

/** y of the centre of row `row` (rows run south from the top-left corner). */
export function cellCentreY(grid: Pick<SliceGrid, 'originY' | 'cellSize'>, row: number): number {
  return grid.originY - (row + 0.5) * grid.cellSize;
}
