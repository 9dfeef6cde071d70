// Suppression of above-ground (air-wave) diffractions before slicing: migrate at the speed of light so
// that what travelled through the air focuses, mask the focused points where above-ground objects are
// known to be, demigrate the masked energy with the exact inverse of the same f-k step and subtract it.
// The published method: Geophysics 75(6), J43-J50 (2010), "Semiautomated suppression of above-surface
// diffractions in GPR data".
//
// How it shares the work with background removal, and the order: a wall parallel to a line returns a
// flat event (the same time on every trace) that the whole-line mean trace takes out, so background
// removal runs first and this step only sees what is left: diffractions of posts, trees, columns and
// overhead objects, the dipping events of walls and fences crossing the line obliquely and wall ends.
// Flat events are left to background removal even where a focus lies (`airLikeness`: they are the same at
// c and at the soil velocity), including what the mean trace leaves of a parallel wall covering part of
// the line. Migration at the soil velocity runs after this step, on the cleaned line.
import { C_M_PER_NS, nearSurfaceTimeNs } from '@lamina/constants';
import type { RadarLine } from '@lamina/radar-data';
import { medianInPlace } from '@lamina/stats';
import { bistaticResample, dipWeight, dominantPeriodNs, taperTraceEnds, traceSlots } from './fk';
import { hilbertEnvelope, hilbertWorkspace } from './envelope';
import { outputFor, periodNs, withData } from './line-util';
import { stoltKernel } from './stolt';

/**
 * Above-ground objects as flat typed arrays (positions in site CRS units, heights in metres):
 * `points` [x, y, heightM, ...] (posts, trees, columns: height 0, they stand on the ground; an overhead
 * point: its clearance, the air wave travels the slant distance), `segments` [ax, ay, bx, by, heightM, ...]
 * (walls, fences, building edges at 0; overhead cables and beams at their clearance), and `apexes`
 * [trace, t0Ns, ...]: apexes of hyperbolas fitted on this line at the air velocity (two-way time after
 * time-zero, bistatic).
 */
export interface AirObjects {
  points: Float64Array;
  segments: Float64Array;
  apexes?: Float64Array;
  /**
   * Radius of each point object, m (one per point; posts, trees, columns): the plan gives a centre, the
   * air wave returns from the face nearest the antenna, up to a radius earlier. The mask covers the foci
   * of every face distance from r - R to r. @default 0 for every point
   */
  pointRadiiM?: Float64Array;
}

export interface AirEventOptions {
  /** Antenna centre frequency, MHz: sets the mask's size (below). */
  frequencyMHz: number;
  /** Antenna separation along the line, m (bistatic times are mapped to zero offset and back). @default 0 */
  separationM?: number;
  /** Metres per CRS unit of the positions. @default 1 */
  metresPerUnit?: number;
  /**
   * Dip limit of the f-k step at c. The air-wave hyperbola of an object near the line is steep almost
   * everywhere (at r = 0.25 m it passes 80 degrees 1.4 m from its apex), and what is steeper than the
   * limit stays in the data; the exact inverse undoes the forward step up to it. @default 88
   */
  maxAngleDeg?: number;
  /** Fraction of the angle range tapered by a cosine. @default 0.05 */
  taper?: number;
  /**
   * Half-height of the mask around a focus, ns: one period of the antenna frequency (a migrated wavelet
   * lasts about two periods; common practice, no source). @default 1000 / frequencyMHz
   */
  timeHalfWidthNs?: number;
  /**
   * Half-width of the mask along the line, m: half an air wavelength c / (2 f) (the focus of a migrated
   * diffraction is about a quarter wavelength wide; the rest covers plan positions off by a decimetre or
   * two). @default C_M_PER_NS * 1000 / frequencyMHz / 2
   */
  lateralHalfWidthM?: number;
  /** Soil velocity, m/ns: what focuses better at it than at c is kept (see `airEventKernel`). @default undefined */
  soilVelocityMPerNs?: number;
  /**
   * Take the part of each object's air wave steeper than the f-k step's dip limit out along its own
   * moveout first (`subtractSteepAirEvents`). @default true
   */
  steepMoveout?: boolean;
  /**
   * Half-width along the line of the running median the steep part is estimated by, m: two air
   * wavelengths (see `subtractSteepAirEvents`). @default 2 * C_M_PER_NS * 1000 / frequencyMHz
   */
  moveoutHalfWidthM?: number;
}

