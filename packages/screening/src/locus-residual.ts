import { cellCentreX, cellCentreY } from '@lamina/slices';
import type { ScreenContext } from './context';
import type { Reflector } from './reflectors';
import { wasmLocusResiduals } from './screen-wasm';

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
  return locusResidual(refl, field, radiusM, ctx)(c);
}

/**
 * `cellResidual` of many cells against one locus: each segment's locus radius (which depends on the
 * segment, not the cell) worked out once.
 */
export function locusResidual(refl: Reflector, field: Float32Array, radiusM: number, ctx: ScreenContext): (c: number) => number {
  const pts = refl.points, seg = refl.segments;
  if (readsField(refl, ctx)) return (c) => field[c]! - radiusM;
  const g = ctx.grid;
  const mpu = ctx.metresPerUnit;
  const rhos = segmentRadii(seg, radiusM, ctx);
  // An element can only take over when its distance lies within |best| of its locus radius: the
  // squared distance rules most elements out before Math.hypot (slow) is worked out for the others,
  // with a margin far above the rounding of either, so the same elements win as when every one is.
  const mayBeat = (d2: number, rho: number, best: number) => {
    const b = Math.abs(best), slack = 1e-9 * (rho + b);
    const far = (rho + b + slack) / mpu;
    if (d2 > far * far * (1 + 1e-9)) return false;
    const near = (rho - b - slack) / mpu;
    return !(near > 0 && d2 < near * near * (1 - 1e-9));
  };
  return (c) => {
    const row = (c / g.width) | 0;
    const x = cellCentreX(g, c - row * g.width), y = cellCentreY(g, row);
    let best = Infinity;
    for (let k = 0; k < pts.length; k += 2) {
      const ex = x - pts[k]!, ey = y - pts[k + 1]!;
      if (!mayBeat(ex * ex + ey * ey, radiusM, best)) continue;
      const r = Math.hypot(ex, ey) * mpu - radiusM;
      if (Math.abs(r) < Math.abs(best)) best = r;
    }
    for (let i = 0; i < seg.length; i += 4) {
      const ax = seg[i]!, ay = seg[i + 1]!, dx = seg[i + 2]! - ax, dy = seg[i + 3]! - ay;
      const l2 = dx * dx + dy * dy;
      let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
      t = t < 0 ? 0 : t > 1 ? 1 : t;
      const ex = x - ax - t * dx, ey = y - ay - t * dy;
      const rho = rhos[i >> 2]!;
      if (!mayBeat(ex * ex + ey * ey, rho, best)) continue;
      const r = Math.hypot(ex, ey) * mpu - rho;
      if (Math.abs(r) < Math.abs(best)) best = r;
    }
    return best;
  };
}

/** Whether a reflector's residual is its distance field less the radius (one element, and no segment migrated). */
function readsField(refl: Reflector, ctx: ScreenContext): boolean {
  return refl.points.length / 2 + refl.segments.length / 4 <= 1 && (!ctx.migration || refl.segments.length === 0);
}

/** Each segment's locus radius (`cellResidual`): r, or under migration r sqrt(1 - k^2 cos^2 phi). */
function segmentRadii(seg: Float64Array, radiusM: number, ctx: ScreenContext): Float64Array {
  const mig = ctx.migration;
  const k2 = mig ? mig.k2 : 0, ux = mig ? mig.ux : 0, uy = mig ? mig.uy : 0;
  const rhos = new Float64Array(seg.length / 4);
  for (let i = 0; i < seg.length; i += 4) {
    const dx = seg[i + 2]! - seg[i]!, dy = seg[i + 3]! - seg[i + 1]!;
    const l2 = dx * dx + dy * dy;
    let rho = radiusM;
    if (mig && l2 > 0) {
      // cos(phi) = |u . n| = |u x segment direction|
      const cosPhi = Math.abs(ux * dy - uy * dx) / Math.sqrt(l2);
      rho = radiusM * Math.sqrt(Math.max(0, 1 - k2 * cosPhi * cosPhi));
    }
    rhos[i >> 2] = rho;
  }
  return rhos;
}

/**
 * `locusResidual` of cells[0], cells[step], ... (every cell at step 1): in WebAssembly
 * (`wasmLocusResiduals`, the same numbers) where it runs, else cell by cell.
 */
export function locusResiduals(refl: Reflector, field: Float32Array, radiusM: number, ctx: ScreenContext, cells: Int32Array, step = 1): Float64Array {
  const fast = readsField(refl, ctx) ? null : wasmLocusResiduals(cells, step, refl.points, refl.segments, segmentRadii(refl.segments, radiusM, ctx), ctx.grid, ctx.metresPerUnit, radiusM);
  return fast ?? locusResidualsInJs(refl, field, radiusM, ctx, cells, step);
}

/** `locusResiduals` cell by cell in JavaScript: where WebAssembly does not run, and its reference in the tests. */
export function locusResidualsInJs(refl: Reflector, field: Float32Array, radiusM: number, ctx: ScreenContext, cells: Int32Array, step = 1): Float64Array {
  const out = new Float64Array(Math.ceil(cells.length / step));
  const residual = locusResidual(refl, field, radiusM, ctx);
  for (let i = 0, n = 0; i < cells.length; i += step) out[n++] = residual(cells[i]!);
  return out;
}
