import { MAX_UTILITY_DIAMETER_M } from '@lamina/constants';
import { medianHigh, medianLow } from '@lamina/stats';
import type { Kernels } from '@lamina/processing';
import { detectKernels, type DetectExports } from './detect-wasm';
/**
 * Least-squares fit of a diffraction hyperbola to picks, for a common-offset antenna pair `s` apart
 * (bistatic), from a cylinder (or sphere) of radius R whose top is at depth z below the line: the
 * two-way path transmitter -> specular point on the circle of radius R around the axis -> receiver
 * (Fermat), divided by v. For s = 0 it is t(x) = 2 (sqrt((x - x0)^2 + (z + R)^2) - R) / v, the
 * hyperbola with radius of Ristic, Petrovacki & Govedarica 2009, Computers & Geosciences 35(8), doi
 * 10.1016/j.cageo.2009.01.003; R = 0 is the point diffractor, t = (sqrt((x - x0 - s/2)^2 + z^2) +
 * sqrt((x - x0 + s/2)^2 + z^2)) / v. (Our simulator uses the per-leg normal path d1 + d2 - 2R, shorter
 * than Fermat's by a second-order term: 0.7 % of the apex time for s 0.3 m, R 0.3 m, top at 0.9 m.) Parameters (x0, z, v) and optionally R are solved by
 * Levenberg-Marquardt; robustness to outlier picks comes from a least-median-of-squares start
 * (Rousseeuw 1984) on the linearised model t^2 = a + b x + c x^2, then iteratively reweighted least
 * squares with Tukey's biweight (tuning 4.685, scale = 1.4826 MAD). R trades off against v on short
 * flanks, so it is kept only when the data resolve it (R > `radiusSignificance` sigma(R), and the
 * misfit drops significantly: F-test at 99 %); otherwise the point fit is reported with
 * `radiusResolved: false`.
 */

export interface PointFit {
  /** Apex offset along the line, m (same origin as the pick offsets). */
  x0M: number;
  /** Closest-approach distance of the reflecting surface, m (depth of the top of a buried target). */
  zM: number;
  velocityMPerNs: number;
  /** Apex two-way time, ns: (2 sqrt((z + R)^2 + (s/2)^2) - 2 R) / v. */
  t0Ns: number;
  /** Radius of the target, m (0: a point, or a radius the picks do not resolve). */
  radiusM: number;
  /** One standard deviation of R from the four-parameter fit (also when R was not resolved), m. */
  sigmaRadiusM: number;
  /** True when the four-parameter fit resolved R > 0; false when the point model is reported. */
  radiusResolved: boolean;
  /**
   * One standard deviation of v with the radius free (from the four-parameter fit): the velocity's
   * uncertainty when the radius is not known. Equals `sigmaVelocity` for a resolved or a point-only fit.
   */
  sigmaVelocityRadiusFree: number;
  /**
   * Velocity of the four-parameter fit (R free, R >= 0), the estimate that goes with
   * `sigmaVelocityRadiusFree`. Equals `velocityMPerNs` for a resolved or a point-only fit.
   */
  velocityRadiusFree: number;
  /** One standard deviation of v, x0 and t0 from the weighted Jacobian and residual variance. */
  sigmaVelocity: number;
  sigmaX0M: number;
  sigmaT0Ns: number;
  /** Weighted RMS of the residuals of the retained picks, ns. */
  rmsNs: number;
  /** Final robust weight of each pick (0 = rejected as an outlier). */
  weights: Float64Array;
  /** Picks with weight > 0. */
  inliers: number;
}

export interface FitOptions {
  /** Antenna separation, m. @default 0 */
  separationM?: number;
  /** Robust weighting. @default 'tukey' */
  robust?: 'tukey' | 'huber' | 'none';
  /** Starting values; otherwise from the least-median-of-squares start. */
  initial?: { x0M: number; t0Ns: number; velocityMPerNs: number };
  /** Lower bound of the residual scale, ns, so exact picks are not all called outliers. @default 1e-6 */
  minScaleNs?: number;
  /**
   * Relative inverse variances of the picks (e.g. the squared signal-to-noise ratio at each pick: the
   * time error of a pick scales as 1 / SNR). @default all equal
   */
  pickWeights?: ArrayLike<number>;
  /** Fit the target's radius too (`fit`) or only a point (`point`). @default 'fit' */
  radius?: 'fit' | 'point';
  /**
   * R is resolved when R > this many standard deviations of R (about 97.7 % one-sided for 2, normal
   * errors); otherwise the point fit is reported. @default 2
   */
  radiusSignificance?: number;
  /**
   * Largest radius the four-parameter fit may take, m: half the largest utility diameter
   * (`MAX_UTILITY_DIAMETER_M` of @lamina/constants, 1.5 m, common practice, no source). Without a bound,
   * R and v slide along their trade-off on short or noisy flanks to metre-wide "radii" and velocities no
   * soil has. @default 0.75
   */
  maxRadiusM?: number;
}