export interface AirEventResult {
  line: RadarLine;
  /** Share of the line's energy the step took out. */
  removedShare: number;
  /** Foci the mask was built from (object points that project onto the line, and apexes). */
  foci: number;
  /** Share of the image samples under the mask (weight > 0). */
  maskedShare: number;
  /** Objects whose air wave had a part steeper than the f-k step's dip limit, taken out along its moveout (`subtractSteepAirEvents`). */
  steepEvents: number;
  /** Traces of those parts, summed over the objects. */
  steepTraces: number;
}

/** The resolved settings of `AirEventOptions` (defaults written once, here). */
function settings(o: AirEventOptions) {
  const T = periodNs(o.frequencyMHz);
  return {
    separationM: o.separationM ?? 0,
    metresPerUnit: o.metresPerUnit ?? 1,
    maxAngleDeg: o.maxAngleDeg ?? 88,
    taper: o.taper ?? 0.05,
    timeHalfWidthNs: o.timeHalfWidthNs ?? T,
    lateralHalfWidthM: o.lateralHalfWidthM ?? (C_M_PER_NS * T) / 2,
    steepMoveout: o.steepMoveout ?? true,
    moveoutHalfWidthM: o.moveoutHalfWidthM ?? 2 * C_M_PER_NS * T,
  };
}

/** Cosine edge: 1 up to `full`, falling to 0 at 1.5 `full`. */
function edge(d: number, full: number): number {
  const a = Math.abs(d);
  if (a <= full) return 1;
  if (a >= 1.5 * full) return 0;
  return 0.5 * (1 + Math.cos((Math.PI * (a - full)) / (0.5 * full)));
}

/**
 * The mask (weights 0..1, trace-major like the line) on the image of a migration at c with vertical
 * two-way time on the time axis (sample k at k dt - timeZeroNs). An object point P at horizontal distance
 * r from the line and height h above the antenna focuses under the trace nearest to it at tau = 2
 * sqrt(r^2 + h^2) / c: each point of a wall seen along a line is a diffraction of its own, at its
 * along-line position and perpendicular distance, so the points of every segment (sampled at a quarter
 * of the mask's width) map the wall's image. Points beyond either end of the line focus outside the
 * record and are left out. An air-velocity fit's apex (bistatic t0) marks tau = sqrt(t0^2 - (s / c)^2).
 */
