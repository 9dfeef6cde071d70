import type { SurveyInfo } from './manifest';
/** Parsed site: what `loadSite(dir)` returns. Positions and plan geometry are in the site CRS units. */

/** `overhead`: a cable, beam, canopy edge or branch above the ground; it needs `heightM`. */
export type PlanKind = 'building' | 'wall' | 'fence' | 'post' | 'tree' | 'column' | 'overhead' | 'other';

export type Position = [number, number];
export type Geometry =
  | { type: 'Point'; coordinates: Position }
  | { type: 'LineString'; coordinates: Position[] }
  | { type: 'Polygon'; coordinates: Position[][] }
  | { type: 'MultiLineString'; coordinates: Position[][] }
  | { type: 'MultiPolygon'; coordinates: Position[][][] };

export interface PlanFeature {
  /** `feature.id`, else `properties.id`, else `<kind>-<n>`; unique in the plan. */
  id: string;
  kind: PlanKind;
  heightM?: number;
  postSpacingM?: number;
  properties: Record<string, unknown>;
  /** The geometry as given (WGS84 lon/lat). */
  wgs84: Geometry;
  /** The same geometry projected to the site CRS (CRS units). */
  geometry: Geometry;
}

export interface Crs {
  /** What site.json said: `EPSG:32617` or a proj4 string. */
  input: string;
  /** `EPSG:nnnn` when known. */
  code?: string;
  proj4: string;
  units: 'm' | 'us-ft' | 'ft' | 'degree';
  /** Metres per CRS unit: 1, 1200/3937 for US survey feet, 0.3048 for international feet. */
  metresPerUnit: number;
  isGeographic: boolean;
}

export type LinePositionSource =
  | { kind: 'headers' }
  | { kind: 'startEnd'; start: Position; end: Position }
  /** `file` is the absolute path of the CSV; `relFile` as written in site.json. */
  | { kind: 'csv'; file: string; relFile?: string };

export interface LineSource {
  id: string;
  /** Absolute path of the SEG-Y file. */
  file: string;
  /** The path as written in site.json (for messages). */
  relFile: string;
  position: LinePositionSource;
  /**
   * Only traces [first, last] of the file (0-based, inclusive): a piece of a longer line, e.g. a tile's.
   * Positions from start/end or a CSV still refer to the whole file's traces. @default the whole file
   */
  traces?: [number, number];
  /**
   * Traces [first, last] of the file (containing `traces`) that are processed with the piece, so that
   * steps over the whole line (time-zero's common pick, mean background removal, migration) see what a
   * run of the whole line sees; results are kept for `traces` only (a tile's piece, `lamina tiles`).
   * @default `traces`
   */
  context?: [number, number];
  /** Index of the line in site.json `lines` (for JSON paths in messages). */
  index?: number;
}

/** Where the position fix sits relative to the antenna midpoint (metres), applied along the line. */
export interface GpsOffset {
  /** Ahead of the midpoint in the direction of travel. */
  alongM: number;
  /** To the right of the midpoint, looking along the direction of travel. */
  acrossM: number;
}

export interface Site {
  /** Absolute path of the site folder. */
  dir: string;
  name: string;
  crs: Crs;
  description?: string;
  antenna: { frequencyMHz: number; separationM: number; gpsOffset?: GpsOffset };
  sampleIntervalNs?: number;
  plan: PlanFeature[];
  /** Absolute path of the plan file, when site.json names one. */
  planFile?: string;
  lines: LineSource[];
  /** Processing recipe from site.json, if any (validated by @lamina/processing). */
  recipe?: unknown;
  /** Survey metadata from site.json's `survey` block (date, operator, equipment, positioning, ...). */
  survey?: SurveyInfo;
}