/** Two-way time of a target whose top is `zM` below the line, radius `radiusM` (0: a point), bistatic, ns. */
export function hyperbolaTime(offsetM: number, x0M: number, zM: number, velocityMPerNs: number, separationM: number, radiusM = 0): number {
  if (radiusM === 0) return pointPath(offsetM - x0M, zM, separationM / 2) / velocityMPerNs;
  return specularPath(offsetM - x0M, zM + radiusM, radiusM, separationM / 2, null) / velocityMPerNs;
}

/**
 * `specularPath` of a point (R = 0, no gradient), the same arithmetic in a function small enough to be
 * inlined: the detection's velocity scan evaluates it millions of times per line.
 */
function pointPath(dx: number, z: number, h: number): number {
  const ax = -dx + h;
  const bx = -dx - h;
  return Math.max(Math.sqrt(ax * ax + z * z), 1e-12) + Math.max(Math.sqrt(bx * bx + z * z), 1e-12);
}

/**
 * Shortest path transmitter -> circle -> receiver (Fermat: the specular point), antennas at dx -+ h
 * along the line from the axis, axis at depth zc, radius R. The point P = C + R (sin phi, -cos phi)
 * is found by Newton steps on dL/dphi from the normal through the midpoint (exact for h = 0); two
 * steps reach 1e-9 of the path here. With `grad` (length 3): dL/dx0, dL/dzc and dL/dR at the
 * specular point (envelope theorem: phi is stationary, so only P's motion with C and R counts).
 * Without `radiusGrad` a point's dL/dR is not wanted (a fit of x0, t0 and v): grad[2] is left meaningless,
 * grad[0] and grad[1] do not depend on it.
 */
function specularPath(dx: number, zc: number, R: number, h: number, grad: Float64Array | null, known: SpecularPoints | null = null, i = 0, radiusGrad = true): number {
  let sin = 0;
  let cos = 1;
  if (R > 0 && known && known.have[i]) {
    sin = known.sin[i]!;
    cos = known.cos[i]!;
  } else if (R > 0) {
    let phi = Math.atan2(dx, zc);
    for (let it = 0; it < 3 && h > 0; it++) {
      sin = Math.sin(phi);
      cos = Math.cos(phi);
      const px = R * sin - dx;
      const pz = zc - R * cos;
      const ax = px + h;
      const bx = px - h;
      const d1 = Math.sqrt(ax * ax + pz * pz);
      const d2 = Math.sqrt(bx * bx + pz * pz);
      // P' = R (cos, sin), P'' = R (-sin, cos); u = (P - antenna) / d.
      const g1 = (ax * R * cos + pz * R * sin) / d1;
      const g2 = (bx * R * cos + pz * R * sin) / d2;
      const gp = g1 + g2;
      const h1 = (R * R - g1 * g1) / d1 + (-ax * R * sin + pz * R * cos) / d1;
      const h2 = (R * R - g2 * g2) / d2 + (-bx * R * sin + pz * R * cos) / d2;
      const step = h1 + h2 > 0 ? gp / (h1 + h2) : 0;
      phi -= step;
      if (Math.abs(step) < 1e-12) break;
    }
    sin = Math.sin(phi);
    cos = Math.cos(phi);
    if (known) {
      known.sin[i] = sin;
      known.cos[i] = cos;
      known.have[i] = 1;
    }
  } else if (grad && radiusGrad) {
    // A point has no specular point, but dL/dR at R = 0+ does: the circle first grows along the
    // bisector of the directions to the two antennas. Taking the top of the circle instead made dL/dR
    // equal -dL/dzc on every trace, so the radius column of the Jacobian vanished at the bound: a fit
    // that ended at R = 0 had a singular covariance and kept the point fit's velocity uncertainty,
    // which leaves out the R-v trade-off.
    const e1x = dx + h;
    const e2x = dx - h;
    // square roots rather than Math.hypot (several times slower here; these lengths neither overflow nor underflow)
    const n1 = Math.sqrt(e1x * e1x + zc * zc) || 1;
    const n2 = Math.sqrt(e2x * e2x + zc * zc) || 1;
    const bx = e1x / n1 + e2x / n2;
    const bz = zc / n1 + zc / n2;
    const nb = Math.sqrt(bx * bx + bz * bz) || 1;
    sin = bx / nb;
    cos = bz / nb;
  }
  const px = R * sin - dx;
  const pz = zc - R * cos;
  const ax = px + h;
  const bx = px - h;
  const d1 = Math.max(Math.sqrt(ax * ax + pz * pz), 1e-12);
  const d2 = Math.max(Math.sqrt(bx * bx + pz * pz), 1e-12);
  if (grad) {
    grad[0] = ax / d1 + bx / d2;
    grad[1] = pz / d1 + pz / d2;
    // dL/dR with zc fixed (the caller adds dzc/dR).
    grad[2] = (ax / d1 + bx / d2) * sin - (pz / d1 + pz / d2) * cos;
  }
  return d1 + d2;
}