export function airEventMask(line: RadarLine, objects: AirObjects, options: AirEventOptions, out?: Float32Array): { mask: Float32Array; foci: number } {
  const s = settings(options);
  const { nTraces: nt, nSamples: ns, dtNs: dt, timeZeroNs: tz, x, y } = line;
  const mask = out ?? new Float32Array(nt * ns);
  mask.fill(0);
  if (nt < 2) return { mask, foci: 0 };
  const mpu = s.metresPerUnit;
  const { spacingM } = traceSlots(line, mpu);
  const aTr = s.lateralHalfWidthM / spacingM;
  const bS = s.timeHalfWidthNs / dt;
  /** Stamps the mask around a focus; false when the focus lies outside the record. */
  const stamp = (i0: number, tauNs: number): boolean => {
    const k0 = (tauNs + tz) / dt;
    const iLo = Math.max(0, Math.ceil(i0 - 1.5 * aTr));
    const iHi = Math.min(nt - 1, Math.floor(i0 + 1.5 * aTr));
    const kLo = Math.max(0, Math.ceil(k0 - 1.5 * bS));
    const kHi = Math.min(ns - 1, Math.floor(k0 + 1.5 * bS));
    if (kLo > kHi || iLo > iHi) return false;
    for (let i = iLo; i <= iHi; i++) {
      const wi = edge(i - i0, aTr);
      if (wi === 0) continue;
      for (let k = kLo; k <= kHi; k++) {
        const w = wi * edge(k - k0, bS);
        const q = i * ns + k;
        if (w > (mask[q] as number)) mask[q] = w;
      }
    }
    return true;
  };
  let foci = 0;
  const pointFocus = (px: number, py: number, h: number, radiusM = 0): void => {
    let best = Infinity;
    let ib = 0;
    for (let i = 0; i < nt; i++) {
      const d = ((x[i] as number) - px) ** 2 + ((y[i] as number) - py) ** 2;
      if (d < best) {
        best = d;
        ib = i;
      }
    }
    // beyond an end: the projection on the end step falls outside the line
    if (ib === 0 || ib === nt - 1) {
      const j = ib === 0 ? 1 : nt - 2;
      const ex = (x[ib] as number) - (x[j] as number);
      const ey = (y[ib] as number) - (y[j] as number);
      const len = Math.hypot(ex, ey);
      if (len > 0 && ((px - (x[ib] as number)) * ex + (py - (y[ib] as number)) * ey) / len > 0.5 * len) return;
    }
    const r = Math.sqrt(best) * mpu;
    const tFar = (2 * Math.hypot(r, h)) / C_M_PER_NS;
    const tNear = (2 * Math.hypot(Math.max(0, r - radiusM), h)) / C_M_PER_NS;
    // faces from r - R to r, stamped at most half a mask height apart
    const n = Math.ceil((tFar - tNear) / (0.5 * s.timeHalfWidthNs));
    let any = false;
    for (let j = 0; j <= n; j++) any = stamp(ib, n > 0 ? tNear + ((tFar - tNear) * j) / n : tFar) || any;
    if (any) foci++;
  };
  const p = objects.points;
  const radii = objects.pointRadiiM;
  for (let q = 0; q + 2 < p.length; q += 3) pointFocus(p[q] as number, p[q + 1] as number, p[q + 2] as number, radii ? (radii[q / 3] as number) : 0);
  const sg = objects.segments;
  const step = Math.max(1e-6, 0.25 * s.lateralHalfWidthM) / mpu;
  for (let q = 0; q + 4 < sg.length; q += 5) {
    const ax = sg[q] as number, ay = sg[q + 1] as number, bx = sg[q + 2] as number, by = sg[q + 3] as number;
    const h = sg[q + 4] as number;
    const n = Math.max(1, Math.ceil(Math.hypot(bx - ax, by - ay) / step));
    for (let j = 0; j <= n; j++) pointFocus(ax + ((bx - ax) * j) / n, ay + ((by - ay) * j) / n, h);
  }
  const ap = objects.apexes ?? new Float64Array(0);
  const direct = s.separationM / C_M_PER_NS;
  for (let q = 0; q + 1 < ap.length; q += 2) {
    const i0 = ap[q] as number;
    const t0 = ap[q + 1] as number;
    if (!(i0 >= 0 && i0 <= nt - 1) || !(t0 > direct)) continue;
    if (stamp(i0, Math.sqrt(t0 * t0 - direct * direct))) foci++;
  }
  return { mask, foci };
}

/** Options of `airEventKernel`. */
export interface AirEventKernelOptions {
  /** @default 88 */
  maxAngleDeg?: number;
  /** @default 0.05 */
  taper?: number;
  /**
   * Soil velocity, m/ns: the mask is weighed by `airLikeness` of the envelope peaks of the images at c and
   * at this velocity around each sample, so a buried diffractor whose apex falls on an air focus keeps its
   * apex, and flat events are left alone. @default undefined (the mask as it is)
   */
  soilVelocityMPerNs?: number;
  /** Half-width (traces) of the neighbourhood the two images' envelope peaks are compared over. @default 1 */
  lateralHalfWidthTraces?: number;
  /** Half-height (samples) of that neighbourhood. @default 1 */
  timeHalfWidthSamples?: number;
  /** Band kept by the transforms (`band`, fk.ts). @default 1e-6 */
  energyTolerance?: number;
  /**
   * Image time (vertical two-way, after time-zero, ns) up to which the mask stands as the plan and the fits
   * put it, without the soil-focus test: an object whose air-wave apex lies this close to time-zero (a post
   * or column among the lines) focuses alike at every velocity (nothing moves at t = 0), so the comparison
   * cannot tell it, and a buried object there lies in the near-surface zone, which gives no targets.
   * `removeAirEvents` sets it to the zone's end (`nearSurfaceTimeNs`). @default 0
   */
  planCarriesNs?: number;
}

