import { constantModel, depthFromTime, timeFromDepth, type VelocityModel } from '@lamina/velocity';

export { constantModel };

/**
 * Time to depth for a common-offset (bistatic) antenna pair.
 *
 * Constant velocity: the reflection from depth z travels 2 * sqrt(z^2 + (s/2)^2) at v, so
 * z = sqrt((v t / 2)^2 - (s/2)^2); times before the direct ground wave (t < s / v) have no depth.
 *
 * Layered model (interval velocities by depth): straight-ray bistatic with the time-averaged velocity.
 * The vertical one-way time to depth z is T(z) = sum dz_i / v_i, the average velocity is
 * vbar(z) = z / T(z), and the two-way time of a reflector at z is t(z) = 2 sqrt(z^2 + (s/2)^2) / vbar(z).
 * t(z) increases with z, so z(t) is found by bisection. Refraction at layer boundaries is ignored, as it
 * is in the usual depth conversion of slices (the ray bends little for a separation much smaller than the
 * depth); with one layer this is the constant-velocity formula exactly. The conversion itself is
 * @lamina/velocity's `timeFromDepth` / `depthFromTime` (the same model), so slices and velocity.json agree;
 * here times before the ground wave give NaN rather than 0, so air and direct-wave samples never count as
 * the top slice.
 */

/** Depth (m) of a reflection at two-way time `tNs` after time-zero, constant velocity, bistatic. NaN before the ground wave. */
export function bistaticDepth(tNs: number, velocityMPerNs: number, separationM: number): number {
  const a = (velocityMPerNs * tNs) / 2;
  const h = separationM / 2;
  const d = a * a - h * h;
  if (!(tNs >= 0) || d < 0) return Number.NaN;
  return Math.sqrt(d);
}

/** One-way vertical time (ns) from the surface to depth `zM` through the model's interval velocities. */
export function verticalTimeNs(zM: number, model: VelocityModel): number {
  const layers = model.layers;
  if (layers.length === 0) throw new Error('velocity model has no layers');
  let t = 0;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i]!;
    const bottom = i === layers.length - 1 ? Infinity : l.bottomM;
    if (zM <= l.topM) break;
    t += (Math.min(zM, bottom) - l.topM) / l.velocityMPerNs;
  }
  return t;
}

/** Time-averaged velocity from the surface to depth `zM` (m/ns); the top layer's velocity at z = 0. */
export function averageVelocity(zM: number, model: VelocityModel): number {
  if (zM <= 0) return model.layers[0]!.velocityMPerNs;
  return zM / verticalTimeNs(zM, model);
}

/** Two-way bistatic time (ns) of a reflector at depth `zM` (straight rays, time-averaged velocity). */
export function depthToTime(zM: number, model: VelocityModel, separationM: number): number {
  return timeFromDepth(model, zM, separationM);
}

/** Depth (m) of a reflection at two-way time `tNs` after time-zero in a velocity model; NaN before the ground wave. */
export function timeToDepth(tNs: number, model: VelocityModel, separationM: number): number {
  if (model.layers.length === 1) return bistaticDepth(tNs, model.layers[0]!.velocityMPerNs, separationM);
  if (!(tNs >= timeFromDepth(model, 0, separationM))) return Number.NaN;
  return depthFromTime(model, tNs, separationM);
}

/**
 * Depth (m) of every sample of a trace: sample i is at `i * dtNs - timeZeroNs` ns after time-zero.
 * Samples before the ground wave are NaN.
 */
export function sampleDepths(
  nSamples: number,
  dtNs: number,
  timeZeroNs: number,
  model: VelocityModel,
  separationM: number,
  out: Float64Array = new Float64Array(nSamples),
): Float64Array {
  for (let i = 0; i < nSamples; i++) out[i] = timeToDepth(i * dtNs - timeZeroNs, model, separationM);
  return out;
}

/**
 * Depth (m) of the bottom of the near-surface zone, where the direct air wave and the ground wave
 * still ring: the ground wave arrives at s / v (time-zero is the transmission), and a pulse lasts about
 * one period 1 / f after its arrival (common practice, no source), so the zone ends at two-way time
 * t = s / v_top + 1000 / f ns (f in MHz), converted to depth like any sample. Slices above it hold the
 * direct and ground waves' residue after background removal.
 */
export function nearSurfaceDepthM(frequencyMHz: number, separationM: number, model: VelocityModel): number {
  const v = model.layers[0]!.velocityMPerNs;
  const z = timeToDepth(separationM / v + 1000 / frequencyMHz, model, separationM);
  return Number.isFinite(z) ? z : 0;
}