/** Specular points (sin and cos of the angle at the axis) of the picks of one fit at one parameter set. */
interface SpecularPoints {
  x: Float64Array | null;
  /** x0, t0, v, R and the separation they are for. */
  key: Float64Array;
  sin: Float64Array;
  cos: Float64Array;
  have: Uint8Array;
}

const specular: SpecularPoints = { x: null, key: new Float64Array(5), sin: new Float64Array(0), cos: new Float64Array(0), have: new Uint8Array(0) };

/**
 * The specular points kept for picks `x` at parameters `p` (emptied when either changed), or null for a
 * point (no Newton solve). LM evaluates the cost at a step and, the step taken, its normal equations at
 * the same parameters, and reweighting evaluates residuals where LM then starts: each pick's specular
 * point is solved once per parameter set. One fit at a time per thread.
 */
function specularPoints(x: Float64Array, p: Params, s: number): SpecularPoints | null {
  if (!(p[3]! > 0)) return null;
  const k = specular.key;
  if (specular.x !== x || k[0] !== p[0] || k[1] !== p[1] || k[2] !== p[2] || k[3] !== p[3] || k[4] !== s) {
    specular.x = x;
    k[0] = p[0]!;
    k[1] = p[1]!;
    k[2] = p[2]!;
    k[3] = p[3]!;
    k[4] = s;
    if (specular.have.length < x.length) {
      specular.sin = new Float64Array(x.length);
      specular.cos = new Float64Array(x.length);
      specular.have = new Uint8Array(x.length);
    } else specular.have.fill(0, 0, x.length);
  }
  return specular;
}

/**
 * Closest-approach distance (top of the target) from apex time and velocity (bistatic):
 * z = sqrt((v t0 / 2)^2 - (s/2)^2), 0 if v t0 < s. The same for any radius: at the apex the specular
 * point is the top of the target.
 */
export function apexDistance(t0Ns: number, velocityMPerNs: number, separationM: number): number {
  const r = (velocityMPerNs * t0Ns) / 2;
  const h = separationM / 2;
  return r > h ? Math.sqrt(r * r - h * h) : 0;
}

/** 99 % point of F(1, n) for large n (= chi-square(1) 99 %, 6.635; Abramowitz & Stegun table 26.8, from memory). */
const F_99 = 10.83;
const TUKEY_C = 4.685;
const HUBER_C = 1.345;

/**
 * Parameters in fit order: x0, t0 (apex time), v, R. The apex time rather than the depth, because the
 * apex picks pin t0 down by themselves; with the depth, z and v would trade off along t0 = 2 z / v and
 * LM would crawl along that valley as well as along the v-R one.
 */
type Params = Float64Array;

/**
 * Depth of the axis (zc) for the parameters. At the apex the specular point is the top of the circle,
 * so v t0 / 2 = sqrt(ztop^2 + (s/2)^2) whatever R, and zc = ztop + R; NaN when v t0 < s.
 */
function axisDepth(p: Params, s: number): number {
  const A = (p[2]! * p[1]!) / 2;
  const h = s / 2;
  const z2 = A * A - h * h;
  if (!(z2 >= 0)) return Number.NaN;
  return Math.sqrt(z2) + p[3]!;
}

/** Model time at offset xi for the parameters (NaN for impossible parameters). */
function modelTime(xi: number, p: Params, s: number, zc: number, known: SpecularPoints | null = null, i = 0): number {
  return specularPath(xi - p[0]!, zc, p[3]!, s / 2, null, known, i) / p[2]!;
}