/**
 * How much a focus at c is an air-wave one, from the envelope peaks of the image at c and at the soil
 * velocity around it: a diffraction through the air focuses at c and smears at v (a point air diffractor
 * gives about 5 times the peak at c), a soil diffraction the other way round, and a flat event (a
 * reflector along the line, a pipe parallel to it) is the same in both (kx = 0 does not move). 0 up to a
 * ratio of 1.25, 1 from 2, linear in the logarithm between: flat events are left to background removal,
 * and a cut in them would come back from the inverse as diffractions at c.
 */
function airLikeness(peakC: number, peakSoil: number): number {
  if (!(peakSoil > 0)) return 1;
  const r = peakC / peakSoil;
  if (r >= AIR_RATIO_FULL) return 1;
  if (r <= AIR_RATIO_NONE) return 0;
  return Math.log(r / AIR_RATIO_NONE) / Math.log(AIR_RATIO_FULL / AIR_RATIO_NONE);
}
const AIR_RATIO_NONE = 1.25;
const AIR_RATIO_FULL = 2;

/** Hilbert envelope of every trace of a trace-major section. */
function envelopes(data: Float32Array, nTraces: number, nSamples: number): Float32Array {
  const ws = hilbertWorkspace(nSamples);
  const e = new Float32Array(data.length);
  for (let i = 0; i < nTraces; i++) hilbertEnvelope(data.subarray(i * nSamples, (i + 1) * nSamples), { workspace: ws }, e.subarray(i * nSamples, (i + 1) * nSamples));
  return e;
}

/**
 * The f-k pair at c on a zero-offset line (trace-major, sample k at k dt - timeZeroNs of vertical two-way
 * time): Stolt migration at c, the image times `mask` (weighed down where the soil-velocity image is the
 * stronger one), Stolt modelling of the masked image (the exact inverse of the same step inside its dip
 * limit; no half-integral either way, so the pair is the plain wave-equation one). Returns the masked
 * energy in data space, zero-offset time.
 */
export function airEventKernel(
  zo: ArrayLike<number>,
  nTraces: number,
  nSamples: number,
  dtNs: number,
  dxM: number,
  timeZeroNs: number,
  mask: ArrayLike<number>,
  options: AirEventKernelOptions = {},
  out: Float32Array = new Float32Array(nTraces * nSamples),
): Float32Array {
  const kernel = { maxAngleDeg: options.maxAngleDeg ?? 88, taper: options.taper ?? 0.05, apertureM: Infinity, energyTolerance: options.energyTolerance ?? 1e-6, halfIntegral: false };
  const img = stoltKernel(zo, nTraces, nSamples, dtNs, dxM, timeZeroNs, C_M_PER_NS, { ...kernel, inverse: false });
  const w = Float32Array.from(mask);
  const v = options.soilVelocityMPerNs;
  if (v !== undefined && v > 0 && v < C_M_PER_NS) {
    const soil = stoltKernel(zo, nTraces, nSamples, dtNs, dxM, timeZeroNs, v, { ...kernel, inverse: false });
    const ec = envelopes(img, nTraces, nSamples);
    const es = envelopes(soil, nTraces, nSamples);
    // Compared over a neighbourhood: a soil diffraction migrated at c is a smile whose flat bottom is
    // wider than its focus at v, so sample by sample the smile's shoulders would pass for air foci.
    const ri = Math.max(1, Math.round(1.5 * (options.lateralHalfWidthTraces ?? 1)));
    const rk = Math.max(1, Math.round(1.5 * (options.timeHalfWidthSamples ?? 1)));
    const k0 = Math.max(0, Math.floor((timeZeroNs + (options.planCarriesNs ?? 0)) / dtNs) + 1);
    for (let i = 0; i < nTraces; i++) {
      for (let k = k0; k < nSamples; k++) {
        const q = i * nSamples + k;
        if (!((w[q] as number) > 0)) continue;
        let mc = 0;
        let ms = 0;
        for (let j = Math.max(0, i - ri); j <= Math.min(nTraces - 1, i + ri); j++) {
          for (let m = Math.max(0, k - rk); m <= Math.min(nSamples - 1, k + rk); m++) {
            const c = ec[j * nSamples + m] as number;
            const s = es[j * nSamples + m] as number;
            if (c > mc) mc = c;
            if (s > ms) ms = s;
          }
        }
        w[q] = (w[q] as number) * airLikeness(mc, ms);
      }
    }
  }
  for (let q = 0; q < img.length; q++) img[q] = (img[q] as number) * (w[q] as number);
  return stoltKernel(img, nTraces, nSamples, dtNs, dxM, timeZeroNs, C_M_PER_NS, { ...kernel, inverse: true }, out);
}

