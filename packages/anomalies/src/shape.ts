import { cellCentreX, cellCentreY, type SliceGrid } from '@lamina/slices';
import type { Shape } from './types';

export interface ShapeOptions {
  /** Metres per site CRS unit. @default 1 */
  metresPerUnit?: number;
  /** Elongation at or above which an anomaly is linear. @default 3 (common practice, no source) */
  linearElongation?: number;
  /** Minimum major-axis length of a linear anomaly, metres. @default 1 */
  minLinearLengthM?: number;
}

/**
 * Shape from second moments of the cells (each cell a filled square, so its own variance
 * cellSize^2 / 12 is added on both axes: a single cell is round, not a point). The eigenvectors of
 * the 2 x 2 covariance give the axes; a filled a x b rectangle gives lengthM = a, widthM = b.
 */
export function cellShape(cells: ArrayLike<number>, grid: SliceGrid, options: ShapeOptions = {}): Shape {
  const mpu = options.metresPerUnit ?? 1;
  const { sxx, syy, sxy } = moments(cells, grid);
  const tr = 0.5 * (sxx + syy);
  const d = Math.sqrt(0.25 * (sxx - syy) ** 2 + sxy * sxy);
  const l1 = tr + d;
  const l2 = Math.max(tr - d, 1e-30);
  const theta = 0.5 * Math.atan2(2 * sxy, sxx - syy); // from +x (east), counter-clockwise
  let az = 90 - (theta * 180) / Math.PI;
  az = ((az % 180) + 180) % 180;
  const elongation = Math.sqrt(l1 / l2);
  const lengthM = Math.sqrt(12 * l1) * mpu;
  const widthM = Math.sqrt(12 * l2) * mpu;
  const linear = elongation >= (options.linearElongation ?? 3) && lengthM >= (options.minLinearLengthM ?? 1);
  return { elongation, directionDeg: az, lengthM, widthM, kind: linear ? 'linear' : 'compact' };
}

export function moments(cells: ArrayLike<number>, grid: SliceGrid): { mx: number; my: number; sxx: number; syy: number; sxy: number } {
  const n = cells.length;
  let sx = 0, sy = 0;
  for (let i = 0; i < n; i++) {
    const k = cells[i]!;
    const r = (k / grid.width) | 0;
    sx += k - r * grid.width;
    sy += r;
  }
  const mc = sx / n, mr = sy / n;
  let cc = 0, rr = 0, cr = 0;
  for (let i = 0; i < n; i++) {
    const k = cells[i]!;
    const r = (k / grid.width) | 0;
    const dc = k - r * grid.width - mc, dr = r - mr;
    cc += dc * dc;
    rr += dr * dr;
    cr += dc * dr;
  }
  const s2 = grid.cellSize * grid.cellSize;
  return {
    mx: cellCentreX(grid, mc),
    my: cellCentreY(grid, mr),
    sxx: (cc / n + 1 / 12) * s2,
    syy: (rr / n + 1 / 12) * s2,
    // rows grow southwards: y = -row
    sxy: (-cr / n) * s2,
  };
}

/**
 * Centreline of an elongated set of cells: cells binned along the major axis (bins of two cells or
 * a twentieth of the length, whichever is longer), one weighted mean point per bin, in site CRS.
 */
export function centreline(cells: ArrayLike<number>, weights: ArrayLike<number>, grid: SliceGrid, shape: Shape): [number, number][] {
  const az = (shape.directionDeg * Math.PI) / 180;
  const ux = Math.sin(az), uy = Math.cos(az);
  const n = cells.length;
  const xs = new Float64Array(n), ys = new Float64Array(n), us = new Float64Array(n);
  let umin = Infinity, umax = -Infinity;
  for (let i = 0; i < n; i++) {
    const k = cells[i]!;
    const r = (k / grid.width) | 0;
    xs[i] = cellCentreX(grid, k - r * grid.width);
    ys[i] = cellCentreY(grid, r);
    us[i] = xs[i]! * ux + ys[i]! * uy;
    if (us[i]! < umin) umin = us[i]!;
    if (us[i]! > umax) umax = us[i]!;
  }
  const lengthUnits = umax - umin + grid.cellSize;
  const bin = Math.max(2 * grid.cellSize, lengthUnits / 20);
  const nb = Math.max(1, Math.ceil(lengthUnits / bin));
  const sw = new Float64Array(nb), sx = new Float64Array(nb), sy = new Float64Array(nb);
  for (let i = 0; i < n; i++) {
    const b = Math.min(nb - 1, Math.floor((us[i]! - umin) / bin));
    const w = Math.max(1e-6, weights[i] ?? 1);
    sw[b] = sw[b]! + w;
    sx[b] = sx[b]! + w * xs[i]!;
    sy[b] = sy[b]! + w * ys[i]!;
  }
  const pts: [number, number][] = [];
  for (let b = 0; b < nb; b++) if (sw[b]! > 0) pts.push([sx[b]! / sw[b]!, sy[b]! / sw[b]!]);
  if (pts.length === 1) {
    // a single bin: a segment along the axis through it
    const p = pts[0]!;
    const h = 0.5 * (umax - umin);
    pts.splice(0, 1, [p[0] - ux * h, p[1] - uy * h], [p[0] + ux * h, p[1] + uy * h]);
  }
  return pts;
}
