export { PYTHON, runPython } from './python';
export { tempDir } from './temp';
export { GDAL_ENV, gdalGridInvdistnn, readRasterPython, gdalinfoJson, validateCog, type GdalGridArgs } from './gdal';
export { CHROMIUM, CHROMIUM_ARGS, launch, openViewer, type Browser } from './browser';
export { bits } from './bits';
export { kernelsOffAndOn } from './kernels';
