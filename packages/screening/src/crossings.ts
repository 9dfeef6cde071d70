import { makeMember, type Member } from '@lamina/anomalies';
import type { SliceStack } from '@lamina/slices';
import { locusOf, type ScreenContext } from './context';
import { locusResiduals } from './locus-residual';

/** Place of cell c in ascending `cells`, which holds it. */
function indexOf(cells: Int32Array, c: number): number {
  let lo = 0, hi = cells.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (cells[mid]! < c) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** 8-connected components of a set of cells. */
function subComponents(cells: number[], width: number): number[][] {
  const idx = new Map<number, number>();
  cells.forEach((c, i) => idx.set(c, i));
  const seen = new Uint8Array(cells.length);
  const out: number[][] = [];
  for (let i = 0; i < cells.length; i++) {
    if (seen[i]) continue;
    seen[i] = 1;
    const comp: number[] = [];
    const stack = [cells[i]!];
    while (stack.length) {
      const c = stack.pop()!;
      comp.push(c);
      const row = (c / width) | 0, col = c - row * width;
      for (let dr = -1; dr <= 1; dr++)
        for (let dc = -1; dc <= 1; dc++) {
          if (dr === 0 && dc === 0) continue;
          const cc = col + dc;
          if (cc < 0 || cc >= width) continue;
          const j = idx.get((row + dr) * width + cc);
          if (j !== undefined && !seen[j]) {
            seen[j] = 1;
            stack.push(cells[j]!);
          }
        }
    }
    out.push(comp.sort((a, b) => a - b));
  }
  return out;
}

/**
 * A buried target crossing an air-wave band in one slice makes one connected component. Where a
 * member has at least 30 % of its cells in a reflector's locus band (|residual| <= band half-width +
 * position tolerance) and pieces of at least `minCells` cells reaching beyond twice that band that
 * are 20 % of it or hold a cell at `seedScore` (a detection by themselves, as a pipe leaving a dense
 * field of loci is), those pieces become members of their own; the rest stays one member. Returns the new
 * member list (ids renumbered) and how many members were cut.
 */
export function separateCrossings(members: Member[], stack: SliceStack, scores: Float32Array[], ctx: ScreenContext, minCells: number, metresPerUnit: number, seedScore = Infinity): { members: Member[]; cut: number } {
  const out: Member[] = [];
  let cut = 0;
  for (const m of members) {
    let pieces: number[][] | undefined;
    for (let r = 0; r < ctx.reflectors.length && !pieces; r++) {
      const field = ctx.fields[r];
      if (!field) continue;
      const refl = ctx.reflectors[r]!;
      const l = locusOf(ctx, refl, m.slice);
      if (!Number.isFinite(l.radiusM)) continue;
      const band = l.bandHalfM + ctx.positionM;
      let nearest = Infinity;
      for (let ci = 0; ci < m.cells.length; ci++) nearest = Math.min(nearest, field[m.cells[ci]!]!);
      if (nearest > l.radiusM + band) continue;
      const inside: number[] = [], off: number[] = [];
      const residuals = locusResiduals(refl, field, l.radiusM, ctx, m.cells);
      for (let ci = 0; ci < m.cells.length; ci++) (Math.abs(residuals[ci]!) <= band ? inside : off).push(m.cells[ci]!);
      const n = m.cells.length;
      if (inside.length < 0.3 * n || off.length < minCells) continue;
      const z = scores[m.slice]!;
      // a piece is cut when it is a fifth of the member, or a detection by itself (it holds a seed),
      // so a pipe crossing a dense field of loci is not swallowed by it
      const far = subComponents(off, stack.grid.width).filter(
        (p) => p.length >= minCells && (p.length >= 0.2 * n || p.some((c) => z[c]! >= seedScore)) && p.some((c) => Math.abs(residuals[indexOf(m.cells, c)]!) >= 2 * band),
      );
      if (far.length === 0) continue;
      const farSet = new Set(far.flat());
      pieces = [m.cells.filter((c) => !farSet.has(c)) as unknown as number[], ...far];
      pieces[0] = Array.from(pieces[0]!);
    }
    if (!pieces) {
      out.push(m);
      continue;
    }
    cut++;
    for (const p of pieces) {
      if (p.length === 0) continue;
      const piece = makeMember(0, m.slice, Int32Array.from(p), stack, scores[m.slice]!, { metresPerUnit }, m.noiseEnergy);
      if (m.layer) piece.layer = true;
      out.push(piece);
    }
  }
  out.forEach((m, i) => (m.id = i));
  return { members: out, cut };
}