export function fitHyperbola(offsetM: ArrayLike<number>, timeNs: ArrayLike<number>, options: FitOptions = {}): PointFit | null {
  const n = offsetM.length;
  if (n !== timeNs.length) throw new Error(`fitHyperbola: ${n} offsets but ${timeNs.length} times`);
  if (n < 4) return null;
  const s = options.separationM ?? 0;
  const robust = options.robust ?? 'tukey';
  const minScale = options.minScaleNs ?? 1e-6;
  const x = Float64Array.from(offsetM);
  const t = Float64Array.from(timeNs);

  let p: Params;
  if (options.initial) {
    const { x0M, t0Ns, velocityMPerNs } = options.initial;
    p = Float64Array.of(x0M, Math.max(t0Ns, (s + 2e-3) / velocityMPerNs), velocityMPerNs, 0);
  } else {
    const start = lmedsStart(x, t, s);
    if (!start) return null;
    p = start;
  }

  const prior = priorWeights(options.pickWeights, n);
  const w = Float64Array.from(prior);
  const r = new Float64Array(n);
  if (!options.initial && robust !== 'none') {
    // Weights from the start's residuals, so gross outliers never pull the first solve.
    residuals(x, t, p, s, r);
    updateWeights(r, prior, w, robust, minScale);
  }
  const point = irls(x, t, w, prior, p, s, 3, robust, minScale);
  if (!point) return null;
  const pointFit = summarise(x, t, point.w, point.p, s, 3);
  if (!pointFit || options.radius === 'point') return pointFit;

  // Radius: LM from the point solution with two starting radii (the cost surface in R is flat near 0
  // and R trades off against v along a narrow valley, so one start may stop on the wrong side).
  let best: { p: Params; w: Float64Array; cost: number } | null = null;
  const rMax = options.maxRadiusM ?? MAX_UTILITY_DIAMETER_M / 2;
  for (const r0 of [0.1, 0.5]) {
    const q = Float64Array.from(point.p);
    // Same apex time, a radius a share of the point fit's depth.
    q[3] = Math.min(r0 * Math.max(axisDepth(q, s), 0.1), rMax);
    // The point fit's weights already set gross outliers aside: a few reweighting rounds suffice.
    const res = irls(x, t, Float64Array.from(point.w), prior, q, s, 4, robust, minScale, 5, rMax);
    if (!res) continue;
    const cost = weightedCost(x, t, res.w, res.p, s) / Math.max(sumOf(res.w), 1e-300);
    if (!best || cost < best.cost) best = { ...res, cost };
  }
  if (!best) return withTradeOff(pointFit, x, t, point.w, point.p, s);
  const radial = summarise(x, t, best.w, best.p, s, 4);
  if (!radial) return withTradeOff(pointFit, x, t, point.w, point.p, s);
  const k = options.radiusSignificance ?? 3;
  // Nested models, same weights: the radius must also lower the misfit by more than one extra
  // parameter explains (F(1, n - 4) test at 99 %; 6.63 is its large-n limit, chi-square(1)).
  const rss4 = weightedCost(x, t, best.w, best.p, s);
  const rss3 = weightedCost(x, t, best.w, point.p, s);
  const f = (rss3 - rss4) / Math.max(rss4 / Math.max(sumOf(best.w) - 4, 1), 1e-300);
  // Both tests assume independent pick errors; neighbouring picks share wavelet and interference, so
  // their errors correlate. The variance inflation (1 + rho) / (1 - rho) of a first-order
  // autoregressive series (rho: lag-one autocorrelation of the residuals in pick order, if > 0; the
  // usual effective-sample-size correction) widens sigma(R) and shrinks F accordingly.
  const kappa = correlationInflation(x, t, best.w, best.p, s);
  if (radial.radiusM > 0 && Number.isFinite(radial.sigmaRadiusM) && radial.radiusM > k * radial.sigmaRadiusM * Math.sqrt(kappa) && f / kappa > F_99) return radial;
  const free = Number.isFinite(radial.sigmaVelocity) ? Math.max(radial.sigmaVelocity, pointFit.sigmaVelocity) : pointFit.sigmaVelocity;
  return { ...pointFit, sigmaRadiusM: radial.sigmaRadiusM, sigmaVelocityRadiusFree: free, velocityRadiusFree: Number.isFinite(radial.sigmaVelocity) ? radial.velocityMPerNs : pointFit.velocityMPerNs };
}

/**
 * A point fit whose radius fit failed (no LM solution from either start) still has the R-v trade-off:
 * its velocity uncertainty is taken from the four-parameter covariance at R = 0 (the curvature of the
 * misfit at the bound), not from the point fit alone, which states the fast end of the valley as if it
 * were known to a fraction of a percent and so outweighed the fits that did test a radius.
 */
function withTradeOff(pointFit: PointFit, x: Float64Array, t: Float64Array, w: Float64Array, p: Params, s: number): PointFit {
  const atBound = summarise(x, t, w, Float64Array.of(p[0]!, p[1]!, p[2]!, 0), s, 4);
  if (!atBound || !Number.isFinite(atBound.sigmaVelocity)) return pointFit;
  return { ...pointFit, sigmaRadiusM: atBound.sigmaRadiusM, sigmaVelocityRadiusFree: Math.max(atBound.sigmaVelocity, pointFit.sigmaVelocity) };
}

/** (1 + rho) / (1 - rho), rho the lag-one autocorrelation of the weighted residuals in offset order (1 if rho <= 0). */
function correlationInflation(x: Float64Array, t: Float64Array, w: Float64Array, p: Params, s: number): number {
  const order = Array.from(x, (_, i) => i)
    .filter((i) => w[i]! > 0)
    .sort((a, b) => x[a]! - x[b]!);
  const n = order.length;
  if (n < 8) return 1;
  const r = new Float64Array(x.length);
  residuals(x, t, p, s, r);
  const e = Float64Array.from(order, (i) => r[i]! * Math.sqrt(w[i]!));
  let mean = 0;
  for (let i = 0; i < n; i++) mean += e[i]!;
  mean /= n;
  let c0 = 0;
  for (let i = 0; i < n; i++) c0 += (e[i]! - mean) ** 2;
  if (!(c0 > 0)) return 1;
  let c1 = 0;
  for (let i = 0; i + 1 < n; i++) c1 += (e[i]! - mean) * (e[i + 1]! - mean);
  const rho = Math.min(c1 / c0, 0.95);
  return rho > 0 ? (1 + rho) / (1 - rho) : 1;
}

