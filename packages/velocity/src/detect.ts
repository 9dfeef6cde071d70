import { backgroundRemoval, envelope, spectralCentroidMHz } from '@lamina/processing';
import type { RadarLine } from '@lamina/radar-data';
import { medianInPlace as median, selectInPlace } from '@lamina/stats';
import { alongLine, pointAlong } from './along';
import { envelopeLevel } from './noise-level';
import { apexDistance, fitHyperbola, hyperbolaTime, linearisedFit, type PointFit } from './fit';
import { kernelApexCandidates, kernelNormalised, kernelScan } from './detect-wasm';
import { curveTools, type ScanLine } from './scan';

/**
 * Automatic diffraction-hyperbola detection on one processed line:
 * 1. background removal (`backgroundRemoval` of @lamina/processing, a moving median over
 *    `backgroundWindowM`) so flat reflections and the direct wave do not dominate;
 * 2. Hilbert envelope (`envelope` of @lamina/processing), divided by its median across traces at each
 *    time (a time-varying noise level);
 * 3. apex candidates (the cheap pre-scan): local maxima of that normalised envelope above
 *    `candidateThreshold`, strongest first, skipping those on an already accepted curve;
 * 4. per candidate, a scan over velocity (geometric grid from `minVelocityMPerNs` to beyond c) and
 *    apex position scoring the predicted bistatic curve within `apertureAngleDeg` of vertical by the
 *    smaller of its two flanks' medians of the normalised envelope; hopeless candidates (no curve
 *    scoring above half the pick threshold on both flanks) stop here;
 * 5. flank picks (envelope peak within half a period of the predicted curve, trace by trace), the
 *    linearised fit t^2 = a + b x + c x^2 of those picks as a check of the scan's start, a point fit
 *    polished by LM (see `fitHyperbola`), re-picking around it; candidates whose picks miss a flank or
 *    whose residuals are far beyond the limit stop here; then two rounds of re-picking and the fit with
 *    the target's radius;
 * 6. acceptance: the picks follow the event on both flanks (enough picks, coverage of each flank's
 *    aperture, each flank's own residual, comparable flank amplitudes), small residuals, bounded
 *    uncertainty.
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
  /**
   * Moving-median background window, m (0: none, Infinity: the whole line's mean trace). A median, unlike
   * a mean, leaves no ghost of a hyperbola in the other traces of the window. @default 10
   */
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
  /**
   * Share of the traces of the inner half of each flank (beyond the apex zone, half-way to the aperture,
   * within the line) that must hold a retained pick: picks that follow the event, not a few lucky noise
   * peaks. @default 0.5
   */
  minFlankCoverage?: number;
  /**
   * Smallest ratio of the weaker flank's median pick amplitude to the stronger's (a diffraction is
   * near symmetric; a much stronger flank is another event crossing it). @default 0.25
   */
  minFlankBalance?: number;
  /** Largest accepted weighted RMS residual, overall and on each flank, in periods of the centre frequency. @default 0.12 */
  maxRmsPeriods?: number;
  /** Largest accepted sigma(v) / v. @default 0.1 */
  maxRelativeUncertainty?: number;
  /** Fit the target radius in the final fit (`fitHyperbola`'s `radius`). @default 'fit' */
  radius?: 'fit' | 'point';
  /**
   * Reject echoes: a fit whose picks, moved up by one constant delay of at least `echoMinDelayPeriods`
   * periods (down to time-zero), land on a stronger copy of the same curve (on three quarters of each
   * flank's picks the normalised envelope is larger there) repeats an object above it: the
   * ringing of a metal pipe, the far wall of an air-filled one, a multiple near its apex. A delayed copy
   * t(x) + T is no hyperbola of the soil's velocity (apex curvature (2 / v)^2 / (t0 + T), flank slopes
   * 2 / v): its fit reads another velocity, faster or slower, and biases the site velocity. @default true
   */
  rejectEchoes?: boolean;
  /** Shortest delay of a copy above, in periods of the centre frequency (beyond the wavelet's own envelope). @default 1 */
  echoMinDelayPeriods?: number;
  /**
   * Earliest apex, in periods of the centre frequency after time-zero: the direct and ground waves
   * (about one pulse) and their residue after background removal make apex-like maxima before it. @default 1.5
   */
  earliestApexPeriods?: number;
  /**
   * Also examine apexes from this many periods after time-zero up to `earliestApexPeriods`, after all
   * later candidates, and return their accepted fits with `early: true`: a fit there may be direct-wave
   * residue, so a site takes them only when nothing later fits (`siteVelocityModel`). Off when unset.
   */
  earlyApexPeriods?: number;
  /** Examine the early window only when this holds for the fits of the later apexes. @default always */
  earlyApexIf?: (late: DetectedHyperbola[]) => boolean;
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
  /** Apex inside the early window (`earlyApexPeriods` to `earliestApexPeriods`). */
  early?: boolean;
}

