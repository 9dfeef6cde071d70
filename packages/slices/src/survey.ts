import { median } from '@lamina/stats';
/** What the trace positions say about the survey pattern (site CRS units). */
export interface SurveyGeometry {
  /** Median distance between consecutive traces of a line. */
  traceSpacing: number;
  /**
   * Median distance from points a quarter, half and three quarters along each line to the nearest other
   * line of the same direction (a grid in two directions has a spacing per direction, not the zero
   * distance where lines cross); NaN for one line.
   */
  lineSpacing: number;
  /** Direction groups: 1 for parallel lines, 2 for a grid surveyed in two directions. */
  directions: number;
  /** Mean line direction, degrees counter-clockwise from east, in [0, 180). */
  directionDeg: number;
  /** Length of the mean axial direction vector (1: all lines parallel, 0: no preferred direction). */
  parallelism: number;
  bounds: [number, number, number, number];
}

/** Trace positions line by line: `line(l)` gives `[x0, y0, ...]` of line l (read from memory or disk). */
export interface LinePositions {
  lineStarts: Int32Array;
  line(l: number): Float64Array;
}

/**
 * Estimate trace spacing, line spacing and survey direction from positions `[x0, y0, ...]` split into
 * lines by `lineStarts` (first trace of each line, plus the total at the end). Directions are axial
 * (a line walked back and forth counts once): their doubled angles are averaged.
 */
export function surveyGeometry(coords: Float64Array, lineStarts: Int32Array): SurveyGeometry {
  return surveyGeometryOf({ lineStarts, line: (l) => coords.subarray(2 * lineStarts[l]!, 2 * lineStarts[l + 1]!) });
}

/** `surveyGeometry` over positions read one line at a time (memory holds one line). */
export function surveyGeometryOf(source: LinePositions): SurveyGeometry {
  const { lineStarts } = source;
  const nLines = lineStarts.length - 1;
  if (lineStarts[nLines]! === 0) throw new Error('no trace positions to grid');
  const steps: number[] = [];
  const axes: number[] = [];
  let c2 = 0;
  let s2 = 0;
  let totalLen = 0;
  let minX = Infinity;
  let minY = Infinity;
  let maxX = -Infinity;
  let maxY = -Infinity;
  for (let l = 0; l < nLines; l++) {
    const c = source.line(l);
    const m = c.length / 2;
    for (let i = 0; i < m; i++) {
      const x = c[2 * i]!;
      const y = c[2 * i + 1]!;
      if (x < minX) minX = x;
      if (x > maxX) maxX = x;
      if (y < minY) minY = y;
      if (y > maxY) maxY = y;
    }
    const b = m - 1;
    axes.push(axialDeg(c));
    if (b <= 0) continue;
    // Subsample long lines: 200 steps per line are plenty for a median.
    const stride = Math.max(1, Math.floor(b / 200));
    for (let i = 0; i + stride <= b; i += stride) {
      const d = Math.hypot(c[2 * (i + stride)]! - c[2 * i]!, c[2 * (i + stride) + 1]! - c[2 * i + 1]!) / stride;
      if (d > 0) steps.push(d);
    }
    const dx = c[2 * b]! - c[0]!;
    const dy = c[2 * b + 1]! - c[1]!;
    const len = Math.hypot(dx, dy);
    if (len > 0) {
      const th = 2 * Math.atan2(dy, dx);
      c2 += len * Math.cos(th);
      s2 += len * Math.sin(th);
      totalLen += len;
    }
  }
  const traceSpacing = median(steps);
  let directionDeg = ((Math.atan2(s2, c2) / 2) * 180) / Math.PI;
  if (directionDeg < 0) directionDeg += 180;
  if (directionDeg > 180 - 1e-9) directionDeg = 0;
  const parallelism = totalLen > 0 ? Math.hypot(c2, s2) / totalLen : 0;
  const bounds: [number, number, number, number] = [minX, minY, maxX, maxY];
  const group = directionGroups(axes);
  const lineSpacing = nLines > 1 ? estimateLineSpacing(source, traceSpacing, bounds, group) : Number.NaN;
  return { traceSpacing, lineSpacing, directions: new Set(group).size, directionDeg, parallelism, bounds };
}

/** Axial direction of a line's end-to-end chord, degrees counter-clockwise from east in [0, 180); NaN for a point. */
export function axialDeg(c: ArrayLike<number>): number {
  const n = c.length / 2;
  if (n < 2) return Number.NaN;
  const dx = c[2 * (n - 1)]! - c[0]!, dy = c[2 * (n - 1) + 1]! - c[1]!;
  if (dx === 0 && dy === 0) return Number.NaN;
  return ((((Math.atan2(dy, dx) * 180) / Math.PI) % 180) + 180) % 180;
}

/**
 * Direction group of each line: 0 for lines within 45 degrees of the longest-running direction (the
 * median axis of the lines, taken on doubled angles), 1 for the lines across it. A zigzag or parallel
 * survey is one group; a grid surveyed in two directions is two. Lines with no direction join group 0.
 */
