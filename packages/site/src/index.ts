export type * from './types';
export { resolveCrs, lookupEpsg, registrySize, registryCodes, toWgs84, fromWgs84, pointToWgs84, pointFromWgs84, US_SURVEY_FOOT_M, INTERNATIONAL_FOOT_M, type ResolveCrsOptions, type LonLat, type Xy } from './crs';
export { siteSchema, lineSchema, antennaSchema, surveySchema, checkSiteJson, LINE_ID, type SiteJson, type SiteJsonLine, type SurveyInfo } from './manifest';
export { parsePlan, readPlan, checkPlanNearSurvey, PLAN_KINDS, KIND_GEOMETRY, type ParsePlanOptions, type PlanNearOptions } from './plan';
export {
  positionsFromHeaders,
  positionsFromStartEnd,
  parsePositionsCsv,
  positionsFromFixes,
  lineDirections,
  applyGpsOffset,
  checkPositions,
  type HeaderCoordinates,
  type TracePositions,
  type PositionFix,
  type GpsOffsetOptions,
  type CheckPositionsOptions,
} from './positions';
export { lineGeometry, type LineGeometry } from './geometry';
export { loadSite, readLine, lineChunks, linePositions, lineTraces, summarizeLine, shownPath, type ReadLineOptions, type LineChunk, type LineChunksOptions, type LineSummary } from './load';
export { InputProblems, jsonPath, type Problem } from './problems';
export { defaultOpenSegy, syncOpenSegy, type SegyReaderLike, type OpenSegy } from './segy';
export { summarizeSite, type SiteSummary, type LineInfo, type SummarizeOptions } from './summary';
export { checkSurvey, likelyCause, areaOfUse, insideArea, type SurveyCheck, type SurveyCheckOptions, type LineFacts } from './survey-check';