/** The lower quartile (by rank, floor(n / 4)) of `a`, which it reorders. */
function lowerQuartile(a: Float32Array): number {
  return selectInPlace(a, Math.floor(0.25 * a.length));
}

/**
 * Two line-sized buffers of this thread, reused from line to line (nothing of them outlives a
 * `detectHyperbolas` call): the background-removed line (then its envelope), and the normalised envelope.
 */
const scratch = [new Float32Array(0), new Float32Array(0)];
function scratchOf(k: 0 | 1, n: number): Float32Array {
  if (scratch[k]!.length < n) scratch[k] = new Float32Array(n);
  return scratch[k]!.subarray(0, n);
}

/** The envelope divided by the noise level of its sample (`envelopeLevel`), as float32 (`kernelNormalised` in WebAssembly). */
function normalised(E: Float32Array, level: Float64Array, nTraces: number, nSamples: number): Float32Array {
  const N = scratchOf(1, E.length);
  const inv = Float32Array.from(level, (l) => 1 / l);
  for (let t = 0; t < nTraces; t++) {
    const o = t * nSamples;
    for (let s = 0; s < nSamples; s++) N[o + s] = E[o + s]! * inv[s]!;
  }
  return N;
}

/**
 * Local maxima of the normalised envelope at samples [sStart, sEnd) at or above `threshold` over
 * +-`nbT` traces and +-`halfS` samples (ties go to the earlier trace, then the earlier sample); in the
 * detection kernels where they run (`kernelApexCandidates`).
 */