function sumOf(a: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i]!;
  return s;
}

/**
 * `irls` in the detection kernels (wasm/fit.ts): the same steps, the same numbers. `w` is updated as
 * the JavaScript updates it, also when the fit fails.
 */
function irlsWasm(kernels: Kernels<DetectExports>, ...[x, t, w, prior, p0, s, np, robust, minScale, rounds, rMax]: Required<Parameters<typeof irls>>): ReturnType<typeof irls> {
  const n = x.length;
  const [xa, ta, wa, pa, pp, work] = kernels.layout(8 * n, 8 * n, 8 * n, 8 * n, 32, kernels.k.irlsWorkBytes(n));
  kernels.f64(xa, n).set(x);
  kernels.f64(ta, n).set(t);
  kernels.f64(wa, n).set(w);
  kernels.f64(pa, n).set(prior);
  kernels.f64(pp, 4).set(p0);
  const ok = kernels.k.irls(xa, ta, wa, pa, n, pp, s, np, robust === 'none' ? 0 : robust === 'tukey' ? 1 : 2, minScale, rounds, rMax, work);
  w.set(kernels.f64(wa, n));
  return ok ? { p: kernels.f64(pp, 4).slice(), w } : null;
}

/** LM, then reweighting and LM again until the weights settle (at most 30 rounds); `irlsWasm` where the detection kernels run. */
function irls(
  x: Float64Array,
  t: Float64Array,
  w: Float64Array,
  prior: Float64Array,
  p0: Params,
  s: number,
  np: 3 | 4,
  robust: 'tukey' | 'huber' | 'none',
  minScale: number,
  rounds = 30,
  rMax = Infinity,
): { p: Params; w: Float64Array } | null {
  const kernels = detectKernels();
  if (kernels) return irlsWasm(kernels, x, t, w, prior, p0, s, np, robust, minScale, rounds, rMax);
  const r = new Float64Array(x.length);
  let p = levenbergMarquardt(x, t, w, p0, s, np, rMax);
  if (!p) return null;
  if (robust !== 'none') {
    const prev = new Float64Array(w.length);
    for (let it = 0; it < rounds; it++) {
      residuals(x, t, p, s, r);
      prev.set(w);
      updateWeights(r, prior, w, robust, minScale);
      const solved = levenbergMarquardt(x, t, w, p, s, np, rMax);
      if (!solved) return null;
      const moved = Math.abs(solved[2]! - p[2]!) / p[2]! + Math.abs(solved[0]! - p[0]!) / Math.max(1, Math.abs(p[0]!)) + Math.abs(solved[3]! - p[3]!);
      p = solved;
      let dw = 0;
      for (let i = 0; i < w.length; i++) dw = Math.max(dw, Math.abs(w[i]! - prev[i]!));
      if (dw < 1e-4 && moved < 1e-9) break;
    }
  }
  return { p, w };
}

function residuals(x: Float64Array, t: Float64Array, p: Params, s: number, out: Float64Array): void {
  const zc = axisDepth(p, s);
  const known = specularPoints(x, p, s);
  for (let i = 0; i < x.length; i++) out[i] = t[i]! - modelTime(x[i]!, p, s, zc, known, i);
}

/** Prior weights scaled to mean 1 (all 1 when none are given). */
function priorWeights(given: ArrayLike<number> | undefined, n: number): Float64Array {
  const w = new Float64Array(n).fill(1);
  if (!given) return w;
  if (given.length !== n) throw new Error(`fitHyperbola: ${n} picks but ${given.length} pick weights`);
  let sum = 0;
  for (let i = 0; i < n; i++) sum += (w[i] = Math.max(given[i]!, 0));
  if (!(sum > 0)) return w.fill(1);
  for (let i = 0; i < n; i++) w[i] = (w[i]! * n) / sum;
  return w;
}

/**
 * Robust weights times the prior ones: the biweight (or Huber) of each residual standardised by its
 * prior (r sqrt(prior)), on the scale 1.4826 x median of those.
 */
function updateWeights(r: Float64Array, prior: Float64Array, w: Float64Array, kind: 'tukey' | 'huber' | 'none', minScale: number): void {
  if (kind === 'none') return;
  const u = new Float64Array(r.length);
  for (let i = 0; i < r.length; i++) u[i] = Math.abs(r[i]!) * Math.sqrt(prior[i]!);
  const scale = Math.max(1.4826 * medianLow(u), minScale);
  for (let i = 0; i < r.length; i++) {
    const v = u[i]! / scale;
    let robustW: number;
    if (kind === 'tukey') {
      const q = v / TUKEY_C;
      robustW = q < 1 ? (1 - q * q) ** 2 : 0;
    } else {
      robustW = v <= HUBER_C ? 1 : HUBER_C / v;
    }
    w[i] = prior[i]! * robustW;
  }
}

