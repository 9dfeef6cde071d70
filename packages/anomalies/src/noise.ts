/**
 * The noise law of a depth slice, from the slice's own values.
 *
 * A slice value is the mean of the squared envelope over a depth window (its energy), then an
 * inverse-distance average of nearby traces. For Gaussian noise the squared envelope of one sample is
 * exponential (the envelope is Rayleigh: P(A > a) = exp(-a^2 / (2 sigma^2)), Papoulis, Probability,
 * Random Variables and Stochastic Processes, the envelope of a narrow-band normal process). A weighted
 * mean of N such values with weights w is approximated by a Gamma law of the same mean and variance
 * (Satterthwaite 1946): shape N / sum(w^2), scale mean / shape. How many window samples and traces are
 * independent depends on the bandwidth, the trace spacing, the migration and the clutter, so the
 * shape is not assumed: it is fitted to the lower half of the slice's values (the quartile ratio
 * q25 / q50 of a Gamma law depends on its shape only), where targets are too few to move it.
 */
import { quantileInPlace } from '@lamina/stats';
import { validQuantiles } from './select-wasm';

/** Gamma law of a slice's noise energy. */
export interface NoiseLaw {
  /** Gamma shape (1 = exponential: one independent envelope sample). */
  shape: number;
  /** Gamma scale; shape * scale is the mean noise energy. */
  scale: number;
  /** Valid cells the law was fitted to. */
  count: number;
}

const LN_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);
const LANCZOS = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];

/** ln Gamma(x) for x > 0 (Lanczos, g = 7, n = 9; Numerical Recipes 3rd ed. section 6.1). */
export function lnGamma(x: number): number {
  const c = LANCZOS;
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - lnGamma(1 - x);
  const xx = x - 1;
  let a = c[0]!;
  const t = xx + 7.5;
  for (let i = 1; i < 9; i++) a += c[i]! / (xx + i);
  return LN_SQRT_2PI + (xx + 0.5) * Math.log(t) - t + Math.log(a);
}

/**
 * Regularised upper incomplete gamma Q(a, x) = Gamma(a, x) / Gamma(a): the probability that a
 * Gamma(a, 1) variable exceeds x. Series for x < a + 1, Lentz continued fraction otherwise
 * (Numerical Recipes 3rd ed. section 6.2).
 */
export function gammaQ(a: number, x: number): number {
  return gammaQOf(a, lnGamma(a), x);
}

/** `gammaQ` with ln Gamma(a) given: loops over many x of one shape work it out once. */
function gammaQOf(a: number, lnGammaA: number, x: number): number {
  if (!(x > 0)) return 1;
  if (!Number.isFinite(x)) return 0;
  const lnPre = a * Math.log(x) - x - lnGammaA;
  if (x < a + 1) {
    let sum = 1 / a, del = sum, ap = a;
    for (let n = 0; n < 1000; n++) {
      ap += 1;
      del *= x / ap;
      sum += del;
      if (Math.abs(del) < Math.abs(sum) * 1e-15) break;
    }
    return Math.max(0, 1 - sum * Math.exp(lnPre));
  }
  const tiny = 1e-300;
  let b = x + 1 - a, c = 1 / tiny, d = 1 / b, h = d;
  for (let i = 1; i < 1000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-15) break;
  }
  return Math.exp(lnPre) * h;
}

/** x with Q(a, x) = q (the Gamma(a, 1) quantile at 1 - q), by bisection on log x. */
export function gammaQInv(a: number, q: number): number {
  let lo = -60, hi = Math.log(Math.max(10, 10 * a + 200));
  const lg = lnGamma(a);
  for (let i = 0; i < 200 && hi - lo > 1e-12; i++) {
    const m = 0.5 * (lo + hi);
    if (gammaQOf(a, lg, Math.exp(m)) > q) lo = m;
    else hi = m;
  }
  return Math.exp(0.5 * (lo + hi));
}

const ACKLAM = {
  a: [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239],
  b: [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1],
  c: [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783],
  d: [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416],
};

