import { C_M_PER_NS, type VelocityModel } from '@lamina/velocity';

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
 */

/** Interval velocity at depth z (the last layer extends downwards, the first upwards). */
export function velocityAt(z: number, model: VelocityModel): number {
  const layers = model.layers;
  if (layers.length === 0) throw new Error('velocity model has no layers');
  for (const l of layers) if (z < l.bottomM) return l.velocityMPerNs;
  return layers[layers.length - 1]!.velocityMPerNs;
}

/** Vertical two-way time (ns) to depth z (m) through the model's layers. */
export function twoWayTimeNs(z: number, model: VelocityModel): number {
  let t = 0;
  const layers = model.layers;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i]!;
    const top = Math.max(0, l.topM);
    const bottom = i === layers.length - 1 ? Infinity : l.bottomM;
    if (z <= top) break;
    t += (2 * (Math.min(z, bottom) - top)) / l.velocityMPerNs;
  }
  return t;
}

/** Depth (m) reached at vertical two-way time t (ns): the inverse of `twoWayTimeNs`. */
export function depthAtTimeNs(t: number, model: VelocityModel): number {
  let z = 0;
  let left = t;
  const layers = model.layers;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i]!;
    const thick = i === layers.length - 1 ? Infinity : l.bottomM - Math.max(0, l.topM);
    const dt = (2 * thick) / l.velocityMPerNs;
    if (left <= dt) return z + (left * l.velocityMPerNs) / 2;
    z += thick;
    left -= dt;
  }
  return z;
}

/** Horizontal distance (m) of an above-ground reflector whose air wave shows at slice depth z (m). */
export function airRadiusM(z: number, model: VelocityModel, separationM = 0): number {
  const tv = twoWayTimeNs(z, model);
  if (separationM <= 0 || z <= 0) return (C_M_PER_NS * tv) / 2;
  const vrms = (2 * z) / tv;
  return (C_M_PER_NS * Math.sqrt(z * z + (separationM * separationM) / 4)) / vrms;
}

/** Move-out rate dr/dz = c / v(z) (dimensionless, metres of plan distance per metre of depth). */
export function airRate(z: number, model: VelocityModel): number {
  return C_M_PER_NS / velocityAt(z, model);
}
