/**
 * Least-squares fit of a point-diffractor hyperbola to picks, for a common-offset antenna pair
 * `s` apart (bistatic): t(x) = (sqrt((x - x0 - s/2)^2 + z^2) + sqrt((x - x0 + s/2)^2 + z^2)) / v.
 * Parameters are solved as (x0, z, v) by Levenberg-Marquardt; robustness to outlier picks comes from a
 * least-median-of-squares start (Rousseeuw 1984) on the linearised model t^2 = a + b x + c x^2, then
 * iteratively reweighted least squares with Tukey's biweight (tuning 4.685, scale = 1.4826 MAD).
 */

export interface PointFit {
  /** Apex offset along the line, m (same origin as the pick offsets). */
  x0M: number;
  /** Closest-approach distance of the diffractor, m (apex depth for a subsurface target). */
  zM: number;
  velocityMPerNs: number;
  /** Apex two-way time, ns: 2 sqrt(z^2 + (s/2)^2) / v. */
  t0Ns: number;
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
}

/** Two-way time of a point diffractor (bistatic), ns. */
export function hyperbolaTime(offsetM: number, x0M: number, zM: number, velocityMPerNs: number, separationM: number): number {
  const h = separationM / 2;
  const a = offsetM - x0M - h;
  const b = offsetM - x0M + h;
  return (Math.sqrt(a * a + zM * zM) + Math.sqrt(b * b + zM * zM)) / velocityMPerNs;
}

/** Closest-approach distance from apex time and velocity (bistatic): z = sqrt((v t0 / 2)^2 - (s/2)^2), 0 if v t0 < s. */
export function apexDistance(t0Ns: number, velocityMPerNs: number, separationM: number): number {
  const r = (velocityMPerNs * t0Ns) / 2;
  const h = separationM / 2;
  return r > h ? Math.sqrt(r * r - h * h) : 0;
}

const TUKEY_C = 4.685;
const HUBER_C = 1.345;

export function fitHyperbola(offsetM: ArrayLike<number>, timeNs: ArrayLike<number>, options: FitOptions = {}): PointFit | null {
  const n = offsetM.length;
  if (n !== timeNs.length) throw new Error(`fitHyperbola: ${n} offsets but ${timeNs.length} times`);
  if (n < 4) return null;
  const s = options.separationM ?? 0;
  const robust = options.robust ?? 'tukey';
  const minScale = options.minScaleNs ?? 1e-6;
  const x = Float64Array.from(offsetM);
  const t = Float64Array.from(timeNs);

  let p: [number, number, number];
  if (options.initial) {
    const { x0M, t0Ns, velocityMPerNs } = options.initial;
    p = [x0M, Math.max(apexDistance(t0Ns, velocityMPerNs, s), 1e-3), velocityMPerNs];
  } else {
    const start = lmedsStart(x, t, s);
    if (!start) return null;
    p = start;
  }

  const w = new Float64Array(n).fill(1);
  const r = new Float64Array(n);
  if (!options.initial && robust !== 'none') {
    // Weights from the start's residuals, so gross outliers never pull the first solve.
    residuals(x, t, p, s, r);
    updateWeights(r, w, robust, scaleOf(r, minScale));
  }
  let solved = levenbergMarquardt(x, t, w, p, s);
  if (!solved) return null;
  p = solved;
  if (robust !== 'none') {
    for (let it = 0; it < 30; it++) {
      residuals(x, t, p, s, r);
      const prev = Float64Array.from(w);
      updateWeights(r, w, robust, scaleOf(r, minScale));
      solved = levenbergMarquardt(x, t, w, p, s);
      if (!solved) return null;
      const moved = Math.abs(solved[2] - p[2]) / p[2] + Math.abs(solved[0] - p[0]) / Math.max(1, Math.abs(p[0]));
      p = solved;
      let dw = 0;
      for (let i = 0; i < n; i++) dw = Math.max(dw, Math.abs(w[i]! - prev[i]!));
      if (dw < 1e-4 && moved < 1e-9) break;
    }
  }
  residuals(x, t, p, s, r);
  return summarise(x, t, w, r, p, s);
}

function residuals(x: Float64Array, t: Float64Array, p: readonly number[], s: number, out: Float64Array): void {
  for (let i = 0; i < x.length; i++) out[i] = t[i]! - hyperbolaTime(x[i]!, p[0]!, p[1]!, p[2]!, s);
}

/** Robust scale: 1.4826 x median |r| over all picks. */
function scaleOf(r: Float64Array, minScale: number): number {
  const a = Array.from(r, Math.abs).sort((p, q) => p - q);
  const med = a[Math.floor((a.length - 1) / 2)]!;
  return Math.max(1.4826 * med, minScale);
}

