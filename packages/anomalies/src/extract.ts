import { cellCentreX, cellCentreY, type SliceStack } from '@lamina/slices';
import { wasmUnionOfCells } from './cells-wasm';
import { components } from './components';
import { linkMembers, type LinkOptions } from './link';
import { fitNoiseLaw, noiseMean, noiseScores, normalIsf, type NoiseLaw } from './noise';
import { robustScores } from './normalise';
import { outlineArea, traceOutline } from './outline';
import { cellShape, centreline, type ShapeOptions } from './shape';
import { connectedParts, straightBands, thickParts } from './split';
import type { Anomaly3D, Member, Shape } from './types';

export interface ExtractOptions extends ShapeOptions, LinkOptions {
  /**
   * Score a component must reach somewhere (seed threshold), as a standard normal deviate of the cell's
   * exceedance probability under its slice's noise law. @default from `falseAlarmsPerM2` (see `seedThreshold`)
   */
  threshold?: number;
  /** Score down to which a component grows from its seeds (hysteresis). @default 2.326 (p = 0.01 per cell) */
  lowThreshold?: number;
  /**
   * False components a slice of pure noise may start, per square metre surveyed. One per hectare per
   * slice: a 0.1 ha survey of 20 slices then expects 0.2 noise targets in all, well inside the tenth of
   * the target list that the precision goal leaves for errors of every kind. @default 1e-4
   */
  falseAlarmsPerM2?: number;
  /**
   * Area over which the gridded noise is correlated, m^2: cells further apart than the gridding's
   * search ellipse share no trace. @default pi x radius x radiusAcross of `stack.gridding`, else one cell
   */
  correlationAreaM2?: number;
  /** Score each slice against its fitted Gamma noise law (`noise`), or by median / MAD (`robust`). @default 'noise' */
  scoring?: 'noise' | 'robust';
  /**
   * A component too large for any object at its depth (a laterally extensive reflector) — e.g. wider
   * than a utility and longer than a structure (`maxUtilityWidthM`, `maxStructureExtentM`). Such a
   * component is kept as a layer member, and the objects inside it are the parts that stand out from
   * the layer as the layer stands out from the noise: its cells are scored against a Gamma law fitted
   * to them and thresholded again. @default never
   */
  isLayer?: (shape: Shape, depthM: number) => boolean;
  /**
   * Radius of the disk a layer-sized component is opened with (`thickParts`) before it is called a
   * layer, m, at a depth: linear thick parts joined by necks narrower than its diameter are separate
   * objects (a pipe touching a band of air-wave arcs, a pipe inside a patchy layer). @default the
   * first Fresnel zone radius sqrt(lambda z / 2) with lambda = 2 x the slice's thickness (slices are
   * half a wavelength thick by default, @lamina/slices): narrower than a utility's response across
   * its axis (its diameter plus the Fresnel zone), wider than the rim of a ring or an arc
   */
  splitRadiusM?: (depthM: number, thicknessM: number) => number;
  /**
   * Open layer-sized components (`splitRadiusM`) and take the linear thick parts out as objects. Off by
   * default: on the field benchmark (issue 12, 2026-12-03) it took the warehouse sample site's old sewer
   * from 52 % to 100 % but moved the held-out half little (precision 31.1 -> 31.3 %, utility recall
   * 95.0 -> 94.5 %, pieces 3.4 -> 3.6), lowered the yard's power cable to 74 % and added two air-wave
   * targets in the warehouse (linear parts of wall bands). @default false
   */
  splitLayers?: boolean;
  /**
   * Width of a utility's response across its axis in a slice (its top and the component's depth), m
   * (`maxUtilityWidthM` of the classes; not finite: no bands in that slice). A layer-sized component that
   * falls apart into two or more straight bands this wide (`straightBands`), each linear and no layer by
   * itself, with what is left no layer either, is those objects: utilities crossing in one slice make an
   * X that its second moments size like a layer. @default none: no bands
   */
  bandWidthM?: (sliceTopM: number, depthM: number) => number;
  /** Whether a band of cells in slice k lies along an air-wave locus (`bandWidthM`: such bands are not split off). @default none */
  bandOnLocus?: (cells: Int32Array, slice: number) => boolean;
  /** Minimum cells of a component. @default 6 */
  minCells?: number;
  /** Minimum area of a component, m^2 (in addition to minCells). @default 0 */
  minAreaM2?: number;
}

