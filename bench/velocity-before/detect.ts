import type { RadarLine } from '../../packages/radar-data/src/index';
import { dominantFrequencyMHz, envelopeTraces } from './envelope';
import { apexDistance, fitHyperbola, hyperbolaTime, type PointFit } from './fit';

/**
 * Automatic diffraction-hyperbola detection on one processed line:
 * 1. background removal (moving median trace) so flat reflections and the direct wave do not dominate;
 * 2. Hilbert envelope, divided by its median across traces at each time (a time-varying noise level);
 * 3. apex candidates: local maxima of that normalised envelope above `candidateThreshold`;
 * 4. per candidate, a scan over velocity (geometric grid from `minVelocityMPerNs` to beyond c) and
 *    apex position scoring the predicted bistatic curve within `apertureAngleDeg` of vertical by the
 *    smaller of its two flanks' medians of the normalised envelope;
 * 5. flank picks (envelope peak within half a period of the predicted curve, trace by trace), a robust
 *    fit (see `fitHyperbola`), re-picking around the fitted curve and a second fit;
 * 6. acceptance: enough picks on both flanks, small residuals, bounded uncertainty.
 */
export interface DetectOptions {
  /** Transmitter-receiver separation, m. @default 0 */
  separationM?: number;
  /** Metres per site CRS unit of the trace positions. @default 1 */
  metresPerUnit?: number;
  /** Centre frequency, MHz, for the pick windows. @default the spectral centroid of the line */
  frequencyMHz?: number;
  /** @default 0.03 */
  minVelocityMPerNs?: number;
  /** Beyond c (0.2998) on purpose, so air events are fitted and v > c can be flagged. @default 0.45 */
  maxVelocityMPerNs?: number;
  /** @default 48 */
  velocitySteps?: number;
  /** Half-aperture angle from vertical of the curve scan and the flank picks, degrees. @default 60 */
  apertureAngleDeg?: number;
  /** Upper bound of the half-aperture, m. @default 4 */
  maxApertureM?: number;
  /** Moving-median background window, m (0: none, Infinity: the whole line). @default 10 */
  backgroundWindowM?: number;
  /** Apex candidates need a normalised envelope above this. @default 5 */
  candidateThreshold?: number;
  /** Flank picks need a normalised envelope above this. @default 3 */
  pickThreshold?: number;
  /** Lowest noise level, as a fraction of the envelope maximum (matters for near noise-free data). @default 3e-3 */
  levelFloor?: number;
  /** Candidates examined per line, strongest first. @default 400 */
  maxCandidates?: number;
  /** @default 8 */
  minPicks?: number;
  /** Picks needed on each side of the apex. @default 3 */
  minPicksPerSide?: number;
  /** Largest accepted weighted RMS residual, in periods of the centre frequency. @default 0.12 */
  maxRmsPeriods?: number;
  /** Largest accepted sigma(v) / v. @default 0.1 */
  maxRelativeUncertainty?: number;
}

export interface DetectedHyperbola extends PointFit {
  /** Nearest trace to the apex. */
  trace: number;
  /** Apex position in the site CRS. */
  x: number;
  y: number;
  /** Picks used (offset along the line from its first trace, m; two-way time after time-zero, ns). */
  offsetM: Float64Array;
  timeNs: Float64Array;
  /** Smaller of the two flanks' medians of the normalised envelope along the fitted curve. */
  score: number;
}

/** Distance along the line from trace 0, m. */
export function alongLine(line: RadarLine, metresPerUnit = 1): Float64Array {
  const d = new Float64Array(line.nTraces);
  for (let i = 1; i < line.nTraces; i++) {
    d[i] = d[i - 1]! + Math.hypot(line.x[i]! - line.x[i - 1]!, line.y[i]! - line.y[i - 1]!) * metresPerUnit;
  }
  return d;
}

