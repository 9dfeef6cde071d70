import { C_M_PER_NS, type VelocityModel } from './model';

/** Relative permittivity K = (c / v)^2 of a low-loss, non-magnetic medium. */
export function permittivityFromVelocity(velocityMPerNs: number): number {
  return (C_M_PER_NS / velocityMPerNs) ** 2;
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
export function velocityAt(model: VelocityModel, depthM: number): number {
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
export function timeFromDepth(model: VelocityModel, depthM: number, separationM: number): number {
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
export function depthFromTime(model: VelocityModel, timeNs: number, separationM: number): number {
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
