import type { Anomaly3D, Member } from '@lamina/anomalies';
import { quantileSorted } from '@lamina/stats';
import { locusOf, type ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import { locusResiduals } from '../locus-residual';
import type { Reflector } from '../reflectors';

/** What `fitMember` reads of a member: its cells and its slice. */
export type MemberCells = Pick<Member, 'cells' | 'slice'>;

export interface MemberFit<M extends MemberCells = Member> {
  member: M;
  medianM: number;
  iqrM: number;
  residualM: number;
  passed: boolean;
}

export interface MoveOutResult {
  reflector: number;
  fits: MemberFit[];
  fraction: number;
}

/** Cells sampled per member, at most (the residual quantiles need no more). */
export const MAX_SAMPLES = 400;

/**
 * Signed residuals (m) of a member's cells from a reflector's locus at radius r (see cellResidual).
 */
function memberResiduals(m: MemberCells, refl: Reflector, field: Float32Array, radiusM: number, ctx: ScreenContext): Float64Array {
  const step = Math.max(1, Math.ceil(m.cells.length / MAX_SAMPLES));
  return locusResiduals(refl, field, radiusM, ctx, m.cells, step).sort();
}

/** Member against one reflector's locus at the member's depth. */
export function fitMember<M extends MemberCells>(m: M, refl: Reflector, field: Float32Array, ctx: ScreenContext): MemberFit<M> {
  const locus = locusOf(ctx, refl, m.slice);
  if (!Number.isFinite(locus.radiusM)) return { member: m, medianM: NaN, iqrM: NaN, residualM: Infinity, passed: false };
  const res = memberResiduals(m, refl, field, locus.radiusM, ctx);
  const residualM = quantileSorted(res, 0.5);
  const medianM = locus.radiusM + residualM;
  const iqrM = quantileSorted(res, 0.75) - quantileSorted(res, 0.25);
  // on the locus, and shaped like it: the cells keep to the band rather than crossing it
  const passed = Math.abs(residualM) <= locus.toleranceM && iqrM <= 2 * (locus.bandHalfM + ctx.positionM);
  return { member: m, medianM, iqrM, residualM, passed };
}


/** Test 1 (distance part): the reflector whose locus holds most members of the anomaly. */
export function bestMoveOut(a: Anomaly3D, ctx: ScreenContext): MoveOutResult | undefined {
  let best: MoveOutResult | undefined;
  let bestResidual = Infinity;
  let reach = 0;
  for (const m of a.members) reach = Math.max(reach, ctx.loci[m.slice]!.radiusM + 2 * ctx.loci[m.slice]!.toleranceM);
  for (let r = 0; r < ctx.reflectors.length; r++) {
    const field = ctx.fields[r];
    if (!field) continue;
    let near = Infinity;
    for (let i = 0; i < a.cells.length; i++) near = Math.min(near, field[a.cells[i]!]!);
    if (near > reach) continue;
    const fits = a.members.map((m) => fitMember(m, ctx.reflectors[r]!, field, ctx));
    const fraction = fits.filter((f) => f.passed).length / fits.length;
    const residual = fits.reduce((s, f) => s + Math.abs(f.residualM) / locusOf(ctx, ctx.reflectors[r]!, f.member.slice).toleranceM, 0) / fits.length;
    if (!best || fraction > best.fraction || (fraction === best.fraction && residual < bestResidual)) {
      best = { reflector: r, fits, fraction };
      bestResidual = residual;
    }
  }
  return best;
}

/**
 * Log-odds weight of one member on (or off) a locus. A member on the locus weighs `WEIGHTS.moveOut`
 * less the log of how much wider the locus band is than a standing object's in that slice: an overhead
 * object's band widens near its onset (`locusAtHeight`), and a buried object falls in a band w times
 * wider w times as often by chance (the likelihood ratio of the position falls as 1 / w). Shared by the
 * anomaly's n members.
 */
export function moveOutWeight(passed: boolean, toleranceM: number, standingToleranceM: number, n: number): number {
  if (!passed) return -WEIGHTS.moveOut / n;
  const widening = standingToleranceM > 0 && toleranceM > standingToleranceM ? toleranceM / standingToleranceM : 1;
  return Math.max(0, WEIGHTS.moveOut - Math.log(widening)) / n;
}

export function moveOutEvidence(mo: MoveOutResult, ctx: ScreenContext): Evidence[] {
  const refl = ctx.reflectors[mo.reflector]!;
  const n = mo.fits.length;
  return mo.fits.map((f) => {
    const l = locusOf(ctx, refl, f.member.slice);
    const standing = ctx.loci[f.member.slice]!;
    return {
      test: 'move-out',
      featureId: refl.featureId,
      measured: f.medianM,
      expected: l.radiusM,
      tolerance: l.toleranceM,
      units: 'm',
      passed: f.passed,
      weight: moveOutWeight(f.passed, l.toleranceM, standing.toleranceM, n),
      slice: f.member.slice,
      detail: `slice ${f.member.slice} (${l.topM.toFixed(2)}-${l.bottomM.toFixed(2)} m): median distance to ${refl.kind}${refl.source === 'posts' ? ' posts' : ''} ${refl.featureId} ${f.medianM.toFixed(2)} m (IQR ${f.iqrM.toFixed(2)} m), locus z c/v ${l.radiusM.toFixed(2)} m`,
    } satisfies Evidence;
  });
}
