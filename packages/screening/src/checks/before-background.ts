import { medianHigh } from '@lamina/stats';
import { locusOf, type ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import type { MoveOutResult } from './move-out';

/** Energy on the locus in the stack made before background removal (flat air events survive there). */
export function beforeBackgroundEvidence(mo: MoveOutResult, ctx: ScreenContext, threshold: number): Evidence | undefined {
  const field = ctx.fields[mo.reflector];
  if (!ctx.beforeScores || !field) return undefined;
  const refl = ctx.reflectors[mo.reflector]!;
  const g = ctx.grid;
  let best: Evidence | undefined;
  for (const f of mo.fits) {
    const l = locusOf(ctx, refl, f.member.slice);
    const sc = ctx.beforeScores[f.member.slice];
    if (!sc || Math.abs(f.residualM) > l.toleranceM) continue;
    // band cells within two metres of the member's cells
    const reach = Math.ceil(2 / (g.cellSize * ctx.metresPerUnit));
    const m = f.member;
    let c0 = Infinity, c1 = -Infinity, r0 = Infinity, r1 = -Infinity;
    for (let ci = 0; ci < m.cells.length; ci++) {
      const c = m.cells[ci]!;
      const r = (c / g.width) | 0, cc = c - r * g.width;
      c0 = Math.min(c0, cc); c1 = Math.max(c1, cc); r0 = Math.min(r0, r); r1 = Math.max(r1, r);
    }
    const vals: number[] = [];
    for (let r = Math.max(0, r0 - reach); r <= Math.min(g.height - 1, r1 + reach); r++)
      for (let c = Math.max(0, c0 - reach); c <= Math.min(g.width - 1, c1 + reach); c++) {
        const k = r * g.width + c;
        if (Math.abs(field[k]! - l.radiusM) <= l.bandHalfM && Number.isFinite(sc[k]!)) vals.push(sc[k]!);
      }
    if (vals.length < 4) continue;
    const med = medianHigh(vals);
    const passed = med >= threshold;
    if (!best || (passed && !best.passed)) {
      best = {
        test: 'before-background',
        featureId: refl.featureId,
        measured: med,
        expected: threshold,
        tolerance: 0,
        units: 'robust z',
        passed,
        weight: passed ? WEIGHTS.beforeBackground : 0,
        slice: m.slice,
        detail: `median robust score ${med.toFixed(1)} on the ${refl.featureId} locus band before background removal (slice ${m.slice})`,
      };
    }
  }
  return best;
}
