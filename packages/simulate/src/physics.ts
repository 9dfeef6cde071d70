/** Electromagnetic facts the forward model rests on (low-loss, non-magnetic media). */

import { C_M_PER_NS } from '@lamina/constants';

/** Velocity in a low-loss medium of relative permittivity K: v = c / sqrt(K). */
export function velocityOf(permittivity: number): number {
  return C_M_PER_NS / Math.sqrt(permittivity);
}

/**
 * Normal-incidence amplitude reflection coefficient going from medium 1 into medium 2:
 * R = (sqrt(K1) - sqrt(K2)) / (sqrt(K1) + sqrt(K2)). Negative when K2 > K1 (water-filled pipe in soil,
 * a wetter layer), positive when K2 < K1 (air void, empty plastic pipe); metal reflects totally, R = -1.
 */
export function reflectionCoefficient(k1: number, k2: number): number {
  const a = Math.sqrt(k1);
  const b = Math.sqrt(k2);
  return (a - b) / (a + b);
}

/** Relative permittivity of target fills and above-ground materials (common practice, no source; typical values). */
export const MATERIAL_PERMITTIVITY = {
  air: 1,
  plastic: 1, // an empty plastic pipe: the thin wall is invisible at radar wavelengths, the air inside is not
  water: 81,
  concrete: 9,
  wood: 3,
  brick: 5,
  stone: 7,
} as const;

export type Material = keyof typeof MATERIAL_PERMITTIVITY | 'metal';

/** Reflection coefficient of a material seen from a medium of permittivity K (metal: -1). */
export function materialReflection(material: Material, fromPermittivity: number, permittivity?: number): number {
  if (material === 'metal') return -1;
  return reflectionCoefficient(fromPermittivity, permittivity ?? MATERIAL_PERMITTIVITY[material]);
}

/** Amplitude factor after travelling `pathM` through a medium attenuating `dbPerM` (dB per metre of path). */
export function attenuationFactor(dbPerM: number, pathM: number): number {
  return Math.pow(10, (-dbPerM * pathM) / 20);
}
