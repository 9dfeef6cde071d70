import type { Anomaly3D, Member } from '@lamina/anomalies';
import { cellCentreX, cellCentreY, type SliceGrid } from '@lamina/slices';
import { medianHigh } from '@lamina/stats';
import type { ScreenContext } from '../context';
import { WEIGHTS, type Evidence } from '../evidence';
import { MAX_SAMPLES } from './move-out';
import { slope } from './slope';
import { wasmPointModel } from '../screen-wasm';

/** Cell centres of a member (site CRS), subsampled to at most MAX_SAMPLES. */
function memberXY(m: Member, g: SliceGrid): { x: Float64Array; y: Float64Array } {
  const step = Math.max(1, Math.ceil(m.cells.length / MAX_SAMPLES));
  const n = Math.ceil(m.cells.length / step);
  const x = new Float64Array(n), y = new Float64Array(n);
  for (let i = 0, j = 0; i < m.cells.length; i += step, j++) {
    const c = m.cells[i]!;
    const row = (c / g.width) | 0;
    x[j] = cellCentreX(g, c - row * g.width);
    y[j] = cellCentreY(g, row);
  }
  return { x, y };
}

/**
 * Test 5: an anomaly no plan feature explains, that still moves out at the air rate. Two models:
 * a point object P (cells on rings |p - P| = r(z_k), P by Gauss-Newton from the shallowest member's
 * centroid) and, for linear anomalies, a straight object (offsets n . p = a + s r(z_k) across the
 * anomaly's axis). The better model passes when its RMS residual is within the mean locus tolerance,
 * the free slope of distance against depth matches c / v within the rate tolerance, over at least
 * three slices with a measurable shift. Its geometry is where the object must stand.
 */
