export type { Anomaly3D, Member, Outline, Ring, Shape } from './types';
export { robustStats, robustScores, type RobustStats } from './normalise';
export { components } from './components';
export { traceOutline, ringArea, pointInRing, outlineArea } from './outline';
export { cellShape, moments, centreline, type ShapeOptions } from './shape';
export { linkMembers, type LinkOptions } from './link';
export { extractAnomalies, buildAnomaly, makeMember, memberOf, type ExtractOptions, type Extraction } from './extract';
