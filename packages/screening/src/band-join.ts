import { buildAnomaly, memberOf, type ExtractOptions, type Member } from '@lamina/anomalies';
import type { SliceStack } from '@lamina/slices';
import type { Line } from './context';
import type { GeoJsonFeature, ToWgs84 } from './geojson';
import { anomalyFeature, centroidOf, type ScreenResult } from './screen';

/**
 * Rows of one band of a site screened band by band, in the rows of the whole grid: the band's stacks
 * hold rows [first, last); it owns rows [coreFirst, coreLast). Consecutive bands' cores tile the grid;
 * a band reaches `overlap` rows past its core on each side (clipped at the grid's edges).
 */
export interface BandRows {
  first: number;
  last: number;
  coreFirst: number;
  coreLast: number;
}

/**
 * Row bands for screening a grid of `height` rows in pieces of at most `maxRows` rows, each reaching
 * `overlap` rows past its core. One band (the whole grid) when it fits. A core is at least 2 x overlap
 * rows, so only neighbouring bands share rows.
 */
export function screenBands(height: number, maxRows: number, overlap: number): BandRows[] {
  if (height <= maxRows) return [{ first: 0, last: height, coreFirst: 0, coreLast: height }];
  // as many bands as keep each within maxRows, but no core under 2 x overlap
  const core = Math.max(2 * overlap, maxRows - 2 * overlap, 1);
  const n = Math.max(1, Math.min(Math.ceil(height / core), Math.floor(height / Math.max(1, 2 * overlap))));
  const out: BandRows[] = [];
  for (let i = 0; i < n; i++) {
    const coreFirst = Math.round((i * height) / n), coreLast = Math.round(((i + 1) * height) / n);
    out.push({ first: Math.max(0, coreFirst - overlap), last: Math.min(height, coreLast + overlap), coreFirst, coreLast });
  }
  return out;
}

/** The lines cut to the rows [first, last) of a grid and `marginM` around them (runs of points inside; each run a line). */
export function linesInRows(lines: Line[], originY: number, cellSize: number, first: number, last: number, margin: number): Line[] {
  const yTop = originY - first * cellSize + margin, yBottom = originY - last * cellSize - margin;
  const out: Line[] = [];
  for (const l of lines) {
    let run: number[] = [];
    const flush = () => {
      if (run.length > 0) out.push({ id: l.id, x: Float64Array.from(run, (i) => l.x[i]!), y: Float64Array.from(run, (i) => l.y[i]!) });
      run = [];
    };
    for (let i = 0; i < l.x.length; i++) {
      const y = l.y[i]!;
      if (y <= yTop && y >= yBottom) run.push(i);
      else flush();
    }
    flush();
  }
  return out;
}

/** An anomaly kept by `BandJoin`, with the keys anomalies.geojson is sorted by (as `screenSite` sorts). */
export interface JoinedFeature {
  feature: GeoJsonFeature;
  depthTopM: number;
  /** Site x of the first member's centroid. */
  x: number;
}

export interface BandJoinOptions extends ExtractOptions {
  toWgs84: ToWgs84;
  metresPerUnit: number;
  /** Cells around a cell the previous band took that count as taken too (its components differ a little). @default 2 */
  claimReach?: number;
}

/**
 * Joins the anomalies of a site screened in overlapping row bands (`take` each band's result in order)
 * so that each object is reported once:
 * - an anomaly that reaches the far edge of its band's rows (it goes on into the next band) is cut at the
 *   end of the band's core; the next band reports the rest;
 * - otherwise it is kept whole, unless its anchor (cell-weighted centroid) lies past the core and the next
 *   band holds all of it: then the next band reports it;
 * - cells the previous band already reported (within `claimReach` cells, same slice) are taken out, and
 *   members left with fewer than `minCells` cells are dropped.
 * An anomaly that was cut or trimmed is rebuilt from its remaining cells (outline, shape, centreline);
 * its evidence and verdict are those screened on the whole band piece. With one band, every anomaly is
 * kept as it is.
 */
