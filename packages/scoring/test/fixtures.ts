// Hand-built fixtures shared by this package's tests: features in a local CRS in metres (WGS84 reading
// is the identity) over a uniform K 9 soil (c / v = 3).
import { C_M_PER_NS } from '@lamina/velocity';
import type { ScoreTruth } from '../src';

export const identity = (x: number, y: number): [number, number] => [x, y];
export const feat = (id: string, geometry: unknown, props: Record<string, unknown>) => ({ type: 'Feature' as const, geometry: geometry as never, properties: { id, ...props } });
export const empty = { type: 'FeatureCollection' as const, features: [] };

/** A truth in a local metre CRS over uniform K 9 soil, with these objects (and `extra` fields). */
export function k9Truth(buried: ScoreTruth['buried'], aboveGround: ScoreTruth['aboveGround'] = [], extra: Partial<ScoreTruth> = {}): ScoreTruth {
  return { soil: { permittivity: 9, velocityMPerNs: C_M_PER_NS / 3 }, crs: 'local', metresPerUnit: 1, buried, aboveGround, ...extra };
}
