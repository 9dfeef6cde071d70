export { velocityAt, twoWayTimeNs, depthAtTimeNs, airRadiusM, airRate } from './physics';
export { reflectorsOf, distanceTo, distanceField, nearestSegmentAzimuth, alongDistance, type Reflector, type ReflectorKind } from './reflectors';
export { lineSpacingM, sliceLoci, surveyedMask, type Line, type SliceLocus, type ToleranceOptions } from './context';
export { combine, WEIGHTS, type Evidence, type TestName, type Verdict } from './evidence';
export { forecastLoci, surveyGrid, CAUTION, type ForecastOptions, type ForecastSlice } from './forecast';
export { outlineToWgs84, type FeatureCollection, type GeoJsonFeature, type GeoJsonGeometry, type ToWgs84 } from './geojson';
export { screenSite, anomalyFeature, type ScreenInput, type ScreenOptions, type ScreenResult, type ScreenSummary, type ScreenedAnomaly } from './screen';
export { scoreRun, type ScoreTruth, type ScoreOptions, type ScoreReport, type BuriedScore } from './score';
export { scoreFolder, readScoreTruth, type FolderScore } from './score-folder';
