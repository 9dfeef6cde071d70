import { medianHigh } from '@lamina/stats';
import type { ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import { nearestSegmentAzimuth } from '../reflectors';
import type { MoveOutResult } from './move-out';

function angleDiff(a: number, b: number): number {
  const d = Math.abs(a - b) % 180;
  return Math.min(d, 180 - d);
}

/** Test 2: linear members parallel to the wall / edge / fence line at the predicted offset. */
export function edgeEvidence(mo: MoveOutResult, ctx: ScreenContext): Evidence | undefined {
  const refl = ctx.reflectors[mo.reflector]!;
  if (refl.segments.length === 0) return undefined;
  const lin = mo.fits.filter((f) => f.member.shape.kind === 'linear');
  if (lin.length === 0) return undefined;
  const diffs = lin.map((f) => angleDiff(ctx.groupDirectionDeg?.get(f.member.id) ?? f.member.shape.directionDeg, nearestSegmentAzimuth(refl, f.member.x, f.member.y)));
  const ok = lin.filter((f, i) => f.passed && diffs[i]! <= ctx.parallelToleranceDeg).length;
  const med = medianHigh(diffs);
  const passed = ok / lin.length >= 0.5;
  return {
    test: 'edge-alignment',
    featureId: refl.featureId,
    measured: med,
    expected: 0,
    tolerance: ctx.parallelToleranceDeg,
    units: 'deg',
    passed,
    weight: passed ? WEIGHTS.edge : 0,
    detail: `${ok} of ${lin.length} linear members parallel to ${refl.kind} ${refl.featureId} (median angle ${med.toFixed(1)} deg) at the predicted offset`,
  };
}