/**
 * Standard normal deviate with upper-tail probability p (the inverse survival function): Acklam's
 * rational approximation (relative error 1.15e-9) refined by one Halley step on erfc.
 */
export function normalIsf(p: number): number {
  if (!(p > 0)) return Infinity;
  if (!(p < 1)) return -Infinity;
  const { a, b, c, d } = ACKLAM;
  // lower-tail quantile of probability 1 - p, written with p to keep the upper tail's precision
  const pl = 1 - p;
  let x: number;
  if (p < 0.02425) {
    const q = Math.sqrt(-2 * Math.log(p));
    x = -(((((c[0]! * q + c[1]!) * q + c[2]!) * q + c[3]!) * q + c[4]!) * q + c[5]!) / ((((d[0]! * q + d[1]!) * q + d[2]!) * q + d[3]!) * q + 1);
  } else if (pl < 0.02425) {
    const q = Math.sqrt(-2 * Math.log(pl));
    x = (((((c[0]! * q + c[1]!) * q + c[2]!) * q + c[3]!) * q + c[4]!) * q + c[5]!) / ((((d[0]! * q + d[1]!) * q + d[2]!) * q + d[3]!) * q + 1);
  } else {
    const q = pl - 0.5, r = q * q;
    x = ((((((a[0]! * r + a[1]!) * r + a[2]!) * r + a[3]!) * r + a[4]!) * r + a[5]!) * q) / (((((b[0]! * r + b[1]!) * r + b[2]!) * r + b[3]!) * r + b[4]!) * r + 1);
  }
  // x is the deviate of the lower tail 1 - p, i.e. of the upper tail p; refine on the upper tail
  const e = 0.5 * erfc(x / Math.SQRT2) - p;
  const u = e * Math.sqrt(2 * Math.PI) * Math.exp((x * x) / 2);
  return x + u / (1 + (x * u) / 2);
}

/** Complementary error function (Numerical Recipes 2nd ed. `erfcc`, fractional error < 1.2e-7): enough for the Halley step. */
function erfc(x: number): number {
  const z = Math.abs(x);
  const t = 1 / (1 + 0.5 * z);
  const r = t * Math.exp(-z * z - 1.26551223 + t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (-0.18628806 + t * (0.27886807 + t * (-1.13520398 + t * (1.48851587 + t * (-0.82215223 + t * 0.17087277)))))))));
  return x >= 0 ? r : 2 - r;
}

/** q25 / q50 of a Gamma(a) law (scale-free). */
function quartileRatio(a: number): number {
  return gammaQInv(a, 0.75) / gammaQInv(a, 0.5);
}

/**
 * The Gamma law of a slice's noise: shape from the ratio of the lower quartile to the median of the
 * valid values (bisection on log shape over [0.05, 1e4]), scale from the median. Null when fewer than
 * 16 valid values or no spread (no law to fit).
 */
export function fitNoiseLaw(values: Float32Array, nodata: number): NoiseLaw | null {
  const q = validQuantiles(values, nodata, QUARTILES) ?? validQuartilesInJs(values, nodata);
  return q.count < 16 ? null : noiseLawOf(q.quantiles[0]!, q.quantiles[1]!, q.count);
}

/** The lower quartile and the median of a slice's valid values, selected one after the other in one array. */
const QUARTILES = [0.25, 0.5] as const;

/** `validQuantiles` of `QUARTILES` in JavaScript (none worked out under 16 values): where WebAssembly does not run, and the kernels' reference in the tests. */
export function validQuartilesInJs(values: Float32Array, nodata: number): { quantiles: number[]; count: number } {
  let n = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== nodata && Number.isFinite(v)) n++;
  }
  if (n < 16) return { quantiles: [], count: n };
  const buf = new Float64Array(n);
  n = 0;
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v !== nodata && Number.isFinite(v)) buf[n++] = v;
  }
  // by selection, no sort: the same order statistics (the values are energies, so the sign of a zero,
  // which a sort orders and a selection does not, never reaches a quartile the law accepts)
  return { quantiles: QUARTILES.map((q) => quantileInPlace(buf, q)), count: n };
}

