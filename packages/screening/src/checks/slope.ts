import { median } from '@lamina/stats';
import { locusOf, type ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import type { MoveOutResult } from './move-out';

/** Least-squares slope of y on x with its standard error (NaN when it cannot be estimated). */
export function slope(x: number[], y: number[]): { b: number; se: number; rms: number } {
  const n = x.length;
  const mx = x.reduce((s, v) => s + v, 0) / n, my = y.reduce((s, v) => s + v, 0) / n;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i]! - mx) ** 2;
    sxy += (x[i]! - mx) * (y[i]! - my);
  }
  const b = sxx > 0 ? sxy / sxx : NaN;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (y[i]! - my - b * (x[i]! - mx)) ** 2;
  const rms = Math.sqrt(ss / n);
  const se = n > 2 && sxx > 0 ? Math.sqrt(ss / (n - 2) / sxx) : NaN;
  return { b, se, rms };
}

/** Test 1 (slope part): fitted dr/dz of the member distances against c / v over the depth range. */
export function slopeEvidence(mo: MoveOutResult, ctx: ScreenContext): Evidence | undefined {
  // one point per slice (the median over its members), so a slice with many pieces does not dominate
  const per = new Map<number, number[]>();
  for (const f of mo.fits) {
    const l = per.get(f.member.slice);
    if (l) l.push(f.medianM);
    else per.set(f.member.slice, [f.medianM]);
  }
  const ks = [...per.keys()].sort((p, q) => p - q);
  const zs = ks.map((k) => ctx.loci[k]!.depthM);
  const ds = ks.map((k) => {
    return median(per.get(k)!);
  });
  const zmin = Math.min(...zs), zmax = Math.max(...zs);
  if (zmax - zmin <= 0) return undefined;
  const refl = ctx.reflectors[mo.reflector]!;
  const lmin = locusOf(ctx, refl, ks[zs.indexOf(zmin)]!), lmax = locusOf(ctx, refl, ks[zs.indexOf(zmax)]!);
  const expected = (lmax.radiusM - lmin.radiusM) / (zmax - zmin);
  if (!Number.isFinite(expected)) return undefined;
  const fit = slope(zs, ds);
  const se = Number.isFinite(fit.se) ? fit.se : (Math.SQRT2 * ctx.positionM) / (zmax - zmin);
  const tolerance = ctx.rateTolerance * expected + 2 * se;
  // A line-bound strip sits on its line for as long as the line lies within the locus band: an air event
  // on one line spans the depth over which the band (half-width b) sweeps past it, a shift of 2 (b + position).
  const band = ctx.lineBound ? 2 * (0.5 * (lmin.bandHalfM + lmax.bandHalfM) + ctx.positionM) : 2 * ctx.positionM;
  const measurable = expected * (zmax - zmin) >= band && 2 * se <= 0.5 * expected;
  const passed = Math.abs(fit.b - expected) <= tolerance;
  return {
    test: 'move-out-slope',
    featureId: refl.featureId,
    measured: fit.b,
    expected,
    tolerance,
    units: 'm/m',
    passed: measurable && passed,
    weight: !measurable ? 0 : passed ? WEIGHTS.slopePass : WEIGHTS.slopeFail,
    detail: `${ks.length} slices over ${zmin.toFixed(2)}-${zmax.toFixed(2)} m: dr/dz ${fit.b.toFixed(2)} +- ${se.toFixed(2)} against c/v ${expected.toFixed(2)}${measurable ? '' : ' (inconclusive: shift too small against position error)'}`,
  };
}