export class BandJoin {
  private claims = new Map<number, Set<number>>();
  private claimsBelow = Infinity;
  constructor(private readonly options: BandJoinOptions) {}

  take(result: ScreenResult, band: BandRows, gridHeight: number, stacks: { main: SliceStack; before?: SliceStack }): JoinedFeature[] {
    const grid = stacks.main.grid;
    const { width, cellSize, originY } = grid;
    const rows = band.last - band.first;
    const coreEnd = band.coreLast - band.first;
    const isLast = band.last >= gridHeight;
    // first row of the next band, local
    const nextFirst = isLast ? Infinity : band.coreLast - (band.last - band.coreLast) - band.first;
    const minCells = this.options.minCells ?? 6;
    const reach = this.options.claimReach ?? 2;
    const prevClaims = this.claims;
    const prevBelow = this.claimsBelow - band.first;
    const next = new Map<number, Set<number>>();
    const out: JoinedFeature[] = [];
    const claimed = (slice: number, r: number, c: number): boolean => {
      if (r >= prevBelow + reach) return false;
      const set = prevClaims.get(slice);
      if (!set) return false;
      for (let dr = -reach; dr <= reach; dr++)
        for (let dc = -reach; dc <= reach; dc++) {
          const cc = c + dc;
          if (cc < 0 || cc >= width) continue;
          if (set.has((band.first + r + dr) * width + cc)) return true;
        }
      return false;
    };
    const features = result.anomalyFeatures();
    for (const sa of result.screened) {
      const f = features.next().value as GeoJsonFeature;
      const a = sa.anomaly;
      let top = Infinity, bottom = -Infinity;
      for (let i = 0; i < a.cells.length; i++) {
        const r = (a.cells[i]! / width) | 0;
        if (r < top) top = r;
        if (r > bottom) bottom = r;
      }
      const goesOn = !isLast && bottom === rows - 1;
      // the anchor: the cell-weighted centroid decides which band owns the anomaly
      const anchorRow = Math.floor((originY - centroidOf(a)[1]) / cellSize);
      if (!goesOn && anchorRow >= coreEnd && top >= nextFirst) continue;
      const stack = f.properties.source === 'before-background' && stacks.before ? stacks.before : stacks.main;
      let changed = false;
      const members: Member[] = [];
      for (const m of a.members) {
        const keep: number[] = [];
        for (let i = 0; i < m.cells.length; i++) {
          const k = m.cells[i]!;
          const r = (k / width) | 0;
          if ((goesOn && r >= coreEnd) || claimed(m.slice, r, k - r * width)) continue;
          keep.push(i);
        }
        if (keep.length === m.cells.length) members.push(m);
        else {
          changed = true;
          if (keep.length < minCells) continue;
          const piece = memberOf(m.id, m.slice, Int32Array.from(keep, (i) => m.cells[i]!), Float32Array.from(keep, (i) => m.scores[i]!), stack, this.options, m.noiseEnergy);
          if (m.layer) piece.layer = true;
          members.push(piece);
        }
      }
      if (members.length === 0) continue;
      let feature = f;
      let kept = a;
      if (changed) {
        kept = buildAnomaly(a.id, members, stack, this.options);
        feature = anomalyFeature({ ...sa, anomaly: kept }, grid, this.options.toWgs84, this.options.metresPerUnit);
        feature.properties.source = f.properties.source;
      }
      for (const m of kept.members) {
        let set: Set<number> | undefined;
        for (let i = 0; i < m.cells.length; i++) {
          const k = m.cells[i]!;
          if (((k / width) | 0) < nextFirst) continue;
          if (!set) {
            set = next.get(m.slice) ?? new Set<number>();
            next.set(m.slice, set);
          }
          set.add(band.first * width + k);
        }
      }
      out.push({ feature, depthTopM: kept.depthTopM, x: kept.members[0]!.x });
    }
    this.claims = next;
    this.claimsBelow = band.last;
    return out;
  }
}