const pathGrad = new Float64Array(3);

/**
 * Jacobian row of t(x; x0, t0, v, R) into `out` (4 entries; the R entry meaningless for np = 3); returns t. With A = v t0 / 2 and
 * ztop = sqrt(A^2 - h^2), zc = ztop + R: dzc/dt0 = A v / 2 ztop, dzc/dv = A t0 / 2 ztop, dzc/dR = 1.
 */
function jacobian(xi: number, p: Params, s: number, zc: number, out: Float64Array, known: SpecularPoints | null, i: number, np: 3 | 4): number {
  const t0 = p[1]!;
  const v = p[2]!;
  const R = p[3]!;
  const L = specularPath(xi - p[0]!, zc, R, s / 2, pathGrad, known, i, np === 4);
  const tt = L / v;
  const ztop = Math.max(zc - R, 1e-12);
  const A = (v * t0) / 2;
  const tz = pathGrad[1]! / v;
  out[0] = pathGrad[0]! / v;
  out[1] = (tz * A * v) / (2 * ztop);
  out[2] = -tt / v + (tz * A * t0) / (2 * ztop);
  out[3] = (pathGrad[2]! + pathGrad[1]!) / v;
  return tt;
}

// Scratch for normalEquations (one fit at a time per thread; its results are read before the next call).
const scratchA = [new Float64Array(0), new Float64Array(0), new Float64Array(0), new Float64Array(9), new Float64Array(16)];
const scratchG = [new Float64Array(0), new Float64Array(0), new Float64Array(0), new Float64Array(3), new Float64Array(4)];
const scratchJ = new Float64Array(4);

function normalEquations(x: Float64Array, t: Float64Array, w: Float64Array, p: Params, s: number, np: 3 | 4) {
  const A = scratchA[np]!.fill(0);
  const g = scratchG[np]!.fill(0);
  const j = scratchJ;
  const zc = axisDepth(p, s);
  const known = specularPoints(x, p, s);
  let cost = 0;
  for (let i = 0; i < x.length; i++) {
    const wi = w[i]!;
    if (wi === 0) continue;
    const ri = t[i]! - jacobian(x[i]!, p, s, zc, j, known, i, np);
    cost += wi * ri * ri;
    // A[a][b] += (wi j[a]) j[b], row by row, with the row's entries written out (np is 3 or 4)
    const j0 = j[0]!;
    const j1 = j[1]!;
    const j2 = j[2]!;
    const j3 = j[3]!;
    for (let a = 0, o = 0; a < np; a++, o += np) {
      const wa = wi * j[a]!;
      g[a] = g[a]! + wa * ri;
      A[o] = A[o]! + wa * j0;
      A[o + 1] = A[o + 1]! + wa * j1;
      A[o + 2] = A[o + 2]! + wa * j2;
      if (np === 4) A[o + 3] = A[o + 3]! + wa * j3;
    }
  }
  return { A, g, cost };
}

function weightedCost(x: Float64Array, t: Float64Array, w: Float64Array, p: Params, s: number): number {
  const zc = axisDepth(p, s);
  if (Number.isNaN(zc)) return Number.POSITIVE_INFINITY;
  const known = specularPoints(x, p, s);
  let c = 0;
  for (let i = 0; i < x.length; i++) {
    const wi = w[i]!;
    if (wi === 0) continue;
    const ri = t[i]! - modelTime(x[i]!, p, s, zc, known, i);
    c += wi * ri * ri;
  }
  return c;
}