/** Position (site CRS) and nearest trace at distance `offsetM` along the line (linear between traces, extrapolated at the ends). */
export function pointAlong(line: RadarLine, along: Float64Array, offsetM: number): { trace: number; x: number; y: number } {
  const n = line.nTraces;
  if (n === 1) return { trace: 0, x: line.x[0]!, y: line.y[0]! };
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (along[mid]! <= offsetM) lo = mid;
    else hi = mid;
  }
  const span = along[hi]! - along[lo]!;
  const f = span > 0 ? (offsetM - along[lo]!) / span : 0;
  const trace = Math.min(n - 1, Math.max(0, Math.round(lo + f)));
  return { trace, x: line.x[lo]! + f * (line.x[hi]! - line.x[lo]!), y: line.y[lo]! + f * (line.y[hi]! - line.y[lo]!) };
}

/** Median of `a` (reordered in place), by quickselect (Hoare), mean of the two middle values for even length. */
export function median(a: Float32Array): number {
  const n = a.length;
  if (n === 0) return Number.NaN;
  const k = n >> 1;
  const hi = select(a, k);
  if (n % 2) return hi;
  let lo = -Infinity;
  for (let i = 0; i < k; i++) if (a[i]! > lo) lo = a[i]!;
  return 0.5 * (lo + hi);
}

