import { depthFromTime, hyperbolaTimes, permittivityFromVelocity } from '@lamina/velocity/physics';
import { classifyVelocity } from '@lamina/velocity/site-model';

/**
 * A hyperbola matched by hand on a radargram: apex at `x0M` along the line and `t0Ns` (two-way time
 * after time-zero), velocity and object radius. Drawn and read with the physics of @lamina/velocity
 * (the same bistatic curve and air/soil verdict as the automatic fits).
 */
export interface HandMatch {
  line: string;
  x0M: number;
  t0Ns: number;
  velocityMPerNs: number;
  radiusM: number;
}

/** Velocity range a drag may reach, m/ns: slower than any soil, faster than light (so v > c shows). */
export const MATCH_V_MIN = 0.02;
export const MATCH_V_MAX = 0.6;

/** Two-way times of a match at along-line offsets `xM` from its apex. */
export function matchTimes(m: HandMatch, xM: ArrayLike<number>, separationM: number, out?: Float64Array<ArrayBuffer>): Float64Array {
  return hyperbolaTimes(xM, m.t0Ns, m.velocityMPerNs, separationM, out, m.radiusM);
}

/**
 * Velocity of the curve with apex time `t0Ns` that passes through (`offsetM`, `timeNs`): the curve's
 * time at a fixed offset falls as the velocity grows, so bisection on `hyperbolaTimes` finds it.
 * Clamped to [MATCH_V_MIN, MATCH_V_MAX]; a point at or above the apex time gives the top of the range.
 */
export function velocityThrough(t0Ns: number, offsetM: number, timeNs: number, separationM: number, radiusM = 0): number {
  const x = [Math.abs(offsetM)];
  const t = (v: number) => hyperbolaTimes(x, t0Ns, v, separationM, undefined, radiusM)[0]!;
  if (!(timeNs > t0Ns) || x[0] === 0) return MATCH_V_MAX;
  let lo = MATCH_V_MIN;
  let hi = MATCH_V_MAX;
  if (t(lo) <= timeNs) return lo;
  if (t(hi) >= timeNs) return hi;
  for (let i = 0; i < 60; i++) {
    const mid = Math.sqrt(lo * hi);
    if (t(mid) > timeNs) lo = mid;
    else hi = mid;
  }
  return Math.sqrt(lo * hi);
}

/** Largest radius a drag may set, m. */
export const MATCH_R_MAX = 1;

/**
 * Radius of the curve with apex time `t0Ns` and velocity `v` that passes through (`offsetM`, `timeNs`):
 * at a fixed offset a larger object gives a flatter curve (an earlier time), so bisection finds it.
 * Clamped to [0, MATCH_R_MAX].
 */