/** Result of `subtractSteepAirEvents`. */
export interface SteepAirResult {
  line: RadarLine;
  /** Objects (points, segments) whose air wave had a part steeper than the f-k step's dip limit on this line. */
  events: number;
  /** Trace-object pairs on that part (how many traces were cleaned, summed over the objects). */
  traces: number;
}

/**
 * Horizontal distance (m) from every trace to a point (a = b) or to a segment (its nearest point: the
 * specular point of a wall's plane, an end beyond it).
 */
function planDistances(line: RadarLine, ax: number, ay: number, bx: number, by: number, mpu: number, out: Float64Array): Float64Array {
  const dx = bx - ax, dy = by - ay;
  const l2 = dx * dx + dy * dy;
  for (let i = 0; i < line.nTraces; i++) {
    const px = (line.x[i] as number) - ax, py = (line.y[i] as number) - ay;
    let u = l2 > 0 ? (px * dx + py * dy) / l2 : 0;
    u = u < 0 ? 0 : u > 1 ? 1 : u;
    out[i] = Math.hypot(px - u * dx, py - u * dy) * mpu;
  }
  return out;
}

/** Linear interpolation of `a` (from `off`, `n` samples) at fractional index `k`; 0 outside. */
function lerp(a: ArrayLike<number>, off: number, n: number, k: number): number {
  if (!(k >= 0 && k <= n - 1)) return 0;
  const k0 = Math.floor(k);
  const f = k - k0;
  const v0 = a[off + k0] as number;
  return f > 0 ? v0 + f * ((a[off + k0 + 1] as number) - v0) : v0;
}

/**
 * The part of an above-ground object's air wave that the f-k step at c cannot take (steeper than its dip
 * limit), taken out along the object's own moveout. The air wave of an object at slant distance D(s) from
 * the antenna arrives at t(s) = 2 sqrt(D^2 + (separation / 2)^2) / c (bistatic, after time-zero); its dip
 * in the line is sin(theta) = dD/ds, which reaches 1 for a wall straight ahead of the line's end and for
 * the flanks of a post the line passes close to (2 / c exactly: what migration at c maps to 90 degrees).
 * Each trace of that part is weighed by 1 - the f-k step's own dip weight (`dipWeight` with the step's
 * `maxAngleDeg` and `taper`), so the two steps share the dip range without overlap. On those traces the
 * data are read along the moveout (one period before to 1.5 after, cosine-edged), the event is estimated
 * by the running median over `moveoutHalfWidthM` of traces read the same way, and subtracted. An air wave
 * is the same event on all of them; a buried object's reflection crosses the moveout over about half an
 * air wavelength (a flat event against a dip of 2 / c) to an air wavelength (the time window), under a
 * quarter of a median window two wavelengths wide either side, so the median leaves it out. The moveout
 * is first shifted by the constant (within half a period, and for a point object up to 2 R / c earlier,
 * R its `pointRadiiM`: the air wave returns from its nearest face) that makes the mean along it strongest: a
 * time-zero picked a fraction of a period off, or a plan position a few centimetres off. Samples before
 * the direct wave (separation / c) are not touched. `out` may be `line.data`.
 */