export interface Extraction {
  members: Member[];
  /** The members linked into 3D anomalies (made on first use). */
  readonly anomalies: Anomaly3D[];
  /**
   * Scores of each slice (NaN at nodata), same order as `stack.slices`. Under a noise law, scores more
   * than 0.5 under `lowThreshold` are not worked out: such cells read the score of the value cut (still
   * that far under it), so compare them only with thresholds at or above `lowThreshold`.
   */
  scores: Float32Array[];
  /** Each slice's noise law (null where none could be fitted: robust scores stand in). */
  noise: (NoiseLaw | null)[];
  /** The seed and growth thresholds used. */
  threshold: number;
  lowThreshold: number;
}

/**
 * Seed threshold for a site-wide false-alarm rate: with `nInd = area / correlationArea` independent
 * cells per slice, a per-cell exceedance p gives about nInd p noise seeds; so p = rate x
 * correlationArea, and the threshold is the normal deviate of p.
 */
export function seedThreshold(falseAlarmsPerM2: number, correlationAreaM2: number): number {
  return normalIsf(Math.min(0.5, falseAlarmsPerM2 * correlationAreaM2));
}

/** The default correlation area of a stack's gridded noise, m^2 (see `ExtractOptions.correlationAreaM2`). */
export function correlationArea(stack: SliceStack, metresPerUnit = 1): number {
  const g = stack.gridding;
  const cell = (stack.grid.cellSize * metresPerUnit) ** 2;
  return g && g.radius > 0 && g.radiusAcross > 0 ? Math.max(cell, Math.PI * g.radius * g.radiusAcross * metresPerUnit ** 2) : cell;
}

/**
 * How far under the growth threshold a slice's scores are worked out (`noiseScores`' floor): far more than
 * their rounding near the cut (some 1e-9), so every cell that any threshold at or above it takes is scored.
 */
const SCORE_MARGIN = 0.5;

/**
 * Anomalies of a slice stack: per slice, robust z-scores (median / MAD), hysteresis threshold,
 * 8-connected components of at least `minCells`; then members linked across neighbouring slices
 * into 3D anomalies with depth range, union outline, shape and (linear) centreline.
 */
