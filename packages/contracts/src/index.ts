export { checkContract, parseJsonText, jsonPath, type CheckOptions } from './check';
export { bbox, geometrySchema, featureOf, featureCollectionOf, type Box, type Geometry } from './common';
export { siteIdentitySchema, runSchema, runCrsSchema, runLineSchema, type SiteIdentity, type RunJson, type RunLine } from './run';
export { ORIGINS, hyperbolaSchema, velocityLayerSchema, velocityModelSchema, velocitySchema, type Origin, type VelocityHyperbola, type VelocityLayerJson, type VelocityJson } from './velocity';
export { griddingSchema, sliceStatsSchema, sliceEntrySchema, slicesSchema, type GriddingJson, type SliceStatsJson, type SliceEntry, type SlicesJson } from './slices';
export { TEST_NAMES, evidenceSchema, evidenceRowSchema, type TestName, type Evidence, type EvidenceRow } from './evidence';
export {
  ANOMALY_CLASSES, memberSchema, anomalyPropertiesSchema, anomalyFeatureSchema, anomaliesSchema, interfacePropertiesSchema, interfacesSchema,
  forecastPropertiesSchema, forecastSchema, type AnomalyClassName, type AnomalyProperties, type AnomalyFeature, type InterfaceProperties, type ForecastProperties,
} from './anomalies';
export { UTILITY_TYPES, targetFieldsSchema, targetPropertiesSchema, targetFeatureSchema, targetsSchema, type UtilityType, type TargetFields, type TargetProperties } from './targets';
export { decisionSchema, reviewSchema, type Decision, type Review } from './review';
export { pickSchema, picksSchema, type PicksFile, type ManualHyperbola } from './picks';
export { tileLineSchema, tileEntrySchema, tilesSchema, type TileLine, type TileEntry, type TilesManifest } from './tiles';
export { radargramLineSchema, radargramIndexSchema, linePropertiesSchema, linesSchema, planPropertiesSchema, planSchema, type RadargramLine, type RadargramIndex, type LineProperties } from './radargrams';
export { FOLDER_FILES, checkFolder } from './folder';
export { surveySchema, type SurveyJson } from './survey';