export function subtractSteepAirEvents(line: RadarLine, objects: AirObjects, options: AirEventOptions, out?: Float32Array): SteepAirResult {
  const st = settings(options);
  const { src, dst } = outputFor(line, out);
  if (dst !== src) dst.set(src);
  const { nTraces: nt, nSamples: ns, dtNs: dt, timeZeroNs: tz } = line;
  if (nt < 3) return { line: withData(line, dst), events: 0, traces: 0 };
  const mpu = st.metresPerUnit;
  const T = st.timeHalfWidthNs;
  const sep = st.separationM;
  const direct = sep / C_M_PER_NS;
  const { spacingM } = traceSlots(line, mpu);
  const M = Math.max(1, Math.round(st.moveoutHalfWidthM / spacingM));
  const K = Math.max(1, Math.round(st.lateralHalfWidthM / spacingM));
  const J = Math.ceil((1.5 * T) / dt);
  const nj = 2 * J + 1;
  const d = new Float64Array(nt);
  const t = new Float64Array(nt);
  const w = new Float64Array(nt);
  const panel = new Float64Array(nt * nj);
  const med = new Float64Array(nj);
  const scratch = new Float64Array(2 * M + 1);
  let events = 0;
  let traces = 0;
  const taken: Float64Array[] = [];
  // the moveout may shift by up to half a period (see below), and a point object's by its radius earlier
  const sMax = 0.5 * T;
  const one = (ax: number, ay: number, bx: number, by: number, h: number, radiusM = 0): void => {
    planDistances(line, ax, ay, bx, by, mpu, d);
    for (let i = 0; i < nt; i++) {
      const D = Math.hypot(d[i] as number, h);
      d[i] = D;
      t[i] = (2 * Math.hypot(D, sep / 2)) / C_M_PER_NS;
    }
    let any = 0;
    for (let i = 0; i < nt; i++) {
      // the dip over the chord of half a wavelength either side (the f-k step's own scale): positions
      // carry centimetres of jitter, which over one trace step (or summed along the track) would take a
      // wall straight ahead (sin = 1) under the dip limit
      const a = Math.max(0, i - K), b = Math.min(nt - 1, i + K);
      const ds = Math.hypot((line.x[b] as number) - (line.x[a] as number), (line.y[b] as number) - (line.y[a] as number)) * mpu;
      const sinT = ds > 0 ? Math.min(1, Math.abs((d[b] as number) - (d[a] as number)) / ds) : 0;
      const k0 = ((t[i] as number) + tz) / dt;
      w[i] = k0 + J < 0 || k0 - J > ns - 1 ? 0 : 1 - dipWeight(sinT, st.maxAngleDeg, st.taper);
      if ((w[i] as number) > 1e-6) any++;
    }
    if (any === 0) return;
    // an event already taken: the moveout lies within the time half-width of one subtracted before on
    // most of its steep traces (a fence's posts in its panel's plane, straight ahead of the line)
    let same = 0;
    for (const prev of taken) {
      same = 0;
      for (let i = 0; i < nt; i++) if ((w[i] as number) > 1e-6 && (prev[i] as number) > 1e-6 && Math.abs((prev[i] as number) - (t[i] as number)) <= 0.5 * T) same++;
      if (same > 0.5 * any) return;
    }
    const mark = new Float64Array(nt);
    for (let i = 0; i < nt; i++) mark[i] = (w[i] as number) > 1e-6 ? (t[i] as number) : 0;
    taken.push(mark);
    // the shift that makes the mean along the moveout (over the steep traces) strongest
    let best = 0;
    let bestE = -1;
    for (let sh = -sMax - (2 * radiusM) / C_M_PER_NS; sh <= sMax + 1e-9; sh += 0.5 * dt) {
      let e = 0;
      for (let j = 0; j < nj; j++) {
        let m = 0;
        for (let i = 0; i < nt; i++) {
          if (!((w[i] as number) > 1e-6)) continue;
          m += lerp(dst, i * ns, ns, ((t[i] as number) + sh + tz) / dt + j - J);
        }
        e += m * m;
      }
      if (e > bestE) {
        bestE = e;
        best = sh;
      }
    }
    for (let i = 0; i < nt; i++) {
      const k0 = ((t[i] as number) + best + tz) / dt;
      for (let j = 0; j < nj; j++) panel[i * nj + j] = lerp(dst, i * ns, ns, k0 + j - J);
    }
    events++;
    for (let i = 0; i < nt; i++) {
      const wi = w[i] as number;
      if (!(wi > 1e-6)) continue;
      const lo = Math.max(0, i - M), hi = Math.min(nt - 1, i + M);
      let stackE = 0;
      let traceE = 0;
      for (let j = 0; j < nj; j++) {
        let n = 0;
        let sum = 0;
        for (let q = lo; q <= hi; q++) {
          const a = panel[q * nj + j] as number;
          scratch[n++] = a;
          sum += a;
          traceE += a * a;
        }
        stackE += (sum * sum) / n;
        med[j] = medianInPlace(scratch.subarray(0, n));
      }
      // semblance along the moveout over the median's window: the share of the energy there that is the
      // same on every trace. Full weight when the air wave carries at least half of it, none under a
      // quarter: a moveout that holds no air wave (an object the antenna does not see) holds what crosses
      // it, and its median would be a piece of that
      const semblance = traceE > 0 ? stackE / traceE : 0;
      const gate = Math.min(1, Math.max(0, (semblance - 0.25) / 0.25));
      if (gate === 0) continue;
      traces++;
      // the median's share in this trace, least squares within [0, 1]: where the trace does not hold the
      // event (or holds it weaker), less is taken out
      let dm = 0;
      let mm = 0;
      for (let j = 0; j < nj; j++) {
        const e = edge((j - J) * dt, T);
        dm += e * (panel[i * nj + j] as number) * (med[j] as number);
        mm += e * (med[j] as number) ** 2;
      }
      const alpha = gate * (mm > 0 ? Math.min(1, Math.max(0, dm / mm)) : 0);
      const tc = (t[i] as number) + best;
      const kLo = Math.max(0, Math.ceil((tc + tz) / dt - J)), kHi = Math.min(ns - 1, Math.floor((tc + tz) / dt + J));
      for (let k = kLo; k <= kHi; k++) {
        const tau = k * dt - tz - tc;
        if (k * dt - tz < direct) continue;
        const e = edge(tau, T);
        if (e === 0) continue;
        dst[i * ns + k] = (dst[i * ns + k] as number) - alpha * wi * e * lerp(med, 0, nj, tau / dt + J);
      }
    }
  };
  // walls and fence panels first: their plane reflections are the strongest
  const sg = objects.segments;
  for (let q = 0; q + 4 < sg.length; q += 5) one(sg[q] as number, sg[q + 1] as number, sg[q + 2] as number, sg[q + 3] as number, sg[q + 4] as number);
  const p = objects.points;
  const radii = objects.pointRadiiM;
  for (let q = 0; q + 2 < p.length; q += 3) one(p[q] as number, p[q + 1] as number, p[q] as number, p[q + 1] as number, p[q + 2] as number, radii ? (radii[q / 3] as number) : 0);
  return { line: withData(line, dst), events, traces };
}