export function extractAnomalies(stack: SliceStack, options: ExtractOptions = {}): Extraction {
  const { grid } = stack;
  const mpu = options.metresPerUnit ?? 1;
  const robust = options.scoring === 'robust';
  const high = options.threshold ?? (robust ? 5 : seedThreshold(options.falseAlarmsPerM2 ?? 1e-4, options.correlationAreaM2 ?? correlationArea(stack, mpu)));
  const low = Math.min(high, options.lowThreshold ?? (robust ? 3 : normalIsf(0.01)));
  const minCells = options.minCells ?? 6;
  const cellAreaM2 = (grid.cellSize * mpu) ** 2;
  const minCellsByArea = Math.ceil((options.minAreaM2 ?? 0) / cellAreaM2);
  const members: Member[] = [];
  const scores: Float32Array[] = [];
  const noise: (NoiseLaw | null)[] = [];
  for (let si = 0; si < stack.slices.length; si++) {
    const slice = stack.slices[si]!;
    const law = robust ? null : fitNoiseLaw(slice.values, grid.nodata);
    noise.push(law);
    // scores well under the growth threshold are only ever compared with it (or with higher ones): not worked out
    const z = law ? noiseScores(slice.values, grid.nodata, law, undefined, low - SCORE_MARGIN) : robustScores(slice.values, grid.nodata);
    scores.push(z);
    const min = Math.max(minCells, minCellsByArea);
    for (const cells of components(z, grid.width, grid.height, high, low, min)) {
      const energy = law ? noiseMean(law) : Number.NaN;
      const m = makeMember(members.length, si, cells, stack, z, options, energy);
      const isLayer = options.isLayer;
      if (!isLayer?.(m.shape, m.bottomM)) {
        members.push(m);
        continue;
      }
      // utilities crossing in the slice: straight bands, each an object, and no layer left over
      const crossing = options.bandWidthM ? crossingObjects(cells, m.bottomM, options.bandWidthM(slice.topM, m.bottomM) / (grid.cellSize * mpu), min, z, high, (c) => cellShape(c, grid, options), isLayer, grid.width, options.bandOnLocus && ((c) => options.bandOnLocus!(c, si))) : null;
      if (crossing) {
        for (const p of crossing) members.push(makeMember(members.length, si, p, stack, z, options, energy));
        continue;
      }
      // pipes joined to the block by thin necks come out first; the rest stays one layer member
      // (compact parts stay in it: the ringing below a big pipe falls apart into many, and objects
      // inside a layer are what stands out from it, objectsInLayer)
      const radius = options.splitLayers ? (options.splitRadiusM ?? fresnelOfSlice)(m.bottomM, slice.bottomM - slice.topM) / (grid.cellSize * mpu) : 0;
      const objects = thickParts(cells, grid.width, radius).filter((p) => {
        if (p.length < min || !hasSeed(p, z, high)) return false;
        const shape = cellShape(p, grid, options);
        return shape.kind === 'linear' && !isLayer(shape, m.bottomM);
      });
      for (const p of objects) members.push(makeMember(members.length, si, p, stack, z, options, energy));
      const rest = objects.length === 0 ? cells : without(cells, objects);
      if (rest.length === 0) continue;
      const q = rest === cells ? m : makeMember(members.length, si, rest, stack, z, options, energy);
      q.id = members.length;
      q.layer = true;
      members.push(q);
      for (const part of objectsInLayer(rest, slice.values, grid, high, low, min)) members.push(makeMember(members.length, si, part.cells, stack, part.scores, options, part.noiseEnergy));
    }
  }
  // linked on first use: a caller that cuts members first (screening's crossings) links them itself
  let anomalies: Anomaly3D[] | undefined;
  return {
    members,
    get anomalies(): Anomaly3D[] {
      anomalies ??= linkedAnomalies(members, stack, options);
      return anomalies;
    },
    scores,
    noise,
    threshold: high,
    lowThreshold: low,
  };
}

/** Members linked across neighbouring slices into 3D anomalies, shallowest first, then west to east, numbered in that order. */
function linkedAnomalies(members: Member[], stack: SliceStack, options: ExtractOptions): Anomaly3D[] {
  const { grid } = stack;
  const groups = linkMembers(members, grid.width * grid.height, grid.cellSize, options);
  const anomalies = groups.map((g, i) => buildAnomaly(`A${String(i + 1).padStart(4, '0')}`, g.map((id) => members[id]!), stack, options));
  // stable order: shallowest first, then west to east
  anomalies.sort((a, b) => a.depthTopM - b.depthTopM || a.members[0]!.x - b.members[0]!.x);
  anomalies.forEach((a, i) => (a.id = `A${String(i + 1).padStart(4, '0')}`));
  return anomalies;
}

/**
 * The objects of a layer-sized component that is utilities crossing (`bandWidthM`): two or more straight
 * bands (`straightBands`), each with a seed, linear and no layer by itself, none along an air-wave locus
 * (`onLocus`), and the cells left over no layer either; the bands and the left-over parts of at least
 * `minCells`, or null.
 */