export function directionGroups(axes: readonly number[]): Int32Array {
  const valid = axes.filter((a) => Number.isFinite(a));
  const out = new Int32Array(axes.length);
  if (valid.length === 0) return out;
  // reference: the axis most lines lie within 45 degrees of
  let ref = valid[0]!, bestCount = -1;
  for (const a of valid) {
    let n = 0;
    for (const b of valid) if (angleDiff(a, b) <= 45) n++;
    if (n > bestCount) [ref, bestCount] = [a, n];
  }
  axes.forEach((a, i) => (out[i] = Number.isFinite(a) && angleDiff(a, ref) > 45 ? 1 : 0));
  return out;
}

/** Smallest angle between two axes (directions modulo 180 degrees), degrees. */
export function angleDiff(a: number, b: number): number {
  const d = Math.abs(a - b) % 180;
  return Math.min(d, 180 - d);
}

/**
 * Median over the points a quarter, half and three quarters along each line of the distance to the
 * nearest trace of another line (`nearestOtherLine`).
 */
function estimateLineSpacing(source: LinePositions, traceSpacing: number, bounds: [number, number, number, number], group: Int32Array): number {
  const { lineStarts } = source;
  const nLines = lineStarts.length - 1;
  const queries: LineQueries = { x: [], y: [], line: [] };
  for (let l = 0; l < nLines; l++) {
    const m = lineStarts[l + 1]! - lineStarts[l]!;
    if (m <= 0) continue;
    const c = source.line(l);
    for (const f of [0.25, 0.5, 0.75]) {
      const i = Math.floor((m - 1) * f);
      queries.x.push(c[2 * i]!);
      queries.y.push(c[2 * i + 1]!);
      queries.line.push(l);
    }
  }
  const best = nearestOtherLine(source, queries, { startRadius: Math.max(traceSpacing, 1e-9) * 4, bounds, group });
  return median(Array.from(best).filter((d) => d < Infinity));
}

/** Query points, each on a line (its index). */
export interface LineQueries {
  x: number[];
  y: number[];
  line: number[];
}

/**
 * For each query, the exact distance to the nearest trace of another line (Infinity when there is
 * none), found by streaming every line past a hash of the query points: a search radius starting at
 * `startRadius`, doubled for the queries that found nothing within it, up to the extent of `bounds`.
 * Memory holds the queries and one line, never all positions. `stride(l)` takes every stride-th trace
 * of line l only (from its first). With `group` (one value per line) only lines of the query's own
 * group count. @default stride 1, one group
 */
export function nearestOtherLine(
  source: LinePositions,
  queries: LineQueries,
  options: { startRadius: number; bounds: [number, number, number, number]; stride?: (line: number) => number; group?: Int32Array },
): Float64Array {
  const { lineStarts } = source;
  const nLines = lineStarts.length - 1;
  const { x: qx, y: qy, line: qLine } = queries;
  const [minX, minY, maxX, maxY] = options.bounds;
  const maxR = Math.hypot(maxX - minX, maxY - minY) + 1;
  // best[q] is only ever set to a distance within the radius of its pass, so it is final once set.
  const best = new Float64Array(qx.length).fill(Infinity);
  let pending = qx.map((_, q) => q);
  let r = options.startRadius;
  while (pending.length > 0) {
    const rows = Math.floor((maxY - minY) / r) + 3;
    const key = (cx: number, cy: number) => cx * rows + cy;
    // each query listed in its own cell and the eight round it: a trace looks in its own cell only
    const hash = new Map<number, number[]>();
    for (const q of pending) {
      const qcx = Math.floor((qx[q]! - minX) / r), qcy = Math.floor((qy[q]! - minY) / r);
      for (let ax = qcx - 1; ax <= qcx + 1; ax++) {
        for (let ay = qcy - 1; ay <= qcy + 1; ay++) {
          const k = key(ax, ay);
          const list = hash.get(k);
          if (list) list.push(q);
          else hash.set(k, [q]);
        }
      }
    }
    for (let l = 0; l < nLines; l++) {
      const c = source.line(l);
      const step = 2 * Math.max(1, options.stride?.(l) ?? 1);
      for (let i = 0; i < c.length; i += step) {
        const x = c[i]!;
        const y = c[i + 1]!;
        const list = hash.get(key(Math.floor((x - minX) / r), Math.floor((y - minY) / r)));
        if (!list) continue;
        for (const q of list) {
          if (qLine[q] === l || (options.group && options.group[l] !== options.group[qLine[q]!])) continue;
          const d = Math.hypot(x - qx[q]!, y - qy[q]!);
          if (d <= r && d < best[q]!) best[q] = d;
        }
      }
    }
    pending = r <= maxR ? pending.filter((q) => best[q] === Infinity) : [];
    r *= 2;
  }
  return best;
}

