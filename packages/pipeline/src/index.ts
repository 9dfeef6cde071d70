export { runProcess, type ProcessOptions, type ProcessSummary } from './process';
export { siteRecipe } from './line-task';
export { formatTimings, type ProcessTimings } from './timings';
export { preflight, estimateSize, type PreflightOptions, type SizeEstimate } from './preflight';
export { readSurveyVelocity, adoptSurveyVelocity, type SurveyVelocity } from './survey-velocity';
export { recordWindows, writeSurveyWindows, readSurveyWindows, SURVEY_WINDOWS, type LineRecord, type SurveyWindowsJson } from './windows';
export { sliceAndScreen, directionStackFile, SCREEN_INPUTS, type DirectionRows, type ScreenSource, type ScreenLinesJson, type Screening } from './slice-and-screen';
