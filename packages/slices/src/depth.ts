import type { VelocityModel } from '@lamina/velocity';

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
 * depth); with one layer this is the constant-velocity formula exactly.
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
  const v = averageVelocity(zM, model);
  return (2 * Math.sqrt(zM * zM + (separationM * separationM) / 4)) / v;
}

/** Depth (m) of a reflection at two-way time `tNs` after time-zero in a velocity model; NaN before the ground wave. */
export function timeToDepth(tNs: number, model: VelocityModel, separationM: number): number {
  const layers = model.layers;
  if (layers.length === 1) return bistaticDepth(tNs, layers[0]!.velocityMPerNs, separationM);
  const t0 = depthToTime(0, model, separationM);
  if (!(tNs >= t0)) return Number.NaN;
  // Bracket: the slowest layer bounds the depth from above at v_max * t / 2.
  let vmax = 0;
  for (const l of layers) vmax = Math.max(vmax, l.velocityMPerNs);
  let lo = 0;
  let hi = (vmax * tNs) / 2 + separationM;
  for (let i = 0; i < 60 && hi - lo > 1e-9; i++) {
    const mid = 0.5 * (lo + hi);
    if (depthToTime(mid, model, separationM) < tNs) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
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

/** A constant model, for callers that only have one velocity. */
export function constantModel(velocityMPerNs: number): VelocityModel {
  return {
    kind: 'constant',
    layers: [{ topM: 0, bottomM: Infinity, velocityMPerNs, permittivity: (0.2998 / velocityMPerNs) ** 2 }],
  };
}
