import { describe, expect, it } from 'vitest';
import { cellCentre, cellCentreX, cellCentreY, type SliceGrid } from '../src';

// GeoTIFF / GDAL convention: the geotransform origin is the top-left corner of the top-left pixel
// (PixelIsArea), so pixel (col, row) is centred at origin + (col + 0.5, -(row + 0.5)) * cell.
describe('cell centres', () => {
  const grid: SliceGrid = { crs: 'EPSG:32617', originX: 500123.5, originY: 4100456.25, cellSize: 0.125, width: 40, height: 30, nodata: -9999, metresPerUnit: 1 };
  it('sit half a cell in from the top-left corner, rows running south', () => {
    expect(cellCentreX(grid, 0)).toBe(500123.5625);
    expect(cellCentreY(grid, 0)).toBe(4100456.1875);
    expect(cellCentreX(grid, grid.width - 1) + grid.cellSize / 2).toBeCloseTo(grid.originX + grid.width * grid.cellSize, 9);
    expect(cellCentreY(grid, grid.height - 1) - grid.cellSize / 2).toBeCloseTo(grid.originY - grid.height * grid.cellSize, 9);
  });
  it('cellCentre is the pair of them', () => {
    for (const [c, r] of [[0, 0], [7, 3], [39, 29]] as const) expect(cellCentre(grid, c, r)).toEqual([cellCentreX(grid, c), cellCentreY(grid, r)]);
  });
});
