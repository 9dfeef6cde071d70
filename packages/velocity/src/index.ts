export { C_M_PER_NS, type Origin, type HyperbolaFit, type VelocityLayer, type VelocityModel, type VelocityReport } from './model';
export {
  permittivityFromVelocity,
  velocityFromPermittivity,
  toppMoisture,
  toppPermittivity,
  TOPP_METHOD,
  TOPP_CAUTION,
  velocityAt,
  timeFromDepth,
  depthFromTime,
  constantModel,
  dixInterval,
  verticalTimeNs,
  verticalTwoWayTimeNs,
  depthAtVerticalTimeNs,
  averageVelocity,
  sampleDepth,
  sampleDepths,
  nearSurfaceDepthM,
  hyperbolaTimes,
  permittivitySpread,
  type LayerVelocities,
} from './physics';
export { fitHyperbola, linearisedFit, hyperbolaTime, apexDistance, type PointFit, type FitOptions } from './fit';
export { alongLine, pointAlong, type AlongLineOptions } from './along';
export { envelopeLevel } from './noise-level';
export { detectHyperbolas, type DetectOptions, type DetectedHyperbola } from './detect';
export {
  ABOVE_GROUND_MAX_PERMITTIVITY,
  EARLY_APEX_FLAG,
  MAX_SOIL_PERMITTIVITY,
  MIN_SOIL_PERMITTIVITY,
  classifyVelocity,
  objectGroups,
  usableForSite,
  robustCentre,
  siteVelocityModel,
  siteVelocityOf,
  siteVelocityUncertainty,
  ONE_OBJECT_RELATIVE_UNCERTAINTY,
  ASSUMED_RELATIVE_UNCERTAINTY,
  type SiteModelOptions,
} from './site-model';
export { toHyperbolaFit, lineHyperbolas, buildVelocityReport, siteModelOfFits, velocityJson, velocityJsonChunks, writeVelocityJson, type ReportOptions } from './report';
export { parsePicks, fitManualPicks, type PicksFile, type ManualHyperbola } from './picks';
export { lineDirection, correctObliqueCrossings, type ObliqueOptions } from './oblique';
export { recipeForVelocity } from './recipe';
export { spreadOrder, effectiveObjects, SiteSampler, type SamplingOptions, type SiteSamplerOptions, type SiteEstimate } from './sampling';
