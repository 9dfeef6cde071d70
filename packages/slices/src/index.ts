export { type SliceGrid, type Slice, type SliceStack, type GriddingInfo, cellCentre, cellCentreX, cellCentreY } from './stack';
export { type SliceWindow, type WindowOptions, type SliceMode, defaultThicknessM, sliceWindows, traceSliceValues } from './windows';
export { type IdwOptions, type SearchFrame, searchFrame, buildIndex, nearestWithin, idwGrid, idwRows, hasNaN } from './idw';
export { levelLines, levelFactors } from './levelling';
export { type SurveyGeometry, type LinePositions, type LineQueries, surveyGeometry, surveyGeometryOf, nearestOtherLine, angleDiff, axialDeg, directionGroups } from './survey';
export { type SliceStats, type SliceRows, sliceStats, sliceStatsOfRows } from './stats';
export {
  type LineInput,
  type SliceBuilderOptions,
  type DefaultWindowOptions,
  SliceBuilder,
  gridPoints,
  gridPointsAsync,
  buildSlices,
  defaultWindows,
} from './builder';
export { type SlicesJson, type WriteSlicesOptions, type SliceDepth, SLICES_TIF, SLICES_JSON, epsgOf, writeSlices, readSlices, readSlicesJson, slicesCogOptions, slicesJsonOf, writeSlicesFiles } from './io';
export { idwGridParallel } from './idw-parallel';
export { type GridOptions, resolveGrid } from './grid-options';
export { PointSpill } from './spill';
export { type SpillGridOptions, SpillGridder, gridSpill, gridSpillSync } from './bands';
export { DiskStack, writeSlicesFromDisk } from './disk-stack';
