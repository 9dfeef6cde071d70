/** Two-way time and depth through a layered interval-velocity model (as in velocity.json `model`). */

export interface Layer {
  topM: number;
  bottomM: number;
  velocityMPerNs: number;
}

/** Depth (m) reached at two-way time `tNs` after time-zero. Negative times give negative depth at the top velocity. */
export function timeToDepth(tNs: number, layers: Layer[], fallbackV: number): number {
  if (layers.length === 0) return (tNs * fallbackV) / 2;
  if (tNs <= 0) return (tNs * layers[0]!.velocityMPerNs) / 2;
  let t = tNs;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i]!;
    const last = i === layers.length - 1;
    const thick = last ? Infinity : l.bottomM - l.topM;
    const tLayer = (2 * thick) / l.velocityMPerNs;
    if (t <= tLayer) return l.topM + (t * l.velocityMPerNs) / 2;
    t -= tLayer;
  }
  return NaN;
}

/** Two-way time (ns) to depth `dM`. */
export function depthToTime(dM: number, layers: Layer[], fallbackV: number): number {
  if (layers.length === 0) return (2 * dM) / fallbackV;
  let t = 0;
  for (let i = 0; i < layers.length; i++) {
    const l = layers[i]!;
    const last = i === layers.length - 1;
    const bottom = last ? Infinity : l.bottomM;
    if (dM <= bottom) return t + (2 * (dM - l.topM)) / l.velocityMPerNs;
    t += (2 * (l.bottomM - l.topM)) / l.velocityMPerNs;
  }
  return NaN;
}

/**
 * Two-way travel time of a point diffractor at apex time `t0Ns` (zero-offset, after time-zero) seen
 * from antenna midpoints at along-line offsets `xM` from the apex, for velocity `v` and transmitter-
 * receiver separation `sepM`: t = (sqrt(d^2 + (x - s/2)^2) + sqrt(d^2 + (x + s/2)^2)) / v, with the
 * depth d chosen so that t(0) = t0 (the standard common-offset diffraction move-out). For a target of
 * radius `radiusM` (velocity.json `radiusM`) each leg ends on the circle around the axis at d + R:
 * t = (sqrt((d + R)^2 + (x - s/2)^2) + sqrt((d + R)^2 + (x + s/2)^2) - 2R) / v (for drawing; the fit in
 * @lamina/velocity uses the exact specular point, which differs by a second-order term).
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
