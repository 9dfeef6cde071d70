import { nearSurfaceTimeNs } from '@lamina/constants';
import { C_M_PER_NS, type VelocityLayer, type VelocityModel } from './model';

/**
 * Time and depth through a velocity model: this file is the one home of that physics. It imports
 * nothing node-only (the browser entry `@lamina/velocity/physics` is this file), so the viewer draws
 * with the same maths the pipeline computes with.
 */

/** What the time-depth maths reads of a model (velocity.json `model`; `permittivity` is not needed). */
export interface LayerVelocities {
  layers: readonly Pick<VelocityLayer, 'topM' | 'bottomM' | 'velocityMPerNs'>[];
}

/** Relative permittivity K = (c / v)^2 of a low-loss, non-magnetic medium. */
export function permittivityFromVelocity(velocityMPerNs: number): number {
  return (C_M_PER_NS / velocityMPerNs) ** 2;
}

/** Spread of K from the spread of v: K = (c / v)^2, so dK / K = 2 dv / v. NaN unless v > 0. */
export function permittivitySpread(permittivity: number, velocityMPerNs: number, spreadMPerNs: number): number {
  return velocityMPerNs > 0 ? (2 * permittivity * spreadMPerNs) / velocityMPerNs : NaN;
}

/** Velocity v = c / sqrt(K), m/ns. */
export function velocityFromPermittivity(permittivity: number): number {
  return C_M_PER_NS / Math.sqrt(permittivity);
}

/**
 * Volumetric water content from relative permittivity by Topp, Davis & Annan (1980):
 * theta = -5.3e-2 + 2.92e-2 K - 5.5e-4 K^2 + 4.3e-6 K^3. An empirical fit for mineral soils; it does
 * not hold for organic, clay-rich or saline soils.
 */
export function toppMoisture(permittivity: number): number {
  const k = permittivity;
  return -5.3e-2 + 2.92e-2 * k - 5.5e-4 * k * k + 4.3e-6 * k * k * k;
}

/** Topp et al. (1980) inverse fit K = 3.03 + 9.3 theta + 146 theta^2 - 76.7 theta^3 (not the exact inverse of `toppMoisture`). */
export function toppPermittivity(theta: number): number {
  return 3.03 + 9.3 * theta + 146 * theta * theta - 76.7 * theta * theta * theta;
}

export const TOPP_METHOD = 'Topp, Davis & Annan (1980)';
export const TOPP_CAUTION =
  'Empirical relation for mineral soils; it does not hold for organic, clay-rich or saline soils. An estimate, not a measurement.';

/** Velocity of the layer holding `depthM` (the last layer continues below its top; above 0 m the first layer). */
export function velocityAt(model: LayerVelocities, depthM: number): number {
  const layers = model.layers;
  if (layers.length === 0) throw new Error('velocity model has no layers');
  for (const layer of layers) if (depthM < layer.bottomM) return layer.velocityMPerNs;
  return layers[layers.length - 1]!.velocityMPerNs;
}

/**
 * Two-way time (ns after time-zero) of a reflector at `depthM` straight below the antenna midpoint, for
 * transmitter and receiver `separationM` apart. Constant velocity: t = 2 sqrt(z^2 + (s/2)^2) / v.
 * Layered: straight rays through the layers (refraction at layer tops neglected, a small error at the
 * shallow angles of common-offset antennas).
 */
export function timeFromDepth(model: LayerVelocities, depthM: number, separationM: number): number {
  const z = Math.max(0, depthM);
  const half = separationM / 2;
  const slant = Math.sqrt(z * z + half * half);
  if (z === 0) return (2 * slant) / velocityAt(model, 0);
  // Each layer carries the share of the slant path equal to its share of the depth.
  let t = 0;
  let top = 0;
  for (let i = 0; i < model.layers.length && top < z; i++) {
    const layer = model.layers[i]!;
    const bottom = i === model.layers.length - 1 ? z : Math.min(z, layer.bottomM);
    if (bottom > top) t += (2 * slant * ((bottom - top) / z)) / layer.velocityMPerNs;
    top = bottom;
  }
  return t;
}

/**
 * Depth (m) of a reflector whose two-way time after time-zero is `timeNs`, for a velocity model and
 * antenna separation `separationM`. Constant velocity (exact, bistatic): z = sqrt((v t / 2)^2 - (s/2)^2),
 * 0 when v t < s. Layered: the inverse of `timeFromDepth` (monotone, solved by bisection).
 */