export function apexCandidates(N: Float32Array, nTraces: number, nSamples: number, sStart: number, sEnd: number, threshold: number, nbT: number, halfS: number): { t: number; s: number; v: number }[] {
  const inKernels = kernelApexCandidates(N, nTraces, nSamples, sStart, sEnd, threshold, nbT, halfS);
  if (inKernels) return inKernels;
  const cands: { t: number; s: number; v: number }[] = [];
  for (let t = 0; t < nTraces; t++) {
    for (let s = sStart; s < sEnd; s++) {
      const v = N[t * nSamples + s]!;
      if (v < threshold) continue;
      let isMax = true;
      for (let dt = -nbT; dt <= nbT && isMax; dt++) {
        const tt = t + dt;
        if (tt < 0 || tt >= nTraces) continue;
        for (let ds = -halfS; ds <= halfS; ds++) {
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
  return cands;
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
  const minCover = options.minFlankCoverage ?? 0.5;
  const minBalance = options.minFlankBalance ?? 0.25;
  const maxRmsP = options.maxRmsPeriods ?? 0.12;
  const maxRel = options.maxRelativeUncertainty ?? 0.1;
  const radiusMode = options.radius ?? 'fit';
  const rejectEchoes = options.rejectEchoes ?? true;
  const echoMinDelay = options.echoMinDelayPeriods ?? 1;

  const along = alongLine(line, mpu);
  const length = along[nTraces - 1]!;
  if (!(length > 0)) return [];
  const spacing = length / (nTraces - 1);
  const fMHz = options.frequencyMHz ?? spectralCentroidMHz(line.data, nTraces, nSamples, dtNs);
  const periodNs = Number.isFinite(fMHz) && fMHz > 0 ? 1000 / fMHz : 10 * dtNs;
  const halfPeriodS = Math.max(1, Math.round(periodNs / 2 / dtNs));
  const maxRms = maxRmsP * periodNs;

  const clean =
    bgM <= 0
      ? line
      : Number.isFinite(bgM)
        ? backgroundRemoval(line, { method: 'movingMedian', windowM: Math.max(bgM, 3 * spacing), metresPerUnit: mpu }, scratchOf(0, line.data.length))
        : backgroundRemoval(line, { method: 'mean' }, scratchOf(0, line.data.length));
  // The background-removed copy is ours: its envelope may overwrite it.
  const E = envelope(clean, {}, clean === line ? undefined : clean.data).data;
  // Normalised envelope: thresholds and scores. Pick times come from E itself, whose peak is not shifted by the level.
  const floorFraction = options.levelFloor ?? 3e-3;
  const N =
    kernelNormalised(E, nTraces, nSamples, halfPeriodS, floorFraction, scratchOf(1, E.length)) ??
    normalised(E, envelopeLevel(E, nTraces, nSamples, halfPeriodS, floorFraction), nTraces, nSamples);
  const velocities = new Float64Array(nV);
  for (let k = 0; k < nV; k++) velocities[k] = vMin * (vMax / vMin) ** (k / (nV - 1));
  const apexShift = 2;
  const scanLine: ScanLine = { N, along, nTraces, nSamples, separationM: sep, spacing, tanA, maxApertureM: maxAp, dtNs, timeZeroNs, velocities, apexShift };
  const { at, sampleOf, traceRange, apertureOf, curveScore, scan: jsScan } = curveTools(scanLine);
  // the scan in the detection kernels where they run (the same scores)
  const scan = kernelScan(scanLine) ?? jsScan;

  // Apex candidates: local maxima after the direct wave.
  const sStart = Math.max(1, Math.ceil(sampleOf((options.earliestApexPeriods ?? 1.5) * periodNs)));
  // Apexes need room below them for a wavelet and some move-out before the end of the record.
  const sEnd = nSamples - 1 - 4 * halfPeriodS;
  const nbT = 2;
  const cands = apexCandidates(N, nTraces, nSamples, sStart, sEnd, candTh, nbT, halfPeriodS);
  cands.sort((a, b) => b.v - a.v);
  const sEarly = options.earlyApexPeriods === undefined ? sStart : Math.max(1, Math.ceil(sampleOf(options.earlyApexPeriods * periodNs)));

  interface Picks {
    off: number[];
    tim: number[];
    /** Normalised envelope at each pick. */
    amp: number[];
    /** Trace of each pick. */
    tr: number[];
  }
  const pick = (x0: number, z: number, v: number, R: number, ap: number, windowNs: number): Picks => {
    const [a, b] = traceRange(x0, ap);
    const out: Picks = { off: [], tim: [], amp: [], tr: [] };
    const win = Math.max(1, Math.round(windowNs / dtNs));
    for (let j = a; j <= b; j++) {
      const sc = Math.round(sampleOf(hyperbolaTime(along[j]!, x0, z, v, sep, R)));
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
      out.off.push(along[j]!);
      out.tim.push((best + Math.max(-0.5, Math.min(0.5, frac))) * dtNs - timeZeroNs);
      out.amp.push(N[j * nSamples + best]!);
      out.tr.push(j);
    }
    return out;
  };

  /** Picks on each flank beyond the apex zone (0.3 z or two traces), for the early and final checks. */
  const flankCounts = (off: number[], x0: number, z: number): [number, number] => {
    const side = Math.max(2 * spacing, 0.3 * z);
    let l = 0;
    let r = 0;
    for (const o of off) {
      if (o - x0 < -side) l++;
      else if (o - x0 > side) r++;
    }
    return [l, r];
  };

  const misfit = new Float32Array(nTraces);
  const medianMisfit = (p: Picks, x0: number, z: number, v: number): number => {
    for (let i = 0; i < p.off.length; i++) misfit[i] = Math.abs(p.tim[i]! - hyperbolaTime(p.off[i]!, x0, z, v, sep));
    return median(misfit.subarray(0, p.off.length));
  };

  const accepted: DetectedHyperbola[] = [];
  const nearAccepted = (tr: number, s: number): boolean => {
    const x = along[tr]!;
    const tNs = s * dtNs - timeZeroNs;
    for (const h of accepted) {
      if (Math.abs(hyperbolaTime(x, h.x0M, h.zM, h.velocityMPerNs, sep, h.radiusM) - tNs) < periodNs) return true;
    }
    return false;
  };

  /**
   * Final test of a fit to its picks: both flanks followed (counts, coverage of each flank's aperture,
   * each flank's residual, amplitude balance), residual, uncertainty, move-out and position.
   */
  const acceptable = (fit: PointFit, picks: Picks): boolean => {
    if (fit.inliers < minPicks) return false;
    if (!(fit.rmsNs <= maxRms)) return false;
    if (!(fit.sigmaVelocity <= maxRel * fit.velocityMPerNs)) return false;
    if (fit.velocityMPerNs < vMin * 0.9 || fit.velocityMPerNs > vMax * 1.1) return false;
    if (fit.x0M < along[0]! - spacing || fit.x0M > length + spacing) return false;
    if (fit.t0Ns <= 0) return false;
    const side = Math.max(2 * spacing, 0.3 * fit.zM);
    const ap = apertureOf(fit.zM);
    const n = [0, 0];
    const swr = [0, 0];
    const sw = [0, 0];
    const amps: [number[], number[]] = [[], []];
    let maxMoveout = 0;
    for (let i = 0; i < picks.off.length; i++) {
      const w = fit.weights[i]!;
      if (w <= 0) continue;
      const d = picks.off[i]! - fit.x0M;
      maxMoveout = Math.max(maxMoveout, picks.tim[i]! - fit.t0Ns);
      if (Math.abs(d) <= side) continue;
      const k = d < 0 ? 0 : 1;
      const r = picks.tim[i]! - hyperbolaTime(picks.off[i]!, fit.x0M, fit.zM, fit.velocityMPerNs, sep, fit.radiusM);
      n[k]!++;
      swr[k]! += w * r * r;
      sw[k]! += w;
      amps[k].push(picks.amp[i]!);
    }
    if (n[0]! < minSide || n[1]! < minSide) return false;
    if (maxMoveout < periodNs / 2) return false;
    // Coverage of the inner half of each flank (from the apex zone to half-way to the aperture, within
    // the line): amplitude falls with angle (spreading, beam pattern, shielding of air waves), so the
    // outer flank of a weaker event may fade into the noise, but the inner flank must be followed.
    const inner = side + (ap - side) / 2;
    const nIn = [0, 0];
    for (let i = 0; i < picks.off.length; i++) {
      if (fit.weights[i]! <= 0) continue;
      const d = picks.off[i]! - fit.x0M;
      if (Math.abs(d) > side && Math.abs(d) <= inner) nIn[d < 0 ? 0 : 1]!++;
    }
    const lTraces = Math.max(1, Math.round((Math.min(inner, fit.x0M - along[0]!) - side) / spacing));
    const rTraces = Math.max(1, Math.round((Math.min(inner, length - fit.x0M) - side) / spacing));
    if (nIn[0]! / lTraces < minCover || nIn[1]! / rTraces < minCover) return false;
    for (let k = 0; k < 2; k++) if (!(Math.sqrt(swr[k]! / sw[k]!) <= maxRms)) return false;
    const ml = median(Float32Array.from(amps[0]));
    const mr = median(Float32Array.from(amps[1]));
    if (Math.min(ml, mr) < minBalance * Math.max(ml, mr)) return false;
    return true;
  };

  /**
   * Whether a stronger copy of the picked curve lies above it, one constant delay earlier (see
   * `rejectEchoes`): for some delay from `echoMinDelay` periods to the apex time (in steps of a sample),
   * on each flank three quarters of the retained picks have a larger normalised envelope at the pick
   * moved up by that delay. A strong object straight above a weaker one matches the weaker one's curve
   * only near the apex (their move-outs differ), a delayed copy matches it on the whole aperture.
   */
  const ratioL = new Float32Array(nTraces);
  const ratioR = new Float32Array(nTraces);
  const echoOfAbove = (fit: PointFit, picks: Picks): boolean => {
    const n = picks.off.length;
    const here = new Float64Array(n);
    const idx: number[] = [];
    for (let i = 0; i < n; i++) {
      if (fit.weights[i]! <= 0) continue;
      here[i] = at(picks.tr[i]!, sampleOf(picks.tim[i]!));
      if (here[i]! > 0) idx.push(i);
    }
    if (idx.length < minPicks) return false;
    const first = Math.max(1, Math.ceil((echoMinDelay * periodNs) / dtNs));
    const last = Math.floor((fit.t0Ns + 0.5 * periodNs) / dtNs);
    for (let k = first; k <= last; k++) {
      let nl = 0;
      let nr = 0;
      for (const i of idx) {
        const r = at(picks.tr[i]!, sampleOf(picks.tim[i]!) - k) / here[i]!;
        if (picks.off[i]! < fit.x0M) ratioL[nl++] = r;
        else ratioR[nr++] = r;
      }
      if (nl < minSide || nr < minSide) return false;
      if (lowerQuartile(ratioL.subarray(0, nl)) >= 1 && lowerQuartile(ratioR.subarray(0, nr)) >= 1) return true;
    }
    return false;
  };

  /** Picks, fits and acceptance from one start; the accepted fit or null. */
  const tryStart = (start: { x0M: number; t0Ns: number; velocityMPerNs: number }): DetectedHyperbola | null => {
    let guess = { ...start, radiusM: 0 };
    let fit: PointFit | null = null;
    let picks: Picks = { off: [], tim: [], amp: [], tr: [] };
    for (let pass = 0; pass < 4; pass++) {
      const z = apexDistance(guess.t0Ns, guess.velocityMPerNs, sep);
      picks = pick(guess.x0M, z, guess.velocityMPerNs, guess.radiusM, apertureOf(z), pass === 0 ? periodNs / 2 : periodNs / 3);
      if (picks.off.length < minPicks) return null;
      // Early rejection: a candidate whose picks leave a flank empty never passes the final test.
      const [l, r] = flankCounts(picks.off, guess.x0M, z);
      if (l < minSide || r < minSide) return null;
      if (pass === 0) {
        // The linearised fit of the picks (closed form) replaces the scan's start when it explains the
        // picks better (median absolute residual): LM then only polishes.
        const lin = linearisedFit(picks.off, picks.tim);
        if (lin && lin.velocityMPerNs > vMin && lin.velocityMPerNs < vMax && Math.abs(lin.x0M - guess.x0M) < apertureOf(z)) {
          const zl = apexDistance(lin.t0Ns, lin.velocityMPerNs, sep);
          if (medianMisfit(picks, lin.x0M, zl, lin.velocityMPerNs) < medianMisfit(picks, guess.x0M, z, guess.velocityMPerNs)) guess = { ...lin, radiusM: 0 };
        }
      }
      // Points first (cheap, and the start for R); the radius only in the last round.
      const withRadius = pass === 3 && radiusMode === 'fit';
      // A pick's time error scales as 1 / SNR (the normalised envelope): weights SNR^2.
      fit = fitHyperbola(picks.off, picks.tim, { separationM: sep, initial: guess, radius: withRadius ? 'fit' : 'point', pickWeights: picks.amp.map((a) => a * a) });
      if (!fit) return null;
      // Hopeless: residuals far beyond the limit after the first re-pick do not come down by re-picking.
      if (pass >= 1 && !(fit.rmsNs <= 2 * maxRms && fit.sigmaVelocity <= 2 * maxRel * fit.velocityMPerNs)) return null;
      guess = { x0M: fit.x0M, t0Ns: fit.t0Ns, velocityMPerNs: fit.velocityMPerNs, radiusM: fit.radiusM };
      if (pass === 2 && radiusMode === 'point') break;
    }
    if (!fit || !acceptable(fit, picks)) return null;
    if (rejectEchoes && echoOfAbove(fit, picks)) return null;
    const p = pointAlong(line, along, fit.x0M);
    return {
      ...fit,
      trace: p.trace,
      x: p.x,
      y: p.y,
      offsetM: Float64Array.from(picks.off),
      timeNs: Float64Array.from(picks.tim),
      score: curveScore(fit.x0M, fit.zM + fit.radiusM, fit.velocityMPerNs, apertureOf(fit.zM)),
    };
  };

  const scoreV = new Float64Array(nV);
  const xV = new Float64Array(nV);
  /** Examines the candidates, strongest first (at most `maxCand` off accepted curves), into `accepted`. */
  const examineAll = (list: { t: number; s: number; v: number }[], early: boolean): void => {
    let examined = 0;
    for (const c of list) {
      if (examined >= maxCand) break;
      if (nearAccepted(c.t, c.s)) continue;
      examined++;
      // Scan velocity and a few traces of apex position; only scores above pickTh / 2 make starts (and a
      // lower one never outranks them)
      const t0 = c.s * dtNs - timeZeroNs;
      scan(c.t, t0, pickTh / 2, scoreV, xV);
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
      accepted.push(early ? { ...fit, early: true } : fit);
    }
  };
  examineAll(cands, false);
  // the early window after all later apexes (its fits never take a later fit's place), when asked
  if (sEarly < sStart && (options.earlyApexIf?.(accepted) ?? true)) {
    examineAll(apexCandidates(N, nTraces, nSamples, sEarly, Math.min(sStart, sEnd), candTh, nbT, halfPeriodS).sort((a, b) => b.v - a.v), true);
  }
  return accepted;
}
