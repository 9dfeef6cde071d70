/** Parsed site: what `loadSite(dir)` returns. Positions and plan geometry are in the site CRS units. */

export type PlanKind = 'building' | 'wall' | 'fence' | 'post' | 'tree' | 'column' | 'other';

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
  | { kind: 'csv'; file: string };

export interface LineSource {
  id: string;
  /** Absolute path of the SEG-Y file. */
  file: string;
  /** The path as written in site.json (for messages). */
  relFile: string;
  position: LinePositionSource;
}

export interface Site {
  /** Absolute path of the site folder. */
  dir: string;
  name: string;
  crs: Crs;
  antenna: { frequencyMHz: number; separationM: number };
  sampleIntervalNs?: number;
  plan: PlanFeature[];
  lines: LineSource[];
  /** Processing recipe from site.json, if any (validated by @lamina/processing). */
  recipe?: unknown;
}
