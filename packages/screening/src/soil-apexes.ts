import { fresnelRadiusM, makeMember, type Member } from '@lamina/anomalies';
import { cellCentreX, cellCentreY, type SliceStack } from '@lamina/slices';
import { ABOVE_GROUND_MAX_PERMITTIVITY, depthAtVerticalTimeNs, type HyperbolaFit, type VelocityModel } from '@lamina/velocity';
import { locusOf, type ScreenContext } from './context';
import { lowerBound } from './checks/air-hyperbola';
import { locusResiduals } from './locus-residual';

/** A soil-velocity fit's apex in the slices: plan position (site CRS), depth and the slice that holds it. */
export interface SoilApex {
  line: string;
  x: number;
  y: number;
  depthM: number;
  slice: number;
  /** How far from it a member's cell counts as on it, m (`apexReachM`). */
  reachM: number;
}

/**
 * The apexes of the fits that read the soil: subsurface, unflagged, not air-like (K at least
 * `ABOVE_GROUND_MAX_PERMITTIVITY`, 2), each in the slice whose depth range holds its apex depth (none
 * for an apex outside every slice). No air wave draws a hyperbola at soil velocity: an above-ground object's is
 * at c (air-hyperbola.ts), so such an apex marks something in the ground.
 */
export function soilApexes(hyperbolas: readonly HyperbolaFit[], model: VelocityModel, ctx: ScreenContext, options: Pick<ApexOptions, 'velocityMPerNs' | 'frequencyMHz'>): SoilApex[] {
  const out: SoilApex[] = [];
  for (const h of hyperbolas) {
    if (h.origin !== 'subsurface' || (h.flags && h.flags.length > 0) || !(h.permittivity >= ABOVE_GROUND_MAX_PERMITTIVITY)) continue;
    const z = depthAtVerticalTimeNs(model, h.t0Ns);
    const slice = ctx.loci.findIndex((l) => z >= l.topM && z <= l.bottomM);
    if (slice >= 0) out.push({ line: h.line, x: h.x, y: h.y, depthM: z, slice, reachM: apexReachM(z, ctx, options.velocityMPerNs, options.frequencyMHz) });
  }
  return out;
}

/** How far from a soil apex a member's cell counts as on it, m: the first Fresnel zone's radius at the apex depth (a buried reflector's response in a slice is that wide about its apex), at least the position tolerance. */
export function apexReachM(depthM: number, ctx: ScreenContext, velocityMPerNs: number, frequencyMHz?: number): number {
  return Math.max(ctx.positionM, frequencyMHz && frequencyMHz > 0 ? fresnelRadiusM(depthM, velocityMPerNs, frequencyMHz) : 0);
}

export interface ApexOptions {
  /** Survey lines whose apexes a member must hold. */
  minLines: number;
  metresPerUnit: number;
  /** Site velocity and antenna frequency, for the reach (`apexReachM`). */
  velocityMPerNs: number;
  frequencyMHz?: number;
}

/** The soil apexes within reach of some cell of member `m`, in its own slice. */
function apexesOn(m: Member, apexes: readonly SoilApex[], stack: SliceStack, options: Pick<ApexOptions, 'metresPerUnit'>): { on: SoilApex[]; near: (a: SoilApex, c: number) => boolean } {
  const g = stack.grid;
  const near = (a: SoilApex, c: number) => {
    const row = (c / g.width) | 0;
    return Math.hypot(cellCentreX(g, c - row * g.width) - a.x, cellCentreY(g, row) - a.y) * options.metresPerUnit <= a.reachM;
  };
  // only the member's rows within reach of the apex can hold such a cell (cells are row-major, ascending)
  const reaches = (a: SoilApex) => {
    const rowA = (g.originY - a.y) / g.cellSize - 0.5, rows = a.reachM / (g.cellSize * options.metresPerUnit);
    const end = lowerBound(m.cells, (Math.ceil(rowA + rows) + 2) * g.width);
    for (let i = lowerBound(m.cells, Math.max(0, Math.floor(rowA - rows) - 1) * g.width); i < end; i++) if (near(a, m.cells[i]!)) return true;
    return false;
  };
  const on = apexes.filter((a) => a.slice === m.slice && reaches(a));
  return { on, near };
}

/** For each member holding soil apexes of at least `minLines` survey lines in its own slice: those lines. */
export function apexLines(members: readonly Member[], apexes: readonly SoilApex[], stack: SliceStack, options: Pick<ApexOptions, 'minLines' | 'metresPerUnit'>): Map<number, Set<string>> {
  const out = new Map<number, Set<string>>();
  if (apexes.length === 0) return out;
  for (const m of members) {
    const lines = new Set(apexesOn(m, apexes, stack, options).on.map((a) => a.line));
    if (lines.size >= options.minLines) out.set(m.id, lines);
  }
  return out;
}

/** The largest share of `cells` on one reflector's locus band in slice `slice` (|residual| within the band half-width and the position tolerance). */
function bandShare(cells: Int32Array, slice: number, ctx: ScreenContext): number {
  let best = 0;
  for (let r = 0; r < ctx.reflectors.length; r++) {
    const field = ctx.fields[r];
    if (!field) continue;
    const refl = ctx.reflectors[r]!;
    const l = locusOf(ctx, refl, slice);
    if (!Number.isFinite(l.radiusM)) continue;
    const band = l.bandHalfM + ctx.positionM;
    const res = locusResiduals(refl, field, l.radiusM, ctx, cells);
    let n = 0;
    for (let i = 0; i < res.length; i++) if (Math.abs(res[i]!) <= band) n++;
    best = Math.max(best, n / Math.max(1, res.length));
  }
  return best;
}

/**
 * Cuts a buried object out of a member that an air-wave band (a ring, a wall's strip) shares with it in
 * one slice. Where the apexes of soil-velocity fits (`soilApexes`) on at least `minLines` survey lines lie
 * within reach (`apexReachM`) of a member's cells in their own slice, the member's cells within reach of
 * those apexes become a member of their own when both it and the rest keep `minCells` cells and at
 * least half of the rest lies on one reflector's locus band (`bandShare`); the rest stays one member
 * (what of the band is left). A member that no band holds is a buried object's own and is not cut.
 * Returns the new member list (ids renumbered) and how many members were cut.
 */
export function carveSoilApexes(members: Member[], apexes: readonly SoilApex[], stack: SliceStack, scores: Float32Array[], ctx: ScreenContext, options: ApexOptions & { minCells: number }): { members: Member[]; cut: number } {
  const out: Member[] = [];
  let cut = 0;
  for (const m of members) {
    const { on, near } = apexesOn(m, apexes, stack, options);
    if (new Set(on.map((a) => a.line)).size < options.minLines) {
      out.push(m);
      continue;
    }
    const inside: number[] = [], rest: number[] = [];
    for (let i = 0; i < m.cells.length; i++) {
      const c = m.cells[i]!;
      (on.some((a) => near(a, c)) ? inside : rest).push(c);
    }
    // only where an air-wave band holds the rest: a buried object's own member is not cut
    if (inside.length < options.minCells || rest.length < options.minCells || bandShare(Int32Array.from(rest), m.slice, ctx) < 0.5) {
      out.push(m);
      continue;
    }
    cut++;
    for (const p of [inside, rest]) {
      const piece = makeMember(0, m.slice, Int32Array.from(p), stack, scores[m.slice]!, { metresPerUnit: options.metresPerUnit }, m.noiseEnergy);
      if (m.layer) piece.layer = true;
      out.push(piece);
    }
  }
  out.forEach((m, i) => (m.id = i));
  return { members: out, cut };
}
