/** Plan geometry produced here, in the site CRS units (same shape as GeoJSON geometries). */
export type Ring = [number, number][];
export type Outline = { type: 'Polygon'; coordinates: Ring[] } | { type: 'MultiPolygon'; coordinates: Ring[][] };

/** Second-moment shape of a set of cells. */
export interface Shape {
  /** sqrt(major / minor eigenvalue) of the cell covariance (each cell counted as a filled square). */
  elongation: number;
  /** Azimuth of the major axis, degrees clockwise from grid north, in [0, 180). */
  directionDeg: number;
  /** Extent along the major / minor axis, metres (sqrt(12 * eigenvalue), exact for a filled rectangle). */
  lengthM: number;
  widthM: number;
  kind: 'linear' | 'compact';
}

/** One connected component of one slice (a member of a 3D anomaly). */
export interface Member {
  /** Index in the flat member list of the extraction. */
  id: number;
  slice: number;
  topM: number;
  bottomM: number;
  /** Cell indices (row * width + col) of the grid, ascending. */
  cells: Int32Array;
  /** Robust score (median/MAD normalised) of each cell, same order as `cells`. */
  scores: Float32Array;
  /** Centroid in site CRS units (score-weighted). */
  x: number;
  y: number;
  areaM2: number;
  peakValue: number;
  peakScore: number;
  /** A laterally extensive reflector (see `ExtractOptions.isLayer`): links only with layer members. */
  layer?: boolean;
  /** Mean noise energy of the member's slice (NaN when no noise law was fitted). */
  noiseEnergy: number;
  /** Peak over the noise: 10 log10(peakValue / noiseEnergy), dB of energy (NaN without a noise law). */
  strengthDb: number;
  shape: Shape;
}

/** Components linked across neighbouring slices. */
export interface Anomaly3D {
  id: string;
  /** Members sorted by slice index. */
  members: Member[];
  depthTopM: number;
  depthBottomM: number;
  /** Union of the members' cells over depth, ascending. */
  cells: Int32Array;
  /** Cell-boundary outline of `cells`, site CRS. */
  outline: Outline;
  shape: Shape;
  /** For linear anomalies: centreline in site CRS (binned along the major axis). */
  centreline?: [number, number][];
  areaM2: number;
  peakValue: number;
  peakScore: number;
  /** Strongest member's strength, dB over its slice's noise (NaN without a noise law). */
  strengthDb: number;
}