/**
 * Takes air-wave events out of a line: bistatic to zero-offset time at c, the record's end tapered
 * (as the migrations do), `airEventKernel` with `airEventMask`, back to bistatic time, subtracted from
 * the line. What focuses elsewhere at c, and everything that does not focus at c (what travelled in
 * the soil), is left as it was; samples before the direct wave are untouched. `out` may be `line.data`.
 */
export function removeAirEvents(line: RadarLine, objects: AirObjects, options: AirEventOptions, out?: Float32Array): AirEventResult {
  const s = settings(options);
  const { nTraces: n0, nSamples: ns, dtNs: dt, timeZeroNs: tz } = line;
  const { src, dst } = outputFor(line, out);
  // the steep part first, along each object's moveout; the f-k step takes what is left
  const steep = s.steepMoveout ? subtractSteepAirEvents(line, objects, options, new Float32Array(src.length)) : undefined;
  const from = steep ? steep.line.data : src;
  const steepOf = { steepEvents: steep?.events ?? 0, steepTraces: steep?.traces ?? 0 };
  // Objects beyond an end focus outside the record: the image is made on the line extended by empty
  // traces far enough to hold their foci (their hyperbolas' flanks are in the record).
  const ext = extension(line, objects, s.metresPerUnit, s.lateralHalfWidthM);
  const nt = n0 + ext.before + ext.after;
  const { mask, foci } = airEventMask({ ...line, nTraces: nt, x: ext.x, y: ext.y, data: new Float32Array(0) }, shiftApexes(objects, ext.before), options);
  let masked = 0;
  for (let q = 0; q < mask.length; q++) if ((mask[q] as number) > 0) masked++;
  let back: Float32Array | undefined;
  if (masked > 0) {
    const air = [{ topM: 0, velocityMPerNs: C_M_PER_NS }];
    const zo = new Float64Array(nt * ns);
    bistaticResample(from, n0, ns, dt, tz, air, s.separationM, true, zo.subarray(ext.before * ns, (ext.before + n0) * ns));
    taperTraceEnds(zo, nt, ns, dt, dominantPeriodNs(zo, nt, ns, dt));
    const { spacingM } = traceSlots(line, s.metresPerUnit);
    const v = options.soilVelocityMPerNs;
    const soil = v !== undefined ? { soilVelocityMPerNs: v, planCarriesNs: nearSurfaceTimeNs(options.frequencyMHz, s.separationM, v) } : {};
    const part = airEventKernel(zo, nt, ns, dt, spacingM, tz, mask, { maxAngleDeg: s.maxAngleDeg, taper: s.taper, ...soil, lateralHalfWidthTraces: s.lateralHalfWidthM / spacingM, timeHalfWidthSamples: s.timeHalfWidthNs / dt });
    back = new Float32Array(n0 * ns);
    bistaticResample(part.subarray(ext.before * ns, (ext.before + n0) * ns), n0, ns, dt, tz, air, s.separationM, false, back);
  }
  let eIn = 0;
  let eOut = 0;
  for (let q = 0; q < dst.length; q++) {
    const a = src[q] as number;
    const b = (from[q] as number) - (back ? (back[q] as number) : 0);
    dst[q] = b;
    eIn += a * a;
    eOut += (a - b) * (a - b);
  }
  return { line: withData(line, dst), removedShare: eIn > 0 ? eOut / eIn : 0, foci, maskedShare: masked / mask.length, ...steepOf };
}

