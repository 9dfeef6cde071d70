import { C_M_PER_NS, velocityAt, verticalTwoWayTimeNs, type VelocityModel } from '@lamina/velocity';

/**
 * Air-wave physics.
 *
 * An object above ground at horizontal distance r from the antenna returns energy through the air
 * at two-way time t = 2 r / c. The slices convert time to depth with the soil
 * velocity v, so the event appears at depth z = v t / 2 = r v / c = r / sqrt(K) (K = (c / v)^2).
 * Read the other way: in the slice at depth z, the object's reflection lies on the locus of points
 * at distance r(z) = z c / v from it (a ring around a post, a band parallel to a wall or a fence),
 * moving away from the object as z grows at dr/dz = c / v. A buried target stays where it is.
 * With a layered model, t(z) is the model's two-way time to depth z and r(z) = c t(z) / 2.
 * With an antenna separation s (optional), the slice depth z is taken from a bistatic time
 * t = 2 sqrt(z^2 + (s/2)^2) / v_rms(z), as the slices do; the air path is taken as 2 r (s << r).
 * Time and depth through the model are @lamina/velocity's.
 */

/** Horizontal distance (m) of an above-ground reflector whose air wave shows at slice depth z (m). */
export function airRadiusM(z: number, model: VelocityModel, separationM = 0): number {
  const tv = verticalTwoWayTimeNs(model, z);
  if (separationM <= 0 || z <= 0) return (C_M_PER_NS * tv) / 2;
  const vrms = (2 * z) / tv;
  return (C_M_PER_NS * Math.sqrt(z * z + (separationM * separationM) / 4)) / vrms;
}

/** Move-out rate dr/dz = c / v(z) (dimensionless, metres of plan distance per metre of depth). */
export function airRate(z: number, model: VelocityModel): number {
  return C_M_PER_NS / velocityAt(model, z);
}