export function radiusThrough(t0Ns: number, offsetM: number, timeNs: number, v: number, separationM: number): number {
  const x = [Math.abs(offsetM)];
  const t = (r: number) => hyperbolaTimes(x, t0Ns, v, separationM, undefined, r)[0]!;
  let lo = 0;
  let hi = MATCH_R_MAX;
  if (t(lo) <= timeNs) return lo;
  if (t(hi) >= timeNs) return hi;
  for (let i = 0; i < 50; i++) {
    const mid = (lo + hi) / 2;
    if (t(mid) > timeNs) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

export interface MatchReadout {
  velocityMPerNs: number;
  permittivity: number;
  /** Depth of the apex for this velocity (bistatic); for an air event, the distance it stands for. */
  apexDepthM: number;
  /** The automatic fits' verdict: above-ground (air-wave), subsurface or implausible. */
  origin: 'subsurface' | 'above-ground' | 'implausible';
  flags: string[];
}

export function matchReadout(m: HandMatch, separationM: number): MatchReadout {
  const { origin, flags } = classifyVelocity(m.velocityMPerNs);
  return {
    velocityMPerNs: m.velocityMPerNs,
    permittivity: permittivityFromVelocity(m.velocityMPerNs),
    apexDepthM: depthFromTime({ layers: [{ topM: 0, bottomM: Infinity, velocityMPerNs: m.velocityMPerNs }] }, m.t0Ns, separationM),
    origin,
    flags,
  };
}

/**
 * Picks along a match for picks.json (the `lamina velocity --picks` format): `count` points evenly
 * across the half-aperture `halfApertureM` each side of the apex, inside the line. `along` is the
 * distance (m) of each stored trace from the line's first; `traceStep` maps them to the line's traces.
 */
export function matchPicks(m: HandMatch, along: ArrayLike<number>, traceStep: number, separationM: number, halfApertureM: number, count = 11): { trace: number; timeNs: number }[] {
  const n = along.length;
  const end = along[n - 1]!;
  const a = Math.max(0, m.x0M - halfApertureM);
  const b = Math.min(end, m.x0M + halfApertureM);
  const xs = Array.from({ length: count }, (_, i) => a + ((b - a) * i) / (count - 1));
  const ts = matchTimes(m, xs.map((x) => x - m.x0M), separationM);
  return xs.map((x, i) => ({ trace: +(traceAt(along, x) * traceStep).toFixed(3), timeNs: +ts[i]!.toFixed(4) }));
}

/** Fractional index of the stored trace at distance `x` along the line (linear between traces). */
export function traceAt(along: ArrayLike<number>, x: number): number {
  const n = along.length;
  if (x <= along[0]!) return 0;
  if (x >= along[n - 1]!) return n - 1;
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (along[mid]! <= x) lo = mid;
    else hi = mid;
  }
  const d = along[hi]! - along[lo]!;
  return lo + (d > 0 ? (x - along[lo]!) / d : 0);
}

/** A radargram as the picker reads it: trace-major samples, sample i at i * dtNs - timeZeroNs ns after time-zero. */
export interface PickGrid {
  data: Float32Array;
  nTraces: number;
  nSamples: number;
  dtNs: number;
  timeZeroNs: number;
}

/**
 * Picks of the event under a match, for picks.json: on traces across `halfApertureM` each side of the
 * apex (at most `maxPicks`, evenly spread), the time of the largest |amplitude| within `windowNs` of the
 * curve, refined by a parabola through the peak and its neighbours. The match only guides: the times
 * are the data's, so the fitter sees the event's own scatter (a curve's own samples would fit with no
 * residual and claim a precision no data have).
 */
export function dataPicks(m: HandMatch, grid: PickGrid, along: ArrayLike<number>, traceStep: number, separationM: number, halfApertureM: number, windowNs: number, maxPicks = 41): { trace: number; timeNs: number }[] {
  const { data, nTraces, nSamples, dtNs, timeZeroNs } = grid;
  const a = Math.max(0, Math.ceil(traceAt(along, m.x0M - halfApertureM)));
  const b = Math.min(nTraces - 1, Math.floor(traceAt(along, m.x0M + halfApertureM)));
  const every = Math.max(1, Math.ceil((b - a + 1) / maxPicks));
  const w = Math.max(1, Math.round(windowNs / dtNs));
  const out: { trace: number; timeNs: number }[] = [];
  const xs = [0];
  for (let tr = a; tr <= b; tr += every) {
    xs[0] = along[tr]! - m.x0M;
    const t = matchTimes(m, xs, separationM)[0]!;
    const c = Math.round((t + timeZeroNs) / dtNs);
    let best = -1;
    let bestA = -1;
    for (let s = Math.max(1, c - w); s <= Math.min(nSamples - 2, c + w); s++) {
      const v = Math.abs(data[tr * nSamples + s]!);
      if (v > bestA) {
        bestA = v;
        best = s;
      }
    }
    if (best < 0 || !(bestA > 0)) continue;
    const y0 = Math.abs(data[tr * nSamples + best - 1]!);
    const y2 = Math.abs(data[tr * nSamples + best + 1]!);
    const den = y0 - 2 * bestA + y2;
    const frac = den < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (y0 - y2)) / den)) : 0;
    const timeNs = (best + frac) * dtNs - timeZeroNs;
    if (timeNs > 0) out.push({ trace: tr * traceStep, timeNs: +timeNs.toFixed(4) });
  }
  return out;
}