function crossingObjects(
  cells: Int32Array,
  depthM: number,
  bandCells: number,
  minCells: number,
  z: Float32Array,
  high: number,
  shapeOf: (cells: Int32Array) => Shape,
  isLayer: (shape: Shape, depthM: number) => boolean,
  width: number,
  onLocus?: (cells: Int32Array) => boolean,
): Int32Array[] | null {
  if (!(bandCells >= 1) || !Number.isFinite(bandCells)) return null;
  // the bands up to the first that is no object; that one and those it would have been followed by stay in the rest
  const isObject = (b: Int32Array) => {
    if (!hasSeed(b, z, high)) return false;
    const s = shapeOf(b);
    return s.kind === 'linear' && !isLayer(s, depthM);
  };
  const { bands: objects, rest } = straightBands(cells, width, bandCells, minCells, 4, isObject);
  if (objects.length < 2) return null;
  // bands along an air-wave locus (the two sides of a row of posts, a wall's band) are no objects to
  // split off: such a component stays as it was, for the screening
  if (onLocus && objects.some((b) => onLocus(b))) return null;
  if (rest.length >= minCells && isLayer(shapeOf(rest), depthM)) return null;
  return [...objects, ...connectedParts(rest, width).filter((p) => p.length >= minCells && hasSeed(p, z, high))];
}

/** First Fresnel zone radius at depth z for a slice half a wavelength thick (see `splitRadiusM`). */
function fresnelOfSlice(depthM: number, thicknessM: number): number {
  return Math.sqrt(Math.max(depthM, 0) * Math.max(thicknessM, 0));
}

function hasSeed(cells: Int32Array, z: Float32Array, high: number): boolean {
  for (let i = 0; i < cells.length; i++) if (z[cells[i]!]! >= high) return true;
  return false;
}

/** A component's cells without the objects' cells (ascending). */
function without(cells: Int32Array, objects: Int32Array[]): Int32Array {
  const taken = new Set<number>();
  for (const p of objects) for (const k of p) taken.add(k);
  return cells.filter((k) => !taken.has(k));
}

/** Components inside a layer's cells that stand out from the layer's own Gamma law (see `isLayer`). */
function objectsInLayer(cells: Int32Array, values: Float32Array, grid: SliceStack['grid'], high: number, low: number, minCells: number): { cells: Int32Array; scores: Float32Array; noiseEnergy: number }[] {
  const inside = valuesAt(values, cells);
  const law = fitNoiseLaw(inside, grid.nodata);
  if (!law) return [];
  const z = new Float32Array(grid.width * grid.height).fill(Number.NaN);
  const zs = noiseScores(inside, grid.nodata, law);
  for (let i = 0; i < cells.length; i++) z[cells[i]!] = zs[i]!;
  return components(z, grid.width, grid.height, high, low, minCells).map((c) => ({ cells: c, scores: z, noiseEnergy: noiseMean(law) }));
}

/** A member (one slice's component) from its cells and the slice's robust scores. */
export function makeMember(id: number, si: number, cells: Int32Array, stack: SliceStack, z: Float32Array, options: ShapeOptions = {}, noiseEnergy = Number.NaN): Member {
  return memberOf(id, si, cells, valuesAt(z, cells), stack, options, noiseEnergy);
}

/** values[cells[i]] for each i (a plain loop: `Float32Array.from` with a function calls it per cell, slow before it is compiled). */
function valuesAt(values: Float32Array, cells: Int32Array): Float32Array {
  const out = new Float32Array(cells.length);
  for (let i = 0; i < cells.length; i++) out[i] = values[cells[i]!]!;
  return out;
}

/**
 * A member from its cells and each cell's score (same order as `cells`, ascending). `noiseEnergy` is
 * the mean noise energy of its slice (NaN when unknown: no strength).
 */
