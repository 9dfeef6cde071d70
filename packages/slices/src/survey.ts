import KDBush from 'kdbush';

/** What the trace positions say about the survey pattern (site CRS units). */
export interface SurveyGeometry {
  /** Median distance between consecutive traces of a line. */
  traceSpacing: number;
  /** Median distance from points a quarter, half and three quarters along each line to the nearest other line; NaN for one line. */
  lineSpacing: number;
  /** Mean line direction, degrees counter-clockwise from east, in [0, 180). */
  directionDeg: number;
  /** Length of the mean axial direction vector (1: all lines parallel, 0: no preferred direction). */
  parallelism: number;
  bounds: [number, number, number, number];
}

/**
 * Estimate trace spacing, line spacing and survey direction from positions `[x0, y0, ...]` split into
 * lines by `lineStarts` (first trace of each line, plus the total at the end). Directions are axial
 * (a line walked back and forth counts once): their doubled angles are averaged.
 */
export function surveyGeometry(coords: Float64Array, lineStarts: Int32Array): SurveyGeometry {
  const nLines = lineStarts.length - 1;
  const n = coords.length / 2;
  if (n === 0) throw new Error('no trace positions to grid');
  const steps: number[] = [];
  let c2 = 0;
  let s2 = 0;
  let minX = Infinity;
  let minY = Infinity;
  let maxX = -Infinity;
  let maxY = -Infinity;
  for (let i = 0; i < n; i++) {
    const x = coords[2 * i]!;
    const y = coords[2 * i + 1]!;
    if (x < minX) minX = x;
    if (x > maxX) maxX = x;
    if (y < minY) minY = y;
    if (y > maxY) maxY = y;
  }
  for (let l = 0; l < nLines; l++) {
    const a = lineStarts[l]!;
    const b = lineStarts[l + 1]! - 1;
    if (b <= a) continue;
    // Subsample long lines: 200 steps per line are plenty for a median.
    const stride = Math.max(1, Math.floor((b - a) / 200));
    for (let i = a; i + stride <= b; i += stride) {
      const d = Math.hypot(coords[2 * (i + stride)]! - coords[2 * i]!, coords[2 * (i + stride) + 1]! - coords[2 * i + 1]!) / stride;
      if (d > 0) steps.push(d);
    }
    const dx = coords[2 * b]! - coords[2 * a]!;
    const dy = coords[2 * b + 1]! - coords[2 * a + 1]!;
    const len = Math.hypot(dx, dy);
    if (len > 0) {
      const th = 2 * Math.atan2(dy, dx);
      c2 += len * Math.cos(th);
      s2 += len * Math.sin(th);
    }
  }
  let totalLen = 0;
  for (let l = 0; l < nLines; l++) {
    const a = lineStarts[l]!;
    const b = lineStarts[l + 1]! - 1;
    if (b > a) totalLen += Math.hypot(coords[2 * b]! - coords[2 * a]!, coords[2 * b + 1]! - coords[2 * a + 1]!);
  }
  const traceSpacing = median(steps);
  let directionDeg = ((Math.atan2(s2, c2) / 2) * 180) / Math.PI;
  if (directionDeg < 0) directionDeg += 180;
  if (directionDeg > 180 - 1e-9) directionDeg = 0;
  const parallelism = totalLen > 0 ? Math.hypot(c2, s2) / totalLen : 0;
  const lineSpacing = nLines > 1 ? estimateLineSpacing(coords, lineStarts, traceSpacing) : Number.NaN;
  return { traceSpacing, lineSpacing, directionDeg, parallelism, bounds: [minX, minY, maxX, maxY] };
}

function estimateLineSpacing(coords: Float64Array, lineStarts: Int32Array, traceSpacing: number): number {
  const n = coords.length / 2;
  const nLines = lineStarts.length - 1;
  const index = new KDBush(n, 32);
  for (let i = 0; i < n; i++) index.add(coords[2 * i]!, coords[2 * i + 1]!);
  index.finish();
  const lineOf = new Int32Array(n);
  for (let l = 0; l < nLines; l++) lineOf.fill(l, lineStarts[l]!, lineStarts[l + 1]!);
  const [minX, minY, maxX, maxY] = [0, 1, 2, 3].map((k) => {
    let v = k < 2 ? Infinity : -Infinity;
    for (let i = 0; i < n; i++) {
      const c = coords[2 * i + (k % 2)]!;
      v = k < 2 ? Math.min(v, c) : Math.max(v, c);
    }
    return v;
  }) as [number, number, number, number];
  const maxR = Math.hypot(maxX - minX, maxY - minY) + 1;
  const found: number[] = [];
  for (let l = 0; l < nLines; l++) {
    const a = lineStarts[l]!;
    const b = lineStarts[l + 1]!;
    if (b <= a) continue;
    for (const f of [0.25, 0.5, 0.75]) {
      const i = a + Math.floor((b - a - 1) * f);
      const x = coords[2 * i]!;
      const y = coords[2 * i + 1]!;
      let r = Math.max(traceSpacing, 1e-9) * 4;
      for (;;) {
        let best = Infinity;
        for (const j of index.within(x, y, r)) {
          if (lineOf[j] === l) continue;
          best = Math.min(best, Math.hypot(coords[2 * j]! - x, coords[2 * j + 1]! - y));
        }
        if (best <= r) {
          found.push(best);
          break;
        }
        if (r > maxR) break;
        r *= 2;
      }
    }
  }
  return found.length > 0 ? median(found) : Number.NaN;
}

export function median(values: ArrayLike<number>): number {
  const a = Float64Array.from(values).filter((v) => !Number.isNaN(v)).sort();
  if (a.length === 0) return Number.NaN;
  const m = a.length >> 1;
  return a.length % 2 ? a[m]! : 0.5 * (a[m - 1]! + a[m]!);
}