export function depthFromTime(model: LayerVelocities, timeNs: number, separationM: number): number {
  if (timeNs <= 0) return 0;
  if (model.layers.length === 1) {
    const v = model.layers[0]!.velocityMPerNs;
    const r = (v * timeNs) / 2;
    const h = separationM / 2;
    return r > h ? Math.sqrt(r * r - h * h) : 0;
  }
  if (timeNs <= timeFromDepth(model, 0, separationM)) return 0;
  let lo = 0;
  let hi = 1;
  while (timeFromDepth(model, hi, separationM) < timeNs) hi *= 2;
  for (let i = 0; i < 60; i++) {
    const mid = (lo + hi) / 2;
    if (timeFromDepth(model, mid, separationM) < timeNs) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * A one-layer model of velocity `velocityMPerNs`. `bottomM` only records the depth the model was
 * supported to (the last layer of any model continues below its top). @default bottomM 10
 */
export function constantModel(velocityMPerNs: number, bottomM = 10): VelocityModel {
  return {
    kind: 'constant',
    layers: [{ topM: 0, bottomM, velocityMPerNs, permittivity: permittivityFromVelocity(velocityMPerNs) }],
  };
}

/**
 * Dix (1955) interval velocity between two reflectors of RMS velocities v1, v2 at zero-offset two-way
 * times t1 < t2: v_int^2 = (v2^2 t2 - v1^2 t1) / (t2 - t1). NaN when the data give a negative square.
 */
export function dixInterval(v1: number, t1: number, v2: number, t2: number): number {
  const sq = (v2 * v2 * t2 - v1 * v1 * t1) / (t2 - t1);
  return sq > 0 ? Math.sqrt(sq) : Number.NaN;
}

/** One-way vertical time (ns) from the surface to depth `zM` through the model's interval velocities. */
export function verticalTimeNs(model: LayerVelocities, zM: number): number {
  const layers = model.layers;
  if (layers.length === 0) throw new Error('velocity model has no layers');
  let t = 0;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i]!;
    const top = Math.max(0, l.topM);
    const bottom = i === layers.length - 1 ? Infinity : l.bottomM;
    if (zM <= top) break;
    t += (Math.min(zM, bottom) - top) / l.velocityMPerNs;
  }
  return t;
}

/** Vertical (zero-offset) two-way time (ns) to depth `zM`: twice `verticalTimeNs`. */
export function verticalTwoWayTimeNs(model: LayerVelocities, zM: number): number {
  return 2 * verticalTimeNs(model, zM);
}

/**
 * Depth (m) reached at vertical (zero-offset) two-way time `tNs`: the inverse of `verticalTwoWayTimeNs`.
 * A negative time gives a negative depth at the top layer's velocity (the air above time-zero on a
 * radargram's depth axis).
 */
export function depthAtVerticalTimeNs(model: LayerVelocities, tNs: number): number {
  let z = 0;
  let left = tNs;
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

/** Time-averaged velocity from the surface to depth `zM` (m/ns); the top layer's velocity at z = 0. */
export function averageVelocity(model: LayerVelocities, zM: number): number {
  if (zM <= 0) return model.layers[0]!.velocityMPerNs;
  return zM / verticalTimeNs(model, zM);
}

/**
 * Depth (m) of a sample at two-way time `tNs` after time-zero, bistatic (as `depthFromTime`), but NaN
 * before the ground wave (t < s / v at the top) rather than 0, so air and direct-wave samples never
 * count as the top slice.
 */
export function sampleDepth(model: LayerVelocities, tNs: number, separationM: number): number {
  if (model.layers.length === 1) {
    const a = (model.layers[0]!.velocityMPerNs * tNs) / 2;
    const h = separationM / 2;
    const d = a * a - h * h;
    if (!(tNs >= 0) || d < 0) return Number.NaN;
    return Math.sqrt(d);
  }
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
  model: LayerVelocities,
  separationM: number,
  out: Float64Array = new Float64Array(nSamples),
): Float64Array {
  for (let i = 0; i < nSamples; i++) out[i] = sampleDepth(model, i * dtNs - timeZeroNs, separationM);
  return out;
}

/**
 * Depth (m) of the bottom of the near-surface zone, where the direct air wave and the ground wave
 * still ring: the ground wave arrives at s / v (time-zero is the transmission), and a pulse lasts about
 * one period 1 / f after its arrival (common practice, no source), so the zone ends at two-way time
 * t = s / v_top + 1000 / f ns (f in MHz), converted to depth like any sample. Slices above it hold the
 * direct and ground waves' residue after background removal.
 */
export function nearSurfaceDepthM(frequencyMHz: number, separationM: number, model: LayerVelocities): number {
  const v = model.layers[0]!.velocityMPerNs;
  const z = sampleDepth(model, nearSurfaceTimeNs(frequencyMHz, separationM, v), separationM);
  return Number.isFinite(z) ? z : 0;
}

/**
 * Two-way travel time of a point diffractor at apex time `t0Ns` (zero-offset, after time-zero) seen
 * from antenna midpoints at along-line offsets `xM` from the apex, for velocity `v` and transmitter-
 * receiver separation `sepM`: t = (sqrt(d^2 + (x - s/2)^2) + sqrt(d^2 + (x + s/2)^2)) / v, with the
 * depth d chosen so that t(0) = t0 (the standard common-offset diffraction move-out). For a target of
 * radius `radiusM` (velocity.json `radiusM`) each leg ends on the circle around the axis at d + R:
 * t = (sqrt((d + R)^2 + (x - s/2)^2) + sqrt((d + R)^2 + (x + s/2)^2) - 2R) / v. This is for drawing over
 * a radargram; the fit (`hyperbolaTime`) uses the exact specular point, which differs by a second-order term.
 */
export function hyperbolaTimes(xM: ArrayLike<number>, t0Ns: number, v: number, sepM = 0, out = new Float64Array(xM.length), radiusM = 0): Float64Array {
  const h = sepM / 2;
  const half = (v * t0Ns) / 2;
  const d = Math.sqrt(Math.max(0, half * half - h * h)) + radiusM;
  const r0 = Math.sqrt(d * d + h * h) - half; // makes t(0) = t0 with the radius
  for (let i = 0; i < xM.length; i++) {
    const x = xM[i]!;
    out[i] = (Math.sqrt(d * d + (x - h) * (x - h)) + Math.sqrt(d * d + (x + h) * (x + h)) - 2 * r0) / v;
  }
  return out;
}
