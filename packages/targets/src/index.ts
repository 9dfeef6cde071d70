export { UTILITY_TYPES, APWA_COLOURS, type UtilityType } from './apwa';
export {
  decisionSchema,
  reviewSchema,
  siteIdentitySchema,
  emptyReview,
  parseReview,
  sameSite,
  readReview,
  writeReview,
  upsertDecision,
  matchDecisions,
  type Decision,
  type Review,
  type SiteIdentity,
  type AnchoredAnomaly,
} from './review';
export { exportTargets, targetsGpkg, EXPORT_FILES, CUSTOM_SRS_ID, type ExportOptions, type ExportResult } from './export';
export { buildTargets, rightHandRule, pointAlong, polylineLength, envelope, FOOT_M, type Target, type Dropped, type Geometry } from './targets';
export { readRun, readAnomalies, readVelocity, readSlicesInfo, type RunInfo, type AnomalyFeature, type EvidenceItem, type VelocityInfo, type SlicesInfo, type SliceInfo } from './folder';
export { TARGET_FIELDS, CSV_COLUMNS, targetProperties, targetsGeoJson, targetsCsv, targetsDxf, dxfLayer, geometryWkt, type ExportContext } from './formats';
export { writeGpkg, gpkgGeometry, wkb, type GpkgSrs, type GpkgLayer, type GpkgFieldType, type GpkgValue } from './gpkg';
export { crsToWkt, parseProj4, WGS84_WKT } from './wkt';
export { encodePng, pngDataUri, crc32 } from './png';
export { sliceThumbnails, type Thumbnail } from './thumbnails';
export { reportHtml, CAUTIONS, type ReportInput } from './report';
