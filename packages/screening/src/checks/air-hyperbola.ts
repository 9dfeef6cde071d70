import type { Member } from '@lamina/anomalies';
import { cellCentreX, cellCentreY } from '@lamina/slices';
import { type HyperbolaFit, type VelocityModel, C_M_PER_NS, depthAtVerticalTimeNs } from '@lamina/velocity';
import type { ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import { distanceTo } from '../reflectors';

/**
 * Test 4: members that coincide with a fitted hyperbola's apex in the slice of its depth.
 *
 * An above-ground object at horizontal distance r from a line draws t(x) = 2 sqrt(r^2 + x^2) / c on
 * it: a hyperbola of velocity c (K = 1) with apex time t0 = 2 r / c at the trace nearest the object.
 * So a fit counts as an air-wave hyperbola only when its velocity is c within
 * max(airVelocityTolerance x c, 2 sigma_v): a fit faster than light, or between air and soil, is the
 * misfit of a flat or flat-topped event (a slab, a pier top), not air, and gives no evidence. It weighs
 * `airHyperbola` when a plan reflector stands at r = c t0 / 2 from the apex within the slice's locus
 * tolerance, and only `airHyperbolaUnexplained` when none does (an unsurveyed object, or a misfit:
 * by itself not enough to call a candidate target air).
 */
export function hyperbolaHits(members: Member[], hyperbolas: HyperbolaFit[], model: VelocityModel, ctx: ScreenContext, airVelocityTolerance = 0.1): Map<number, Evidence> {
  const out = new Map<number, Evidence>();
  const g = ctx.grid;
  const tolM = Math.max(2 * g.cellSize * ctx.metresPerUnit, ctx.positionM);
  for (const h of hyperbolas) {
    if (h.flags && h.flags.length > 0 && h.origin !== 'above-ground') continue;
    const airLike = h.origin === 'above-ground' || h.permittivity < 2;
    const vTol = Math.max(airVelocityTolerance * C_M_PER_NS, 2 * (h.uncertaintyMPerNs ?? 0));
    if (airLike && !(Math.abs(h.velocityMPerNs - C_M_PER_NS) <= vTol)) continue;
    const z = depthAtVerticalTimeNs(model, h.t0Ns);
    let k = ctx.loci.findIndex((l) => z >= l.topM && z <= l.bottomM);
    if (k < 0) {
      let best = Infinity;
      ctx.loci.forEach((l, i) => {
        if (Math.abs(l.depthM - z) < best) {
          best = Math.abs(l.depthM - z);
          k = i;
        }
      });
    }
    // the reflector an air-wave hyperbola points at: r = c t0 / 2 from its apex
    let explainedBy: string | null = null;
    if (airLike) {
      const r = (C_M_PER_NS * h.t0Ns) / 2;
      const tol = ctx.loci[k]?.toleranceM ?? ctx.positionM;
      let bestMiss = Infinity;
      for (let i = 0; i < ctx.reflectors.length; i++) {
        if (!ctx.fields[i]) continue;
        const miss = Math.abs(distanceTo(ctx.reflectors[i]!, h.x, h.y) * ctx.metresPerUnit - r);
        if (miss <= tol && miss < bestMiss) {
          bestMiss = miss;
          explainedBy = ctx.reflectors[i]!.featureId;
        }
      }
    }
    // Only rows within tolM of the apex can hold a cell within tolM (cells are row-major, ascending):
    // the scan is cut to them, which gives the same dmin whenever dmin <= tolM.
    const rowFrom = Math.floor((g.originY - h.y) / g.cellSize - 0.5 - tolM / (g.cellSize * ctx.metresPerUnit)) - 1;
    const rowTo = Math.ceil((g.originY - h.y) / g.cellSize - 0.5 + tolM / (g.cellSize * ctx.metresPerUnit)) + 1;
    for (const m of members) {
      if (Math.abs(m.slice - k) > 1) continue;
      let dmin = Infinity;
      const end = lowerBound(m.cells, (rowTo + 1) * g.width);
      for (let i = lowerBound(m.cells, rowFrom * g.width); i < end; i++) {
        const c = m.cells[i]!;
        const row = (c / g.width) | 0;
        const x = cellCentreX(g, c - row * g.width), y = cellCentreY(g, row);
        dmin = Math.min(dmin, Math.hypot(x - h.x, y - h.y) * ctx.metresPerUnit);
      }
      if (dmin > tolM) continue;
      const e: Evidence = {
        test: airLike ? 'air-hyperbola' : 'soil-hyperbola',
        featureId: explainedBy,
        measured: dmin,
        expected: 0,
        tolerance: tolM,
        units: 'm',
        passed: true,
        weight: !airLike ? WEIGHTS.soilHyperbola : explainedBy ? WEIGHTS.airHyperbola : WEIGHTS.airHyperbolaUnexplained,
        slice: m.slice,
        detail:
          `hyperbola on line ${h.line} trace ${h.trace} (K ${h.permittivity.toFixed(2)}, ${h.origin}) apex ${dmin.toFixed(2)} m from slice ${m.slice} member` +
          (airLike ? (explainedBy ? `; ${explainedBy} stands at c t0/2 = ${((C_M_PER_NS * h.t0Ns) / 2).toFixed(2)} m from the apex` : `; no plan feature at c t0/2 = ${((C_M_PER_NS * h.t0Ns) / 2).toFixed(2)} m from the apex`) : ''),
      };
      const prev = out.get(m.id);
      if (!prev || e.weight > prev.weight) out.set(m.id, e);
    }
  }
  return out;
}

/** First index of ascending `a` whose value is >= v (a.length when none). */
export function lowerBound(a: Int32Array, v: number): number {
  let lo = 0, hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (a[mid]! < v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
