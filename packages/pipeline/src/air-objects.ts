import { C_M_PER_NS } from '@lamina/constants';
import type { AirObjects } from '@lamina/processing';
import { reflectorsOf, type ReflectorKind } from '@lamina/screening';
import type { PlanFeature } from '@lamina/site';
import type { HyperbolaFit } from '@lamina/velocity';
import type { Pass1Result } from './line-task';
import type { LineSummary } from './outputs';

/**
 * The above-ground objects of a plan for the `airEvents` step (@lamina/processing): the reflectors
 * screening forecasts air-wave loci from (`reflectorsOf`: walls, fences and their posts, building edges,
 * posts, trees, columns, overhead objects at their clearance), as flat arrays in site CRS units. Features
 * of kind `other` are left out: the plan does not say they stand above ground.
 */
export function planAirObjects(plan: PlanFeature[], metresPerUnit: number): AirObjects {
  const points: number[] = [];
  const radii: number[] = [];
  const segments: number[] = [];
  for (const r of reflectorsOf(plan, metresPerUnit)) {
    if (r.kind === 'other') continue;
    const h = r.kind === 'overhead' ? (r.heightM ?? 0) : 0;
    for (let i = 0; i + 1 < r.points.length; i += 2) {
      points.push(r.points[i]!, r.points[i + 1]!, h);
      radii.push(POINT_RADIUS_M[r.kind] ?? 0);
    }
    for (let i = 0; i + 3 < r.segments.length; i += 4) segments.push(r.segments[i]!, r.segments[i + 1]!, r.segments[i + 2]!, r.segments[i + 3]!, h);
  }
  return { points: Float64Array.from(points), segments: Float64Array.from(segments), pointRadiiM: Float64Array.from(radii) };
}

/**
 * The largest radius a plan point of each kind is taken to have, m (common practice, no source: steel and
 * timber posts up to 0.1 m, building columns up to 0.4 m, tree trunks up to 0.5 m). A plan point is the
 * centre; the air wave returns from the nearest face (`AirObjects.pointRadiiM`).
 */
const POINT_RADIUS_M: Partial<Record<ReflectorKind, number>> = { post: 0.1, column: 0.4, tree: 0.5 };

/**
 * What one line's `airEvents` step needs: the plan's objects within reach of its record (an air wave
 * travels c t / 2 out in the record's time t) and the apexes of the air-velocity fits made on it
 * (velocity.json `origin: above-ground`).
 */
export function airObjectsFor(all: AirObjects, line: LineSummary, timeZeroNs: number, fits: readonly HyperbolaFit[], metresPerUnit: number, context?: Pass1Result['context']): AirObjects {
  const reach = (C_M_PER_NS * ((line.samples - 1) * line.dtNs - timeZeroNs)) / 2 / metresPerUnit;
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (let i = 0; i < line.x.length; i++) {
    x0 = Math.min(x0, line.x[i]!);
    x1 = Math.max(x1, line.x[i]!);
    y0 = Math.min(y0, line.y[i]!);
    y1 = Math.max(y1, line.y[i]!);
  }
  // a piece is cleaned on its whole context (pass 2): the context's reach and apexes, as a run of the whole line
  if (context) [x0, y0, x1, y1] = context.box;
  const near = (ax: number, ay: number, bx: number, by: number) =>
    Math.max(ax, bx) >= x0 - reach && Math.min(ax, bx) <= x1 + reach && Math.max(ay, by) >= y0 - reach && Math.min(ay, by) <= y1 + reach;
  const points: number[] = [];
  const radii: number[] = [];
  const p = all.points;
  for (let i = 0; i + 2 < p.length; i += 3) {
    if (!near(p[i]!, p[i + 1]!, p[i]!, p[i + 1]!)) continue;
    points.push(p[i]!, p[i + 1]!, p[i + 2]!);
    radii.push(all.pointRadiiM?.[i / 3] ?? 0);
  }
  const segments: number[] = [];
  const s = all.segments;
  for (let i = 0; i + 4 < s.length; i += 5) if (near(s[i]!, s[i + 1]!, s[i + 2]!, s[i + 3]!)) segments.push(s[i]!, s[i + 1]!, s[i + 2]!, s[i + 3]!, s[i + 4]!);
  const apexes: number[] = context ? [...context.airApexes] : [];
  if (!context) for (const f of fits) if (f.line === line.id && f.origin === 'above-ground') apexes.push(f.trace, f.t0Ns);
  return { points: Float64Array.from(points), segments: Float64Array.from(segments), apexes: Float64Array.from(apexes), pointRadiiM: Float64Array.from(radii) };
}
