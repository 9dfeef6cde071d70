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
export { exportTargets, EXPORT_FILES, type ExportOptions, type ExportResult } from './export';
export { targetsGpkg, CUSTOM_SRS_ID, geoJsonWriter, csvWriter, dxfWriter, gpkgWriter, reportWriter, type TargetFileWriter } from './writers';
export { buildTargets, targetOf, decisionsById, isDropped, rightHandRule, pointAlong, polylineLength, envelope, FOOT_M, type Target, type Dropped, type Geometry } from './targets';
export { readRun, readAnomalies, streamAnomalies, streamFeatures, readVelocity, readSlicesInfo, type RunInfo, type AnomalyFeature, type EvidenceItem, type VelocityInfo, type SlicesInfo, type SliceInfo } from './folder';
export {
  TARGET_FIELDS,
  CSV_COLUMNS,
  targetProperties,
  targetsGeoJson,
  targetsCsv,
  targetsDxf,
  dxfLayer,
  geometryWkt,
  GEOJSON_HEAD,
  geoJsonFeature,
  geoJsonTail,
  csvHead,
  csvRow,
  dxfHead,
  dxfEntities,
  dxfTail,
  dxfColour,
  addDxfLayer,
  type ExportContext,
} from './formats';
export { writeGpkg, openGpkg, gpkgGeometry, wkb, type GpkgSrs, type GpkgLayer, type GpkgLayerDef, type GpkgWriter, type GpkgFieldType, type GpkgValue } from './gpkg';
export { crsToWkt, parseProj4, WGS84_WKT } from './wkt';
export { encodePng, pngDataUri, crc32 } from './png';
export { sliceThumbnails, THUMBNAIL_SIZE, type Thumbnail } from './thumbnails';
export { reportHtml, reportParts, reportTargetRow, reportFlaggedRow, byTargetId, type ReportInput, type ReportPage, type ReportRows } from './report';
export { depthErrorModel, depthUncertainty, folderDepthError, type DepthErrorModel } from './depth-error';
export { planMapSvg, planMapLegend, type MapFrame, type MapLayers, type MapTarget, type MapFlagged } from './plan-map';