/** LM on the first `np` parameters (R stays as given when np = 3); 0 <= R <= rMax by an active set, a top depth >= 0 by rejecting steps. */
function levenbergMarquardt(x: Float64Array, t: Float64Array, w: Float64Array, p0: Params, s: number, np: 3 | 4, rMax = Infinity): Params | null {
  let active = 0;
  for (let i = 0; i < w.length; i++) if (w[i]! > 0) active++;
  if (active < np) return null;
  let p = Float64Array.from(p0);
  if (Number.isNaN(axisDepth(p, s))) return null;
  let lambda = 1e-3;
  const M = new Float64Array(np * np);
  const q = new Float64Array(4);
  for (let it = 0; it < 200; it++) {
    const { A, g, cost } = normalEquations(x, t, w, p, s, np);
    let improved = false;
    for (let k = 0; k < 12; k++) {
      M.set(A);
      for (let a = 0; a < np; a++) M[a * (np + 1)] = A[a * (np + 1)]! * (1 + lambda) + 1e-15;
      let d = solveN(M, g, np);
      // Active set: R at a bound (0 or rMax) and pushed beyond it stays there; the others take the step of the
      // reduced system (projecting the full step instead stalls LM in tiny steps along the bound).
      if (d && np === 4 && ((p[3]! === 0 && d[3]! < 0) || (p[3]! === rMax && d[3]! > 0))) {
        const M3 = Float64Array.of(M[0]!, M[1]!, M[2]!, M[4]!, M[5]!, M[6]!, M[8]!, M[9]!, M[10]!);
        const d3 = solveN(M3, g.subarray(0, 3), 3);
        d = d3 ? Float64Array.of(d3[0]!, d3[1]!, d3[2]!, 0) : null;
      }
      if (!d) {
        lambda *= 10;
        continue;
      }
      q.set(p);
      q[0] = p[0]! + d[0]!;
      q[1] = p[1]! + d[1]!;
      q[2] = p[2]! + d[2]!;
      if (np === 4) q[3] = Math.min(rMax, Math.max(0, p[3]! + d[3]!));
      if (!(q[2]! > 0) || !Number.isFinite(q[0]!) || Number.isNaN(axisDepth(q, s))) {
        lambda *= 10;
        continue;
      }
      const c = weightedCost(x, t, w, q, s);
      if (c <= cost) {
        // The step actually taken (R may have stopped at its bound), relative for v.
        const step = Math.abs(q[0]! - p[0]!) + Math.abs(q[1]! - p[1]!) / q[1]! + Math.abs(q[2]! - p[2]!) / q[2]! + Math.abs(q[3]! - p[3]!);
        p = Float64Array.from(q);
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
        if (step < 1e-10 || cost - c <= 1e-12 * Math.max(cost, 1e-300)) return p;
        break;
      }
      lambda *= 10;
    }
    if (!improved) return p;
  }
  return p;
}

/** Solve the n x n system M y = b by Gaussian elimination with partial pivoting (M, b left intact). */
// Scratch for solveN's elimination, by size (one solve at a time per thread).
const solveA = [0, 1, 2, 3, 4].map((n) => new Float64Array(n * n));
const solveY = [0, 1, 2, 3, 4].map((n) => new Float64Array(n));

function solveN(M: Float64Array, b: Float64Array, n: number): Float64Array | null {
  const a = n < solveA.length ? solveA[n]! : new Float64Array(n * n);
  const y = n < solveY.length ? solveY[n]! : new Float64Array(n);
  for (let i = 0; i < n * n; i++) a[i] = M[i]!;
  for (let i = 0; i < n; i++) y[i] = b[i]!;
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(a[r * n + c]!) > Math.abs(a[piv * n + c]!)) piv = r;
    if (Math.abs(a[piv * n + c]!) < 1e-300) return null;
    if (piv !== c) {
      for (let k = 0; k < n; k++) {
        const tmp = a[c * n + k]!;
        a[c * n + k] = a[piv * n + k]!;
        a[piv * n + k] = tmp;
      }
      const tmp = y[c]!;
      y[c] = y[piv]!;
      y[piv] = tmp;
    }
    for (let r = c + 1; r < n; r++) {
      const f = a[r * n + c]! / a[c * n + c]!;
      for (let k = c; k < n; k++) a[r * n + k] = a[r * n + k]! - f * a[c * n + k]!;
      y[r] = y[r]! - f * y[c]!;
    }
  }
  const out = new Float64Array(n);
  for (let r = n - 1; r >= 0; r--) {
    let v = y[r]!;
    for (let k = r + 1; k < n; k++) v -= a[r * n + k]! * out[k]!;
    out[r] = v / a[r * n + r]!;
  }
  return out;
}

function invertN(A: Float64Array, n: number): Float64Array | null {
  const inv = new Float64Array(n * n);
  const e = new Float64Array(n);
  for (let c = 0; c < n; c++) {
    e.fill(0);
    e[c] = 1;
    const col = solveN(A, e, n);
    if (!col) return null;
    for (let r = 0; r < n; r++) inv[r * n + c] = col[r]!;
  }
  return inv;
}

/**
 * Start values from the linearised model: t^2 = a + b x + c x^2 is linear in (a, b, c), so three picks
 * give a parabola exactly; the triple whose parabola has the least median squared residual wins.
 */
