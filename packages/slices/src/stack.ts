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
}

export interface Slice {
  index: number;
  /** Depth window in metres below the ground surface. */
  topM: number;
  bottomM: number;
  /** Row-major `height * width`, nodata where no trace is near. */
  values: Float32Array;
}

export interface SliceStack {
  grid: SliceGrid;
  slices: Slice[];
}

/** Centre of cell (col, row) in site CRS units. */
export function cellCentre(grid: SliceGrid, col: number, row: number): [number, number] {
  return [grid.originX + (col + 0.5) * grid.cellSize, grid.originY - (row + 0.5) * grid.cellSize];
}
