import { makeMember, type Member } from '@lamina/anomalies';
import { cellCentreX, cellCentreY, type SliceStack } from '@lamina/slices';
import type { ScreenContext } from './tests';
import type { Reflector } from './reflectors';
import { locusAtHeight } from './context';

/**
 * Signed distance (m) of cell c from a reflector's locus of radius r. Every element of a reflector
 * (each post of a fence, each edge of a footprint, each segment of a wall) returns its own air wave,
 * so the locus is the union of the elements' loci and the cell takes the one it is nearest to: the
 * signed value of min_k | d_k - rho_k |. Unmigrated, rho = r, and for one point or one segment this is d - r.
 *
 * Stack migrated along lines of unit direction u with the soil velocity v (k = v / c, ctx.migration):
 * the air event t = 2 d / c has the time dip of a reflector dipping at sin(theta) = k cos(phi) (phi
 * the angle between the line and the element's normal), and migration moves it up-dip to
 * d_m = d (1 - k^2 cos^2 phi) at depth z_m = k d cos(theta). In the slice at z = z_m (r = z c / v) a
 * straight element's locus is therefore at rho = r sqrt(1 - k^2 cos^2 phi). (For a point at
 * perpendicular offset p from the line the same mapping gives rho = sqrt((1 - k^2) r^2 + k^2 p^2), but
 * on the sample sites that made post and column rings match worse, not better: points keep rho = r
 * until that is understood.)
 */
export function cellResidual(c: number, refl: Reflector, field: Float32Array, radiusM: number, ctx: ScreenContext): number {
  const pts = refl.points, seg = refl.segments;
  const nElements = pts.length / 2 + seg.length / 4;
  const mig = ctx.migration;
  if (nElements <= 1 && (!mig || seg.length === 0)) return field[c]! - radiusM;
  const g = ctx.grid;
  const mpu = ctx.metresPerUnit;
  const row = (c / g.width) | 0;
  const x = cellCentreX(g, c - row * g.width), y = cellCentreY(g, row);
  const k2 = mig ? mig.k2 : 0, ux = mig ? mig.ux : 0, uy = mig ? mig.uy : 0;
  let best = Infinity;
  for (let k = 0; k < pts.length; k += 2) {
    const r = Math.hypot(x - pts[k]!, y - pts[k + 1]!) * mpu - radiusM;
    if (Math.abs(r) < Math.abs(best)) best = r;
  }
  for (let i = 0; i < seg.length; i += 4) {
    const ax = seg[i]!, ay = seg[i + 1]!, dx = seg[i + 2]! - ax, dy = seg[i + 3]! - ay;
    const l2 = dx * dx + dy * dy;
    let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    let rho = radiusM;
    if (mig && l2 > 0) {
      // cos(phi) = |u . n| = |u x segment direction|
      const cosPhi = Math.abs(ux * dy - uy * dx) / Math.sqrt(l2);
      rho = radiusM * Math.sqrt(Math.max(0, 1 - k2 * cosPhi * cosPhi));
    }
    const r = Math.hypot(x - ax - t * dx, y - ay - t * dy) * mpu - rho;
    if (Math.abs(r) < Math.abs(best)) best = r;
  }
  return best;
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
      const l = locusAtHeight(ctx.loci[m.slice]!, refl.heightM);
      if (!Number.isFinite(l.radiusM)) continue;
      const band = l.bandHalfM + ctx.positionM;
      let nearest = Infinity;
      for (const c of m.cells) nearest = Math.min(nearest, field[c]!);
      if (nearest > l.radiusM + band) continue;
      const inside: number[] = [], off: number[] = [];
      const res = new Map<number, number>();
      for (const c of m.cells) {
        const v = cellResidual(c, refl, field, l.radiusM, ctx);
        res.set(c, v);
        (Math.abs(v) <= band ? inside : off).push(c);
      }
      const n = m.cells.length;
      if (inside.length < 0.3 * n || off.length < minCells) continue;
      const z = scores[m.slice]!;
      // a piece is cut when it is a fifth of the member, or a detection by itself (it holds a seed),
      // so a pipe crossing a dense field of loci is not swallowed by it
      const far = subComponents(off, stack.grid.width).filter(
        (p) => p.length >= minCells && (p.length >= 0.2 * n || p.some((c) => z[c]! >= seedScore)) && p.some((c) => Math.abs(res.get(c)!) >= 2 * band),
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
