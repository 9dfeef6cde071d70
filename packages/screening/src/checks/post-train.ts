import type { Anomaly3D, Member } from '@lamina/anomalies';
import type { ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import { alongDistance, distanceTo } from '../reflectors';
import { fitMember } from './move-out';

/** Result of the post-spacing test for one member (test 3). */
export interface PostTrainHit {
  member: Member;
  featureId: string;
  spacingM: number;
  measuredM: number;
  coherence: number;
  onRing: boolean;
  passed: boolean;
}

/**
 * Test 3: per slice and fence with posts, the members near the fence (within the locus band plus
 * half a spacing) projected onto the fence line; their along-fence positions s_i are tested for the
 * post period p by the Rayleigh coherence R = |mean exp(2 pi i s_i / p)| (1 for a perfect train,
 * about 1/sqrt(n) for random positions; a train with missing posts still scores 1). A train passes
 * with n >= 3 and R >= 0.7; a member passes when its train does and it lies on the ring of a post.
 * Members far from the fence are never considered: regular spacing alone is not air.
 */
export function postTrains(members: Member[], ctx: ScreenContext): Map<number, PostTrainHit> {
  const hits = new Map<number, PostTrainHit>();
  const mpu = ctx.metresPerUnit;
  for (let r = 0; r < ctx.reflectors.length; r++) {
    const posts = ctx.reflectors[r]!;
    const field = ctx.fields[r];
    if (posts.source !== 'posts' || !posts.postSpacingM || !field) continue;
    const line = ctx.reflectors.find((q) => q.featureId === posts.featureId && q.source === 'line');
    if (!line) continue;
    const p = posts.postSpacingM;
    const bySlice = new Map<number, Member[]>();
    for (const m of members) {
      const l = ctx.loci[m.slice]!;
      if (distanceTo(line, m.x, m.y) * mpu > l.radiusM + l.toleranceM + 0.5 * p) continue;
      const list = bySlice.get(m.slice);
      if (list) list.push(m);
      else bySlice.set(m.slice, [m]);
    }
    for (const [, list] of bySlice) {
      if (list.length < 3) continue;
      const s = list.map((m) => alongDistance(line, m.x, m.y) * mpu);
      let re = 0, im = 0;
      for (const v of s) {
        re += Math.cos((2 * Math.PI * v) / p);
        im += Math.sin((2 * Math.PI * v) / p);
      }
      const coherence = Math.hypot(re, im) / s.length;
      const sorted = [...s].sort((a, b) => a - b);
      const gaps: number[] = [];
      for (let i = 1; i < sorted.length; i++) {
        const g = sorted[i]! - sorted[i - 1]!;
        const k = Math.max(1, Math.round(g / p));
        if (g > 0.25 * p) gaps.push(g / k);
      }
      gaps.sort((a, b) => a - b);
      const measuredM = gaps.length ? gaps[gaps.length >> 1]! : NaN;
      const train = coherence >= 0.7;
      for (const m of list) {
        const fit = fitMember(m, posts, field, ctx);
        const onRing = Math.abs(fit.residualM) <= ctx.loci[m.slice]!.toleranceM;
        const prev = hits.get(m.id);
        const hit = { member: m, featureId: posts.featureId, spacingM: p, measuredM, coherence, onRing, passed: train && onRing };
        if (!prev || (hit.passed && !prev.passed)) hits.set(m.id, hit);
      }
    }
  }
  return hits;
}

export function postEvidence(a: Anomaly3D, hits: Map<number, PostTrainHit>): Evidence | undefined {
  const mine = a.members.map((m) => hits.get(m.id)).filter((h): h is PostTrainHit => !!h);
  if (mine.length === 0) return undefined;
  const h = mine.find((x) => x.passed) ?? mine[0]!;
  return {
    test: 'post-spacing',
    featureId: h.featureId,
    measured: h.measuredM,
    expected: h.spacingM,
    tolerance: 0.15 * h.spacingM,
    units: 'm',
    passed: h.passed,
    weight: h.passed ? WEIGHTS.postSpacing : 0,
    slice: h.member.slice,
    detail: `train along fence ${h.featureId}: coherence ${h.coherence.toFixed(2)} at the ${h.spacingM} m post spacing (pass >= 0.7), member ${h.onRing ? 'on' : 'not on'} a post ring`,
  };
}