export function unsurveyedEvidence(a: Anomaly3D, ctx: ScreenContext): Evidence | undefined {
  const mpu = ctx.metresPerUnit;
  const g = ctx.grid;
  const slicesSet = [...new Set(a.members.map((m) => m.slice))].sort((p, q) => p - q);
  if (slicesSet.length < 3) return undefined;
  const l0 = ctx.loci[slicesSet[0]!]!, l1 = ctx.loci[slicesSet[slicesSet.length - 1]!]!;
  const expected = (l1.radiusM - l0.radiusM) / (l1.depthM - l0.depthM);
  const tolM = slicesSet.reduce((s, k) => s + ctx.loci[k]!.toleranceM, 0) / slicesSet.length;
  const measurable = expected * (l1.depthM - l0.depthM) >= 2 * ctx.positionM;
  const pts = a.members.map((m) => ({ m, r: ctx.loci[m.slice]!.radiusM / mpu, ...memberXY(m, g) }));
  const shallow = pts.filter((p) => p.m.slice === slicesSet[0]);
  // point model
  let px = 0, py = 0, w = 0;
  for (const p of shallow) for (let i = 0; i < p.x.length; i++) { px += p.x[i]!; py += p.y[i]!; w++; }
  px /= w; py /= w;
  [px, py] = wasmPointModel(pts, px, py, g.cellSize) ?? pointModel(pts, px, py, g.cellSize);
  const perSlice = (dist: (x: number, y: number) => number) => {
    const zs: number[] = [], ds: number[] = [];
    let ss = 0, n = 0;
    for (const k of slicesSet) {
      const v: number[] = [];
      for (const p of pts) if (p.m.slice === k) for (let i = 0; i < p.x.length; i++) {
        const d = dist(p.x[i]!, p.y[i]!) * mpu;
        v.push(d);
        ss += (d - ctx.loci[k]!.radiusM) ** 2;
        n++;
      }
      zs.push(ctx.loci[k]!.depthM);
      ds.push(medianHigh(v));
    }
    return { zs, ds, rms: Math.sqrt(ss / n) };
  };
  const point = perSlice((x, y) => Math.hypot(x - px, y - py));
  let best = { model: 'point' as 'point' | 'line', ...point, geometry: { type: 'Point', coordinates: [px, py] } as NonNullable<Evidence['geometry']> };
  if (a.shape.kind === 'linear') {
    const az = (a.shape.directionDeg * Math.PI) / 180;
    const ux = Math.sin(az), uy = Math.cos(az);
    const nx = uy, ny = -ux;
    // offsets across the axis per slice, then a + s r(z) by least squares for s = +1 and -1
    const off = slicesSet.map((k) => {
      const v: number[] = [];
      for (const p of pts) if (p.m.slice === k) for (let i = 0; i < p.x.length; i++) v.push(p.x[i]! * nx + p.y[i]! * ny);
      return medianHigh(v);
    });
    for (const sgn of [1, -1]) {
      const a0 = off.reduce((s, o, i) => s + o - (sgn * ctx.loci[slicesSet[i]!]!.radiusM) / mpu, 0) / off.length;
      const line = perSlice((x, y) => Math.abs(x * nx + y * ny - a0));
      if (line.rms < best.rms) {
        let cx = 0, cy = 0, n = 0;
        for (const p of pts) for (let i = 0; i < p.x.length; i++) { cx += p.x[i]!; cy += p.y[i]!; n++; }
        cx /= n; cy /= n;
        const t = cx * nx + cy * ny - a0;
        const fx = cx - t * nx, fy = cy - t * ny;
        const h = (0.5 * a.shape.lengthM) / mpu;
        best = { model: 'line', ...line, geometry: { type: 'LineString', coordinates: [[fx - ux * h, fy - uy * h], [fx + ux * h, fy + uy * h]] } };
      }
    }
  }
  const fit = slope(best.zs, best.ds);
  const se = Number.isFinite(fit.se) ? fit.se : 0;
  const tolerance = ctx.rateTolerance * expected + 2 * se;
  const conclusive = measurable && 2 * se <= 0.5 * expected;
  const passed = conclusive && best.rms <= tolM && Math.abs(fit.b - expected) <= tolerance;
  const e: Evidence = {
    test: 'unsurveyed-obstruction',
    featureId: null,
    measured: fit.b,
    expected,
    tolerance,
    units: 'm/m',
    passed,
    weight: passed ? WEIGHTS.unsurveyed : 0,
    detail: `no plan feature explains it; best ${best.model} model: distance grows ${fit.b.toFixed(2)} m per m of depth (air rate ${expected.toFixed(2)}), RMS off the locus ${best.rms.toFixed(2)} m (tolerance ${tolM.toFixed(2)}) over ${slicesSet.length} slices${conclusive ? '' : ' (inconclusive)'}`,
  };
  if (passed) {
    e.geometry = best.geometry;
    e.detail += best.model === 'point' ? '; a post-like object must stand at the back-projected point' : '; a wall or edge must stand along the back-projected line';
  }
  return e;
}

/**
 * The point model of `unsurveyedEvidence`: Gauss-Newton from (px, py) for the point whose distances to
 * the cell centres best match their locus radii `r` (site units), at most 30 steps, stopping at a
 * singular system or a step under 1e-6 cellSize. In JavaScript: where WebAssembly does not run
 * (`wasmPointModel`), and its reference in the tests.
 */
export function pointModel(pts: readonly { x: Float64Array; y: Float64Array; r: number }[], px: number, py: number, cellSize: number): [number, number] {
  for (let it = 0; it < 30; it++) {
    let a11 = 0, a12 = 0, a22 = 0, b1 = 0, b2 = 0;
    for (const p of pts) for (let i = 0; i < p.x.length; i++) {
      const dx = px - p.x[i]!, dy = py - p.y[i]!;
      const d = Math.hypot(dx, dy) || 1e-9;
      const jx = dx / d, jy = dy / d, res = d - p.r;
      a11 += jx * jx; a12 += jx * jy; a22 += jy * jy; b1 += jx * res; b2 += jy * res;
    }
    const det = a11 * a22 - a12 * a12;
    if (!(Math.abs(det) > 1e-12)) break;
    const sx = (a22 * b1 - a12 * b2) / det, sy = (a11 * b2 - a12 * b1) / det;
    px -= sx; py -= sy;
    if (Math.hypot(sx, sy) < 1e-6 * cellSize) break;
  }
  return [px, py];
}
