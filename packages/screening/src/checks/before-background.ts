import { medianHigh } from '@lamina/stats';
import { locusOf, type ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import type { MoveOutResult } from './move-out';
import { wasmLocusBandMedian } from '../screen-wasm';

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
    const box = [Math.max(0, r0 - reach), Math.min(g.height - 1, r1 + reach), Math.max(0, c0 - reach), Math.min(g.width - 1, c1 + reach)] as const;
    const band = wasmLocusBandMedian(field, sc, g.width, ...box, l.radiusM, l.bandHalfM) ?? locusBandMedian(field, sc, g.width, ...box, l.radiusM, l.bandHalfM);
    if (band.count < 4) continue;
    const med = band.median;
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

/**
 * The scores `sc` of the cells in rows r0..r1 and columns c0..c1 (a grid `width` wide) on the locus band
 * (`field` within `bandHalfM` of `radiusM`) that are finite: their count and `medianHigh`. In
 * JavaScript: where WebAssembly does not run (`wasmLocusBandMedian`), and its reference in the tests.
 */
export function locusBandMedian(field: Float32Array, sc: Float32Array, width: number, r0: number, r1: number, c0: number, c1: number, radiusM: number, bandHalfM: number): { count: number; median: number } {
  const vals: number[] = [];
  for (let r = r0; r <= r1; r++)
    for (let c = c0; c <= c1; c++) {
      const k = r * width + c;
      if (Math.abs(field[k]! - radiusM) <= bandHalfM && Number.isFinite(sc[k]!)) vals.push(sc[k]!);
    }
  return { count: vals.length, median: medianHigh(vals) };
}