function updateWeights(r: Float64Array, w: Float64Array, kind: 'tukey' | 'huber', scale: number): void {
  for (let i = 0; i < r.length; i++) {
    const u = Math.abs(r[i]!) / scale;
    if (kind === 'tukey') {
      const q = u / TUKEY_C;
      w[i] = q < 1 ? (1 - q * q) ** 2 : 0;
    } else {
      w[i] = u <= HUBER_C ? 1 : HUBER_C / u;
    }
  }
}

/** Jacobian row of t(x; x0, z, v). */
function jacobian(xi: number, p: readonly number[], s: number, out: Float64Array): number {
  const [x0, z, v] = p as [number, number, number];
  const h = s / 2;
  const a = xi - x0 - h;
  const b = xi - x0 + h;
  const d1 = Math.max(Math.sqrt(a * a + z * z), 1e-12);
  const d2 = Math.max(Math.sqrt(b * b + z * z), 1e-12);
  const tt = (d1 + d2) / v;
  out[0] = (-a / d1 - b / d2) / v;
  out[1] = (z / d1 + z / d2) / v;
  out[2] = -tt / v;
  return tt;
}

function normalEquations(x: Float64Array, t: Float64Array, w: Float64Array, p: readonly number[], s: number) {
  const A = new Float64Array(9);
  const g = new Float64Array(3);
  const j = new Float64Array(3);
  let cost = 0;
  for (let i = 0; i < x.length; i++) {
    const wi = w[i]!;
    if (wi === 0) continue;
    const ri = t[i]! - jacobian(x[i]!, p, s, j);
    cost += wi * ri * ri;
    for (let a = 0; a < 3; a++) {
      g[a] = g[a]! + wi * j[a]! * ri;
      for (let b = 0; b < 3; b++) A[a * 3 + b] = A[a * 3 + b]! + wi * j[a]! * j[b]!;
    }
  }
  return { A, g, cost };
}

function weightedCost(x: Float64Array, t: Float64Array, w: Float64Array, p: readonly number[], s: number): number {
  let c = 0;
  for (let i = 0; i < x.length; i++) {
    const wi = w[i]!;
    if (wi === 0) continue;
    const ri = t[i]! - hyperbolaTime(x[i]!, p[0]!, p[1]!, p[2]!, s);
    c += wi * ri * ri;
  }
  return c;
}

function levenbergMarquardt(x: Float64Array, t: Float64Array, w: Float64Array, p0: readonly number[], s: number): [number, number, number] | null {
  let active = 0;
  for (let i = 0; i < w.length; i++) if (w[i]! > 0) active++;
  if (active < 3) return null;
  let p: [number, number, number] = [p0[0]!, Math.abs(p0[1]!), p0[2]!];
  let lambda = 1e-3;
  for (let it = 0; it < 200; it++) {
    const { A, g, cost } = normalEquations(x, t, w, p, s);
    let improved = false;
    for (let k = 0; k < 12; k++) {
      const M = Float64Array.from(A);
      for (let a = 0; a < 3; a++) M[a * 4] = A[a * 4]! * (1 + lambda) + 1e-15;
      const d = solve3(M, g);
      if (!d) {
        lambda *= 10;
        continue;
      }
      const q: [number, number, number] = [p[0] + d[0]!, Math.abs(p[1] + d[1]!), p[2] + d[2]!];
      if (!(q[2] > 0) || !Number.isFinite(q[0])) {
        lambda *= 10;
        continue;
      }
      const c = weightedCost(x, t, w, q, s);
      if (c <= cost) {
        const step = Math.abs(d[0]!) + Math.abs(d[1]!) + Math.abs(d[2]!) / q[2];
        p = q;
        lambda = Math.max(lambda / 10, 1e-12);
        improved = true;
        if (step < 1e-12 || cost - c <= 1e-15 * Math.max(cost, 1e-300)) return p;
        break;
      }
      lambda *= 10;
    }
    if (!improved) return p;
  }
  return p;
}