/** The Gamma law of quartiles q25 and q50 of n valid values (`fitNoiseLaw`). */
function noiseLawOf(q25: number, q50: number, n: number): NoiseLaw | null {
  if (!(q50 > 0) || !(q25 > 0) || !(q25 < q50)) return null;
  const r = q25 / q50;
  let lo = Math.log(0.05), hi = Math.log(1e4);
  if (r <= quartileRatio(Math.exp(lo))) hi = lo;
  else if (r >= quartileRatio(Math.exp(hi))) lo = hi;
  for (let i = 0; i < 60 && hi - lo > 1e-6; i++) {
    const m = 0.5 * (lo + hi);
    if (quartileRatio(Math.exp(m)) < r) lo = m;
    else hi = m;
  }
  const shape = Math.exp(0.5 * (lo + hi));
  return { shape, scale: q50 / gammaQInv(shape, 0.5), count: n };
}

/** Mean noise energy of a law (shape x scale). */
export const noiseMean = (law: NoiseLaw): number => law.shape * law.scale;

/**
 * Score of each cell against a noise law: the standard normal deviate with the same upper-tail
 * probability as the cell's value under the law (z = Phi^-1(1 - Q(shape, v / scale))), so a score
 * means the same false-alarm probability on every slice whatever its law. Capped at 38 (p ~ 1e-316).
 * Nodata and non-finite cells get NaN.
 *
 * With `floor`, scores below it are not worked out: a cell whose value lies below the value that scores
 * `floor` (`scoreCut`) gets the score of that cut instead, which is under `floor` as its own is (the
 * score grows with the value). A caller that only compares scores below `floor` with thresholds at or
 * above it (extraction's hysteresis) decides as with every score worked out. @default no floor
 */
export function noiseScores(values: Float32Array, nodata: number, law: NoiseLaw, out?: Float32Array, floor = -Infinity): Float32Array {
  const res = out ?? new Float32Array(values.length);
  const { shape, scale } = law;
  const lg = lnGamma(shape);
  const cut = scoreCut(shape, lg, floor);
  for (let i = 0; i < values.length; i++) {
    const v = values[i]!;
    if (v === nodata || !Number.isFinite(v)) {
      res[i] = Number.NaN;
      continue;
    }
    const x = v / scale;
    res[i] = x < cut.x ? cut.z : scoreOf(shape, lg, x);
  }
  return res;
}

/** The score of x under a Gamma(a, 1) law with ln Gamma(a) = lg (`noiseScores`). */
function scoreOf(a: number, lg: number, x: number): number {
  const q = gammaQOf(a, lg, x);
  return q > 0 ? Math.min(38, normalIsf(q)) : 38;
}

/**
 * A value x (of a Gamma(a, 1) variable) that scores below `floor`, and its score z: within 1e-9 of the
 * largest such, by bisection on log x over (e^-60, e^hi) with the scores as `noiseScores` works them
 * out. The scores grow with x (up to rounding, some 1e-9 where normalIsf changes branch): every value
 * below x scores below `floor`. x = -Infinity where even e^-60 does not (no cut).
 */
function scoreCut(a: number, lg: number, floor: number): { x: number; z: number } {
  let lo = -60, hi = Math.log(Math.max(10, 10 * a + 200));
  if (!(scoreOf(a, lg, Math.exp(lo)) < floor)) return { x: -Infinity, z: Number.NaN };
  if (scoreOf(a, lg, Math.exp(hi)) < floor) lo = hi;
  else {
    for (let i = 0; i < 200 && hi - lo > 1e-9; i++) {
      const m = 0.5 * (lo + hi);
      if (scoreOf(a, lg, Math.exp(m)) < floor) lo = m;
      else hi = m;
    }
  }
  const x = Math.exp(lo);
  return { x, z: scoreOf(a, lg, x) };
}

/** Peak strength of a value over the noise, dB of energy: 10 log10(v / mean noise energy). */
export function strengthDb(value: number, law: NoiseLaw): number {
  return 10 * Math.log10(Math.max(value, 1e-300) / noiseMean(law));
}