export function memberOf(id: number, si: number, cells: Int32Array, scores: Float32Array, stack: SliceStack, options: ShapeOptions = {}, noiseEnergy = Number.NaN): Member {
  const { grid } = stack;
  const slice = stack.slices[si]!;
  const mpu = options.metresPerUnit ?? 1;
  let sw = 0, sx = 0, sy = 0, peakValue = -Infinity, peakScore = -Infinity;
  for (let i = 0; i < cells.length; i++) {
    const k = cells[i]!;
    const s = scores[i]!;
    const r = (k / grid.width) | 0;
    const w = Math.max(s, 1e-6);
    sw += w;
    sx += w * cellCentreX(grid, k - r * grid.width);
    sy += w * cellCentreY(grid, r);
    if (slice.values[k]! > peakValue) peakValue = slice.values[k]!;
    if (s > peakScore) peakScore = s;
  }
  return {
    id,
    slice: si,
    topM: slice.topM,
    bottomM: slice.bottomM,
    cells,
    scores,
    x: sx / sw,
    y: sy / sw,
    areaM2: cells.length * (grid.cellSize * mpu) ** 2,
    peakValue,
    peakScore,
    noiseEnergy,
    strengthDb: noiseEnergy > 0 ? 10 * Math.log10(Math.max(peakValue, 1e-300) / noiseEnergy) : Number.NaN,
    shape: cellShape(cells, grid, options),
  };
}

/**
 * The union of the members' cells (each ascending), ascending, each with its best score over the
 * members: the members' lists merged one after another (a max does not depend on the order).
 */
function unionOfCells(members: Member[]): { cells: Int32Array; weights: Float32Array } {
  return (members.length > 1 ? wasmUnionOfCells(members) : null) ?? unionOfCellsInJs(members);
}

/** `unionOfCells` in JavaScript: where WebAssembly does not run, for one member or none, and its kernel's reference in the tests (cells-wasm.ts). */
export function unionOfCellsInJs(members: readonly Pick<Member, 'cells' | 'scores'>[]): { cells: Int32Array; weights: Float32Array } {
  let cells = members[0]?.cells ?? new Int32Array(0);
  let weights: ArrayLike<number> = members[0]?.scores ?? new Float32Array(0);
  for (let m = 1; m < members.length; m++) {
    const b = members[m]!.cells, bw = members[m]!.scores;
    const outC = new Int32Array(cells.length + b.length);
    const outW = new Float64Array(outC.length);
    let i = 0, j = 0, n = 0;
    while (i < cells.length || j < b.length) {
      const ka = i < cells.length ? cells[i]! : Infinity, kb = j < b.length ? b[j]! : Infinity;
      if (ka < kb) (outC[n] = ka), (outW[n++] = weights[i++]!);
      else if (kb < ka) (outC[n] = kb), (outW[n++] = bw[j++]!);
      else (outC[n] = ka), (outW[n++] = Math.max(weights[i++]!, bw[j++]!));
    }
    cells = outC.subarray(0, n);
    weights = outW.subarray(0, n);
  }
  return { cells: Int32Array.from(cells), weights: Float32Array.from(weights) };
}

/** A 3D anomaly from its members (any slices of one stack). */
export function buildAnomaly(id: string, members: Member[], stack: SliceStack, options: ShapeOptions = {}): Anomaly3D {
  const { grid } = stack;
  const mpu = options.metresPerUnit ?? 1;
  const sorted = [...members].sort((a, b) => a.slice - b.slice || a.id - b.id);
  const { cells, weights } = unionOfCells(sorted);
  const shape = cellShape(cells, grid, options);
  const outline = traceOutline(cells, grid);
  const a: Anomaly3D = {
    id,
    members: sorted,
    depthTopM: Math.min(...sorted.map((m) => m.topM)),
    depthBottomM: Math.max(...sorted.map((m) => m.bottomM)),
    cells,
    outline,
    shape,
    areaM2: outlineArea(outline) * mpu * mpu,
    peakValue: Math.max(...sorted.map((m) => m.peakValue)),
    peakScore: Math.max(...sorted.map((m) => m.peakScore)),
    strengthDb: sorted.reduce((best, m) => (m.strengthDb > best || Number.isNaN(best) ? m.strengthDb : best), Number.NaN),
  };
  if (shape.kind === 'linear') a.centreline = centreline(cells, weights, grid, shape);
  return a;
}
