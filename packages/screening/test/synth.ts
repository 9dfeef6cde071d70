import type { PlanFeature, Position } from '@lamina/site';
import type { SliceGrid, SliceStack } from '@lamina/slices';
import { C_M_PER_NS, type VelocityReport } from '@lamina/velocity';

import { mulberry32 as rng } from '@lamina/random';
export { rng };

export function constantVelocity(v: number, spread = 0.002): VelocityReport {
  const K = (C_M_PER_NS / v) ** 2;
  return {
    site: { velocityMPerNs: v, permittivity: K, spreadMPerNs: spread, fitCount: 5 },
    model: { kind: 'constant', layers: [{ topM: 0, bottomM: 100, velocityMPerNs: v, permittivity: K }] },
    hyperbolas: [],
  };
}

export function feature(id: string, kind: PlanFeature['kind'], geometry: PlanFeature['geometry'], extra: Partial<PlanFeature> = {}): PlanFeature {
  return { id, kind, properties: { id, kind }, wgs84: geometry, geometry, ...extra };
}

export function segDist(x: number, y: number, a: Position, b: Position): number {
  const dx = b[0] - a[0], dy = b[1] - a[1];
  const l2 = dx * dx + dy * dy;
  let t = ((x - a[0]) * dx + (y - a[1]) * dy) / l2;
  t = Math.max(0, Math.min(1, t));
  return Math.hypot(x - a[0] - t * dx, y - a[1] - t * dy);
}

/**
 * A stack on `grid` with gamma(4)-distributed background (a squared envelope averaged over a
 * window) plus `paint(x, y, z)` at cell centres; slices of `thickness` centred on `depths`.
 * Scaled coordinates: x, y in site units; paint gets metres through `mpu`.
 */
export function synthStack(grid: SliceGrid, depths: number[], thickness: number, paint: (x: number, y: number, z: number) => number, seed = 1): SliceStack {
  const r = rng(seed);
  return {
    grid,
    slices: depths.map((z, index) => {
      const values = new Float32Array(grid.width * grid.height);
      for (let row = 0; row < grid.height; row++)
        for (let col = 0; col < grid.width; col++) {
          const x = grid.originX + (col + 0.5) * grid.cellSize, y = grid.originY - (row + 0.5) * grid.cellSize;
          values[row * grid.width + col] = -(Math.log(1 - r()) + Math.log(1 - r()) + Math.log(1 - r()) + Math.log(1 - r())) / 4 + paint(x, y, z);
        }
      return { index, topM: z - thickness / 2, bottomM: z + thickness / 2, values };
    }),
  };
}

/** Parallel survey lines (north-south) every `spacing` units across the grid. */
export function surveyLines(grid: SliceGrid, spacing: number, step: number) {
  const lines = [];
  const x1 = grid.originX + grid.width * grid.cellSize;
  const y0 = grid.originY - grid.height * grid.cellSize;
  for (let x = grid.originX + spacing / 2, i = 0; x < x1; x += spacing, i++) {
    const n = Math.floor((grid.originY - y0) / step);
    lines.push({ id: `L${i}`, x: Float64Array.from({ length: n }, () => x), y: Float64Array.from({ length: n }, (_, k) => y0 + k * step) });
  }
  return lines;
}

export const identity = (x: number, y: number): [number, number] => [x, y];