function select(a: Float32Array, k: number): number {
  let l = 0;
  let r = a.length - 1;
  while (l < r) {
    const x = a[(l + r) >> 1]!;
    let i = l;
    let j = r;
    while (i <= j) {
      while (a[i]! < x) i++;
      while (a[j]! > x) j--;
      if (i <= j) {
        const t = a[i]!;
        a[i] = a[j]!;
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) r = j;
    else if (k >= i) l = i;
    else break;
  }
  return a[k]!;
}

/**
 * Subtract a background trace: the median over a window of `w` traces, computed at window centres
 * every w/4 traces and interpolated linearly between them. A median, unlike a mean, leaves no negative
 * ghost of a hyperbola in every trace of the window.
 */
export function removeBackground(data: Float32Array, nTraces: number, nSamples: number, w: number, out?: Float32Array): Float32Array {
  const res = out ?? new Float32Array(data.length);
  const win = Math.max(3, Math.min(w, nTraces));
  const step = Math.max(1, Math.floor(win / 4));
  const centres: number[] = [];
  for (let c = 0; c < nTraces; c += step) centres.push(c);
  if (centres[centres.length - 1] !== nTraces - 1) centres.push(nTraces - 1);
  const bg = centres.map((c) => {
    const a = Math.max(0, Math.min(nTraces - win, c - Math.floor(win / 2)));
    const b = Math.min(nTraces, a + win);
    const col = new Float32Array(b - a);
    const trace = new Float32Array(nSamples);
    for (let s = 0; s < nSamples; s++) {
      for (let t = a; t < b; t++) col[t - a] = data[t * nSamples + s]!;
      trace[s] = median(col);
    }
    return trace;
  });
  let k = 0;
  for (let t = 0; t < nTraces; t++) {
    while (k < centres.length - 2 && centres[k + 1]! <= t) k++;
    const c0 = centres[k]!;
    const c1 = centres[Math.min(k + 1, centres.length - 1)]!;
    const f = c1 > c0 ? (t - c0) / (c1 - c0) : 0;
    const b0 = bg[k]!;
    const b1 = bg[Math.min(k + 1, centres.length - 1)]!;
    for (let s = 0; s < nSamples; s++) res[t * nSamples + s] = data[t * nSamples + s]! - (b0[s]! + f * (b1[s]! - b0[s]!));
  }
  return res;
}

/**
 * Noise level per sample: the median of the envelope across traces, smoothed over `smooth` samples
 * either side, and never below `floorFraction` of the envelope's maximum (noise-free data would
 * otherwise divide by zero).
 */
export function envelopeLevel(env: Float32Array, nTraces: number, nSamples: number, smooth: number, floorFraction = 1e-3): Float64Array {
  const level = new Float64Array(nSamples);
  const col = new Float32Array(nTraces);
  let max = 0;
  for (let i = 0; i < env.length; i++) if (env[i]! > max) max = env[i]!;
  for (let s = 0; s < nSamples; s++) {
    for (let t = 0; t < nTraces; t++) col[t] = env[t * nSamples + s]!;
    level[s] = median(col);
  }
  const out = new Float64Array(nSamples);
  const floor = Math.max(max * floorFraction, Number.MIN_VALUE);
  for (let s = 0; s < nSamples; s++) {
    let acc = 0;
    let cnt = 0;
    for (let k = Math.max(0, s - smooth); k <= Math.min(nSamples - 1, s + smooth); k++) {
      acc += level[k]!;
      cnt++;
    }
    out[s] = Math.max(acc / cnt, floor);
  }
  return out;
}

export function detectHyperbolas(line: RadarLine, options: DetectOptions = {}): DetectedHyperbola[] {
  const { nTraces, nSamples, dtNs, timeZeroNs } = line;
  if (nTraces < 8 || nSamples < 8) return [];
  const sep = options.separationM ?? 0;
  const mpu = options.metresPerUnit ?? 1;
  const vMin = options.minVelocityMPerNs ?? 0.03;
  const vMax = options.maxVelocityMPerNs ?? 0.45;
  const nV = options.velocitySteps ?? 48;
  const tanA = Math.tan(((options.apertureAngleDeg ?? 60) * Math.PI) / 180);
  const maxAp = options.maxApertureM ?? 4;
  const bgM = options.backgroundWindowM ?? 10;
  const candTh = options.candidateThreshold ?? 5;
  const pickTh = options.pickThreshold ?? 3;
  const maxCand = options.maxCandidates ?? 400;
  const minPicks = options.minPicks ?? 8;
  const minSide = options.minPicksPerSide ?? 3;
  const maxRmsP = options.maxRmsPeriods ?? 0.12;
  const maxRel = options.maxRelativeUncertainty ?? 0.1;

  const along = alongLine(line, mpu);
  const length = along[nTraces - 1]!;
  if (!(length > 0)) return [];
  const spacing = length / (nTraces - 1);
  const fMHz = options.frequencyMHz ?? dominantFrequencyMHz(line.data, nTraces, nSamples, dtNs);
  const periodNs = Number.isFinite(fMHz) && fMHz > 0 ? 1000 / fMHz : 10 * dtNs;
  const halfPeriodS = Math.max(1, Math.round(periodNs / 2 / dtNs));

  const w = bgM <= 0 ? 0 : Math.round(bgM / spacing);
  const clean = w > 0 ? removeBackground(line.data, nTraces, nSamples, Math.max(w, 3)) : line.data;
  const E = envelopeTraces(clean, nTraces, nSamples);
  const level = envelopeLevel(E, nTraces, nSamples, halfPeriodS, options.levelFloor ?? 3e-3);
  // Normalised envelope: thresholds and scores. Pick times come from E itself, whose peak is not shifted by the level.
  const N = new Float32Array(E.length);
  for (let t = 0; t < nTraces; t++) for (let s = 0; s < nSamples; s++) N[t * nSamples + s] = E[t * nSamples + s]! / level[s]!;
  const at = (t: number, sf: number): number => {
    if (sf < 0 || sf > nSamples - 1) return 0;
    const s0 = Math.floor(sf);
    const f = sf - s0;
    const a = N[t * nSamples + s0]!;
    return f > 0 ? a + f * (N[t * nSamples + s0 + 1]! - a) : a;
  };
  const sampleOf = (tNs: number) => (tNs + timeZeroNs) / dtNs;

  // Apex candidates: local maxima after the direct wave.
  const sStart = Math.max(1, Math.ceil(sampleOf(1.5 * periodNs)));
  // Apexes need room below them for a wavelet and some move-out before the end of the record.
  const sEnd = nSamples - 1 - 4 * halfPeriodS;
  const nbT = 2;
  const apexShift = 2;
  const cands: { t: number; s: number; v: number }[] = [];
  for (let t = 0; t < nTraces; t++) {
    for (let s = sStart; s < sEnd; s++) {
      const v = N[t * nSamples + s]!;
      if (v < candTh) continue;
      let isMax = true;
      for (let dt = -nbT; dt <= nbT && isMax; dt++) {
        const tt = t + dt;
        if (tt < 0 || tt >= nTraces) continue;
        for (let ds = -halfPeriodS; ds <= halfPeriodS; ds++) {
          const ss = s + ds;
          if (ss < 0 || ss >= nSamples || (dt === 0 && ds === 0)) continue;
          const u = N[tt * nSamples + ss]!;
          if (u > v || (u === v && (dt < 0 || (dt === 0 && ds < 0)))) {
            isMax = false;
            break;
          }
        }
      }
      if (isMax) cands.push({ t, s, v });
    }
  }
  cands.sort((a, b) => b.v - a.v);

  const velocities = new Float64Array(nV);
  for (let k = 0; k < nV; k++) velocities[k] = vMin * (vMax / vMin) ** (k / (nV - 1));

  const traceRange = (x0: number, ap: number): [number, number] => {
    let a = 0;
    while (a < nTraces - 1 && along[a]! < x0 - ap) a++;
    let b = nTraces - 1;
    while (b > 0 && along[b]! > x0 + ap) b--;
    return [a, b];
  };
  const apertureOf = (z: number) => Math.min(maxAp, Math.max(5 * spacing, z * tanA));

  // Score of a curve: the smaller of the two flanks' medians of the normalised envelope along it. A
  // median ignores a few crossings of strong straight events (air waves from walls), and taking the
  // weaker flank favours curves that follow both flanks of a real hyperbola.
  const left = new Float32Array(nTraces);
  const right = new Float32Array(nTraces);
  const curveScore = (x0: number, z: number, v: number, ap: number): number => {
    const [a, b] = traceRange(x0, ap);
    const stride = Math.max(1, Math.ceil((b - a + 1) / 120));
    const skip = 1.5 * spacing;
    let nl = 0;
    let nr = 0;
    for (let j = a; j <= b; j += stride) {
      const d = along[j]! - x0;
      if (Math.abs(d) < skip) continue;
      const u = at(j, sampleOf(hyperbolaTime(along[j]!, x0, z, v, sep)));
      if (d < 0) left[nl++] = u;
      else right[nr++] = u;
    }
    if (nl < 2 || nr < 2) return 0;
    return Math.min(median(left.subarray(0, nl)), median(right.subarray(0, nr)));
  };

  const pick = (x0: number, z: number, v: number, ap: number, windowNs: number) => {
    const [a, b] = traceRange(x0, ap);
    const off: number[] = [];
    const tim: number[] = [];
    const win = Math.max(1, Math.round(windowNs / dtNs));
    for (let j = a; j <= b; j++) {
      const sc = Math.round(sampleOf(hyperbolaTime(along[j]!, x0, z, v, sep)));
      let best = -1;
      let bestV = 0;
      for (let s = Math.max(1, sc - win); s <= Math.min(nSamples - 1 - halfPeriodS, sc + win); s++) {
        const o = j * nSamples + s;
        const u = E[o]!;
        if (u > bestV && N[o]! >= pickTh && u >= E[o - 1]! && u >= E[o + 1]!) {
          bestV = u;
          best = s;
        }
      }
      if (best < 0) continue;
      const y0 = E[j * nSamples + best - 1]!;
      const y1 = E[j * nSamples + best]!;
      const y2 = E[j * nSamples + best + 1]!;
      const den = y0 - 2 * y1 + y2;
      const frac = den < 0 ? (0.5 * (y0 - y2)) / den : 0;
      off.push(along[j]!);
      tim.push((best + Math.max(-0.5, Math.min(0.5, frac))) * dtNs - timeZeroNs);
    }
    return { off, tim };
  };

  const accepted: DetectedHyperbola[] = [];
  const nearAccepted = (tr: number, s: number): boolean => {
    const x = along[tr]!;
    const tNs = s * dtNs - timeZeroNs;
    for (const h of accepted) {
      if (Math.abs(hyperbolaTime(x, h.x0M, h.zM, h.velocityMPerNs, sep) - tNs) < periodNs) return true;
    }
    return false;
  };

  /** Picks, fit and acceptance from one start; the accepted fit or null. */
  const tryStart = (start: { x0M: number; t0Ns: number; velocityMPerNs: number }): DetectedHyperbola | null => {
    let fit: PointFit | null = null;
    let picks = { off: [] as number[], tim: [] as number[] };
    let guess = start;
    for (let pass = 0; pass < 3; pass++) {
      const z = apexDistance(guess.t0Ns, guess.velocityMPerNs, sep);
      picks = pick(guess.x0M, z, guess.velocityMPerNs, apertureOf(z), pass === 0 ? periodNs / 2 : periodNs / 3);
      if (picks.off.length < minPicks) return null;
      fit = fitHyperbola(picks.off, picks.tim, { separationM: sep, initial: guess });
      if (!fit) return null;
      guess = { x0M: fit.x0M, t0Ns: fit.t0Ns, velocityMPerNs: fit.velocityMPerNs };
    }
    if (!fit) return null;
    let left = 0;
    let right = 0;
    let maxMoveout = 0;
    // Flank picks count beyond 0.3 z (or two traces) from the apex, so a one-sided fit is not accepted.
    const side = Math.max(2 * spacing, 0.3 * fit.zM);
    for (let i = 0; i < picks.off.length; i++) {
      if (fit.weights[i]! <= 0) continue;
      const d = picks.off[i]! - fit.x0M;
      if (d < -side) left++;
      else if (d > side) right++;
      maxMoveout = Math.max(maxMoveout, picks.tim[i]! - fit.t0Ns);
    }
    if (fit.inliers < minPicks || left < minSide || right < minSide) return null;
    if (!(fit.rmsNs <= maxRmsP * periodNs)) return null;
    if (!(fit.sigmaVelocity <= maxRel * fit.velocityMPerNs)) return null;
    if (maxMoveout < periodNs / 2) return null;
    if (fit.velocityMPerNs < vMin * 0.9 || fit.velocityMPerNs > vMax * 1.1) return null;
    if (fit.x0M < along[0]! - spacing || fit.x0M > length + spacing) return null;
    if (fit.t0Ns <= 0) return null;
    const p = pointAlong(line, along, fit.x0M);
    return {
      ...fit,
      trace: p.trace,
      x: p.x,
      y: p.y,
      offsetM: Float64Array.from(picks.off),
      timeNs: Float64Array.from(picks.tim),
      score: curveScore(fit.x0M, fit.zM, fit.velocityMPerNs, apertureOf(fit.zM)),
    };
  };

  const scoreV = new Float64Array(nV);
  const xV = new Float64Array(nV);
  let examined = 0;
  for (const c of cands) {
    if (examined >= maxCand) break;
    if (nearAccepted(c.t, c.s)) continue;
    examined++;
    // Scan velocity and a few traces of apex position (noise moves the envelope maximum off the apex).
    const t0 = c.s * dtNs - timeZeroNs;
    scoreV.fill(-1);
    for (let dj = -apexShift; dj <= apexShift; dj++) {
      const j = c.t + dj;
      if (j < 0 || j >= nTraces) continue;
      for (let k = 0; k < nV; k++) {
        const v = velocities[k]!;
        const z = apexDistance(t0, v, sep);
        if (!(z > 0)) continue;
        const sc = curveScore(along[j]!, z, v, apertureOf(z));
        if (sc > scoreV[k]!) {
          scoreV[k] = sc;
          xV[k] = along[j]!;
        }
      }
    }
    // Starts: the strongest local maxima of the score over velocity; the accepted fit with the smallest
    // residual wins (a strong straight event crossing one flank can make a wrong curve score best).
    const starts: number[] = [];
    for (let k = 0; k < nV; k++) {
      const u = scoreV[k]!;
      if (!(u > pickTh / 2)) continue;
      if ((k > 0 && scoreV[k - 1]! > u) || (k < nV - 1 && scoreV[k + 1]! >= u)) continue;
      starts.push(k);
    }
    starts.sort((a, b) => scoreV[b]! - scoreV[a]!);
    let best: DetectedHyperbola | null = null;
    for (const k of starts.slice(0, 3)) {
      const h = tryStart({ x0M: xV[k]!, t0Ns: t0, velocityMPerNs: velocities[k]! });
      if (h && (!best || h.rmsNs < best.rmsNs)) best = h;
    }
    if (!best) continue;
    const fit = best;
    const dup = accepted.some((h) => Math.abs(h.x0M - fit.x0M) < Math.max(3 * spacing, 0.2) && Math.abs(h.t0Ns - fit.t0Ns) < periodNs);
    if (dup) continue;
    accepted.push(fit);
  }
  return accepted;
}