function solve3(M: Float64Array, b: Float64Array): Float64Array | null {
  const a = Array.from(M);
  const y = Array.from(b);
  for (let c = 0; c < 3; c++) {
    let piv = c;
    for (let r = c + 1; r < 3; r++) if (Math.abs(a[r * 3 + c]!) > Math.abs(a[piv * 3 + c]!)) piv = r;
    if (Math.abs(a[piv * 3 + c]!) < 1e-300) return null;
    if (piv !== c) {
      for (let k = 0; k < 3; k++) [a[c * 3 + k], a[piv * 3 + k]] = [a[piv * 3 + k]!, a[c * 3 + k]!];
      [y[c], y[piv]] = [y[piv]!, y[c]!];
    }
    for (let r = c + 1; r < 3; r++) {
      const f = a[r * 3 + c]! / a[c * 3 + c]!;
      for (let k = c; k < 3; k++) a[r * 3 + k] = a[r * 3 + k]! - f * a[c * 3 + k]!;
      y[r] = y[r]! - f * y[c]!;
    }
  }
  const out = new Float64Array(3);
  for (let r = 2; r >= 0; r--) {
    let v = y[r]!;
    for (let k = r + 1; k < 3; k++) v -= a[r * 3 + k]! * out[k]!;
    out[r] = v / a[r * 3 + r]!;
  }
  return out;
}

function invert3(A: Float64Array): Float64Array | null {
  const inv = new Float64Array(9);
  for (let c = 0; c < 3; c++) {
    const e = new Float64Array(3);
    e[c] = 1;
    const col = solve3(A, e);
    if (!col) return null;
    for (let r = 0; r < 3; r++) inv[r * 3 + c] = col[r]!;
  }
  return inv;
}

/** Start values: the triple of picks whose exact t^2 parabola has the least median squared residual. */
function lmedsStart(x: Float64Array, t: Float64Array, s: number): [number, number, number] | null {
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
  let best: [number, number, number] | null = null;
  let bestMed = Number.POSITIVE_INFINITY;
  const res = new Float64Array(n);
  for (const [i, j, k] of triples) {
    const M = new Float64Array([1, x[i]!, x[i]! ** 2, 1, x[j]!, x[j]! ** 2, 1, x[k]!, x[k]! ** 2]);
    const c = solve3(M, new Float64Array([t[i]! ** 2, t[j]! ** 2, t[k]! ** 2]));
    if (!c) continue;
    const [a, b, q] = c as unknown as [number, number, number];
    if (!(q > 0)) continue;
    const x0 = -b / (2 * q);
    const t02 = a - q * x0 * x0;
    if (!(t02 > 0)) continue;
    const v = 2 / Math.sqrt(q);
    const z = Math.max(apexDistance(Math.sqrt(t02), v, s), 1e-3);
    const p: [number, number, number] = [x0, z, v];
    for (let m = 0; m < n; m++) res[m] = (t[m]! - hyperbolaTime(x[m]!, x0, z, v, s)) ** 2;
    const sorted = Array.from(res).sort((u, w) => u - w);
    const med = sorted[Math.floor(n / 2)]!;
    if (med < bestMed) {
      bestMed = med;
      best = p;
    }
  }
  return best;
}

function summarise(x: Float64Array, t: Float64Array, w: Float64Array, r: Float64Array, p: [number, number, number], s: number): PointFit | null {
  const { A } = normalEquations(x, t, w, p, s);
  let sw = 0;
  let swr = 0;
  let inliers = 0;
  for (let i = 0; i < x.length; i++) {
    if (w[i]! > 0) inliers++;
    sw += w[i]!;
    swr += w[i]! * r[i]! * r[i]!;
  }
  if (inliers < 4) return null;
  // Residual variance per unit weight, with the effective number of picks (sum of weights).
  const dof = Math.max(sw - 3, 1);
  const s2 = swr / dof;
  const inv = invert3(A);
  const [x0, z, v] = p;
  const h = s / 2;
  const slant = Math.sqrt(z * z + h * h);
  const t0 = (2 * slant) / v;
  let sv = Number.POSITIVE_INFINITY;
  let sx = Number.POSITIVE_INFINITY;
  let st = Number.POSITIVE_INFINITY;
  if (inv) {
    const C = inv.map((c) => c * s2);
    sv = Math.sqrt(Math.max(C[8]!, 0));
    sx = Math.sqrt(Math.max(C[0]!, 0));
    // t0(z, v): gradient (0, 2z / (v slant), -t0 / v).
    const gz = slant > 0 ? (2 * z) / (v * slant) : 0;
    const gv = -t0 / v;
    st = Math.sqrt(Math.max(gz * gz * C[4]! + 2 * gz * gv * C[5]! + gv * gv * C[8]!, 0));
  }
  return {
    x0M: x0,
    zM: z,
    velocityMPerNs: v,
    t0Ns: t0,
    sigmaVelocity: sv,
    sigmaX0M: sx,
    sigmaT0Ns: st,
    rmsNs: sw > 0 ? Math.sqrt(swr / sw) : Number.NaN,
    weights: w,
    inliers,
  };
}