/** Apexes shifted by `by` traces (onto the extended line). */
function shiftApexes(o: AirObjects, by: number): AirObjects {
  if (!o.apexes || by === 0) return o;
  const a = Float64Array.from(o.apexes);
  for (let q = 0; q < a.length; q += 2) a[q] = (a[q] as number) + by;
  return { ...o, apexes: a };
}

/**
 * Trace positions of the line extended at each end along its end direction (at its mean spacing) by as
 * many traces as the farthest object beyond that end needs (its distance past the end plus the mask's
 * reach), at most the line's own length.
 */
function extension(line: RadarLine, o: AirObjects, mpu: number, lateralM: number): { x: Float64Array; y: Float64Array; before: number; after: number } {
  const { nTraces: n, x, y } = line;
  if (n < 2) return { x, y, before: 0, after: 0 };
  const { spacingM } = traceSlots(line, mpu);
  const dir = (from: number, to: number): [number, number] => {
    const dx = (x[to] as number) - (x[from] as number);
    const dy = (y[to] as number) - (y[from] as number);
    const l = Math.hypot(dx, dy);
    return l > 0 ? [dx / l, dy / l] : [0, 0];
  };
  const k = Math.min(n - 1, 10);
  const u0 = dir(k, 0);
  const u1 = dir(n - 1 - k, n - 1);
  let b0 = 0;
  let b1 = 0;
  const see = (px: number, py: number) => {
    b0 = Math.max(b0, ((px - (x[0] as number)) * u0[0] + (py - (y[0] as number)) * u0[1]) * mpu);
    b1 = Math.max(b1, ((px - (x[n - 1] as number)) * u1[0] + (py - (y[n - 1] as number)) * u1[1]) * mpu);
  };
  for (let q = 0; q + 2 < o.points.length; q += 3) see(o.points[q] as number, o.points[q + 1] as number);
  for (let q = 0; q + 4 < o.segments.length; q += 5) {
    see(o.segments[q] as number, o.segments[q + 1] as number);
    see(o.segments[q + 2] as number, o.segments[q + 3] as number);
  }
  const traces = (m: number) => (m > 0 ? Math.min(n, Math.ceil((m + 1.5 * lateralM) / spacingM)) : 0);
  const before = traces(b0);
  const after = traces(b1);
  if (before + after === 0) return { x, y, before: 0, after: 0 };
  const ex = new Float64Array(n + before + after);
  const ey = new Float64Array(n + before + after);
  const step = spacingM / mpu;
  for (let j = 0; j < before; j++) {
    ex[j] = (x[0] as number) + (before - j) * step * u0[0];
    ey[j] = (y[0] as number) + (before - j) * step * u0[1];
  }
  ex.set(x, before);
  ey.set(y, before);
  for (let j = 1; j <= after; j++) {
    ex[before + n - 1 + j] = (x[n - 1] as number) + j * step * u1[0];
    ey[before + n - 1 + j] = (y[n - 1] as number) + j * step * u1[1];
  }
  return { x: ex, y: ey, before, after };
}