function lmedsStart(x: Float64Array, t: Float64Array, s: number): Params | null {
  const n = x.length;
  const triples: [number, number, number][] = [];
  const total = (n * (n - 1) * (n - 2)) / 6;
  if (total <= 600) {
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) for (let k = j + 1; k < n; k++) triples.push([i, j, k]);
  } else {
    // Deterministic pseudo-random triples (LCG), so a fit is reproducible.
    let seed = 12345;
    const next = () => (seed = (seed * 1103515245 + 12345) >>> 0) % n;
    for (let m = 0; m < 600; m++) {
      const i = next();
      const j = next();
      const k = next();
      if (i !== j && j !== k && i !== k) triples.push([i, j, k]);
    }
  }
  let best: Params | null = null;
  let bestMed = Number.POSITIVE_INFINITY;
  const res = new Float64Array(n);
  const M = new Float64Array(9);
  const rhs = new Float64Array(3);
  for (const [i, j, k] of triples) {
    M.set([1, x[i]!, x[i]! ** 2, 1, x[j]!, x[j]! ** 2, 1, x[k]!, x[k]! ** 2]);
    rhs.set([t[i]! ** 2, t[j]! ** 2, t[k]! ** 2]);
    const c = solveN(M, rhs, 3);
    if (!c) continue;
    const a = c[0]!;
    const b = c[1]!;
    const q = c[2]!;
    if (!(q > 0)) continue;
    const x0 = -b / (2 * q);
    const t02 = a - q * x0 * x0;
    if (!(t02 > 0)) continue;
    const v = 2 / Math.sqrt(q);
    const t0 = Math.max(Math.sqrt(t02), (s + 2e-3) / v);
    const z = apexDistance(t0, v, s);
    for (let m = 0; m < n; m++) res[m] = (t[m]! - hyperbolaTime(x[m]!, x0, z, v, s)) ** 2;
    const med = medianHigh(res);
    if (med < bestMed) {
      bestMed = med;
      best = Float64Array.of(x0, t0, v, 0);
    }
  }
  return best;
}

/**
 * Linearised fit of t^2 = a + b x + c x^2 by weighted least squares (closed form, no iteration):
 * v = 2 / sqrt(c), x0 = -b / 2c, t0 = sqrt(a - c x0^2). Exact for a point at zero separation; a start
 * for `fitHyperbola` otherwise. Null when the picks do not make an upward-opening parabola in t^2.
 */
export function linearisedFit(offsetM: ArrayLike<number>, timeNs: ArrayLike<number>): { x0M: number; t0Ns: number; velocityMPerNs: number } | null {
  const n = offsetM.length;
  if (n < 3) return null;
  // Centre x for conditioning.
  let mx = 0;
  for (let i = 0; i < n; i++) mx += offsetM[i]!;
  mx /= n;
  const A = new Float64Array(9);
  const g = new Float64Array(3);
  for (let i = 0; i < n; i++) {
    const u = offsetM[i]! - mx;
    const row = [1, u, u * u];
    const y = timeNs[i]! * timeNs[i]!;
    for (let a = 0; a < 3; a++) {
      g[a] = g[a]! + row[a]! * y;
      for (let b = 0; b < 3; b++) A[a * 3 + b] = A[a * 3 + b]! + row[a]! * row[b]!;
    }
  }
  const c = solveN(A, g, 3);
  if (!c) return null;
  const q = c[2]!;
  if (!(q > 0)) return null;
  const u0 = -c[1]! / (2 * q);
  const t02 = c[0]! - q * u0 * u0;
  if (!(t02 > 0)) return null;
  return { x0M: u0 + mx, t0Ns: Math.sqrt(t02), velocityMPerNs: 2 / Math.sqrt(q) };
}

function summarise(x: Float64Array, t: Float64Array, w: Float64Array, p: Params, s: number, np: 3 | 4): PointFit | null {
  const { A } = normalEquations(x, t, w, p, s, np);
  const r = new Float64Array(x.length);
  residuals(x, t, p, s, r);
  let sw = 0;
  let swr = 0;
  let inliers = 0;
  for (let i = 0; i < x.length; i++) {
    if (w[i]! > 0) inliers++;
    sw += w[i]!;
    swr += w[i]! * r[i]! * r[i]!;
  }
  if (inliers < np + 1) return null;
  // Residual variance per unit weight, with the effective number of picks (sum of weights).
  const dof = Math.max(sw - np, 1);
  const s2 = swr / dof;
  const inv = invertN(A, np);
  const x0 = p[0]!;
  const t0 = p[1]!;
  const v = p[2]!;
  const R = np === 4 ? p[3]! : 0;
  const z = axisDepth(p, s) - R;
  let sv = Number.POSITIVE_INFINITY;
  let sx = Number.POSITIVE_INFINITY;
  let st = Number.POSITIVE_INFINITY;
  let sr = Number.POSITIVE_INFINITY;
  if (inv) {
    const C = (a: number, b: number) => inv[a * np + b]! * s2;
    sv = Math.sqrt(Math.max(C(2, 2), 0));
    sx = Math.sqrt(Math.max(C(0, 0), 0));
    if (np === 4) sr = Math.sqrt(Math.max(C(3, 3), 0));
    st = Math.sqrt(Math.max(C(1, 1), 0));
  }
  return {
    x0M: x0,
    zM: z,
    velocityMPerNs: v,
    t0Ns: t0,
    radiusM: R,
    sigmaRadiusM: sr,
    radiusResolved: np === 4,
    sigmaVelocity: sv,
    sigmaVelocityRadiusFree: sv,
    velocityRadiusFree: v,
    sigmaX0M: sx,
    sigmaT0Ns: st,
    rmsNs: sw > 0 ? Math.sqrt(swr / sw) : Number.NaN,
    weights: w,
    inliers,
  };
}
