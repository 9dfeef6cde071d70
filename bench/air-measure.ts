// Two measures of the field bench (new with the airEvents step, issue 18; not one of packages/scoring's
// frozen definitions): how strong the slices are on the air-wave loci and on the buried objects, each
// against the slice's own background.
//
// For every slice of an output folder (slices.tif, the mean square of the envelope over the slice window)
// and every cell with a value:
// - on an air-wave locus: the plan distance d to a truth above-ground reflector the simulator drew (its
//   airWave.traces > 0) lies in [r(top) - tol, r(bottom) + tol], r(z) the air-wave radius of the slice
//   depths through the run's own velocity model (`airRadiusM` of @lamina/screening, as screening predicts
//   the loci), an overhead reflector at plan distance sqrt(r^2 - h^2), tol = 0.25 m + a quarter air
//   wavelength (the scoring's locus tolerance); and no buried object within its radius + 1 m in plan;
// - on a buried object: within its radius + 0.25 m in plan, its depth range [top - 0.25, bottom + 0.25] m
//   overlapping the slice window; and on no air-wave locus.
// Each cell's value is divided by the median of its slice's cells (the background); a scene's figure is
// 10 log10 of the mean of those ratios over its cells (the slice value is an energy, so 10 log10). Pooled:
// the ratios summed over scenes, over the cells counted. Beside it, the excess on the loci over the mean of
// the other cells (`excessDb`): the part of the locus figure that air waves make.
//
// The second, `AirSuppression` of `airMeasures` (issue 18's acceptance measure since 2026-12-05), pairs a
// scene's run without the airEvents step with its run with it, cell by cell, on the cells that stood out
// before the step.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { readGeoTiff } from '../packages/cog/src/index';
import { C_M_PER_NS } from '../packages/constants/src/index';
import { airRadiusM } from '../packages/screening/src/index';
import { readScoreTruth } from '../packages/scoring/src/index';
import type { VelocityModel } from '../packages/velocity/src/index';

export interface AirMeasure {
  /** Sum over locus cells of value / slice median, and their number. */
  locusSum: number;
  locusCells: number;
  /** The same on buried objects. */
  buriedSum: number;
  buriedCells: number;
  /** The same on the other cells (on no locus, no buried object within its radius + 1 m): the background's own mean. */
  restSum: number;
  restCells: number;
}

export const emptyAirMeasure = (): AirMeasure => ({ locusSum: 0, locusCells: 0, buriedSum: 0, buriedCells: 0, restSum: 0, restCells: 0 });

/**
 * The air-wave energy on the loci above the background's own mean (10 log10 of (locus mean - rest mean),
 * both over the slice medians); null when the loci are no stronger than the rest. A mean over a median
 * is above 1 for any skewed background, so the plain locus figure cannot fall below the rest's: this one
 * says how much of what stands out on the loci is left.
 */
export function excessDb(m: AirMeasure): number | null {
  if (!(m.locusCells > 0 && m.restCells > 0)) return null;
  const e = m.locusSum / m.locusCells - m.restSum / m.restCells;
  return e > 0 ? 10 * Math.log10(e) : null;
}

/** 10 log10 of a mean ratio; null without cells. */
export function measureDb(sum: number, cells: number): number | null {
  return cells > 0 && sum > 0 ? 10 * Math.log10(sum / cells) : null;
}

function segDist(x: number, y: number, ax: number, ay: number, bx: number, by: number): number {
  const dx = bx - ax, dy = by - ay;
  const l2 = dx * dx + dy * dy;
  let t = l2 > 0 ? ((x - ax) * dx + (y - ay) * dy) / l2 : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  return Math.hypot(x - ax - t * dx, y - ay - t * dy);
}

/** Cell zones of `zonesOf`: on no locus and away from buried objects (the background), on an air-wave locus, on a buried object, neither. */
const REST = 0, LOCUS = 1, BURIED = 2, NONE = 3;

/** A slice of an output folder with a positive median: its window, values (slices.tif band) and the median of those with a value. */
interface SliceRead {
  band: number;
  topM: number;
  bottomM: number;
  values: ArrayLike<number>;
  median: number;
}

/** What the measures read from an output folder: its grid, nodata value, velocity model and slices. */
interface FolderRead {
  grid: { width: number; height: number; originX: number; originY: number; pixelSize: number };
  nodata: number;
  model: VelocityModel;
  slices: SliceRead[];
}

/** Whether a slice value is one (not nodata, finite). */
const hasValue = (v: number, nodata: number) => v !== nodata && Number.isFinite(v);

async function readFolder(outDir: string): Promise<FolderRead> {
  const sj = JSON.parse(readFileSync(join(outDir, 'slices.json'), 'utf8')) as { slices: { index: number; band: number; topM: number; bottomM: number }[]; nodata: number };
  const vj = JSON.parse(readFileSync(join(outDir, 'velocity.json'), 'utf8')) as { model: VelocityModel };
  const tif = await readGeoTiff(readFileSync(join(outDir, 'slices.tif')));
  const { width, height, originX, originY, pixelSize } = tif;
  const slices: SliceRead[] = [];
  for (const sl of sj.slices) {
    const band = tif.bands[sl.band - 1];
    if (!band) continue;
    const vals: number[] = [];
    for (let q = 0; q < width * height; q++) {
      const v = band[q]!;
      if (hasValue(v, sj.nodata)) vals.push(v);
    }
    if (vals.length === 0) continue;
    vals.sort((a, b) => a - b);
    const median = vals[vals.length >> 1]!;
    if (!(median > 0)) continue;
    slices.push({ band: sl.band, topM: sl.topM, bottomM: sl.bottomM, values: band, median });
  }
  return { grid: { width, height, originX, originY, pixelSize }, nodata: sj.nodata, model: vj.model, slices };
}

/**
 * The zone of every cell of every slice of `f` against truth.json (the rules in the header), whether or
 * not the cell has a value: a function of the grid, the slice windows and the velocity model only, so two
 * folders that share those share their zones.
 */
function zonesOf(f: FolderRead, truthFile: string): Uint8Array[] {
  const truth = readScoreTruth(truthFile);
  const mpu = truth.metresPerUnit;
  const fr = truth.antenna?.frequencyMHz;
  const tol = fr && fr > 0 ? 0.25 + (C_M_PER_NS * (1000 / fr)) / 4 : 0.5;
  const seg = (a: { from?: number[]; to?: number[]; center?: number[] }): [number, number, number, number] =>
    a.center ? [a.center[0]!, a.center[1]!, a.center[0]!, a.center[1]!] : [a.from![0]!, a.from![1]!, a.to![0]!, a.to![1]!];
  const refl = truth.aboveGround.filter((a) => a.airWave?.traces === undefined || a.airWave.traces > 0).map((a) => ({ s: seg(a), h: a.kind === 'overhead' ? (a.heightM ?? 0) : 0 }));
  const buried = truth.buried.map((b) => {
    const s = seg(b);
    const z0 = b.center ? b.center[2]! : Math.min(b.from![2]!, b.to![2]!);
    const z1 = b.center ? b.center[2]! : Math.max(b.from![2]!, b.to![2]!);
    return { s, r: b.radiusM, top: z0 - b.radiusM, bottom: z1 + b.radiusM };
  });
  const { width, height, originX, originY, pixelSize } = f.grid;
  // plan distances of every cell, once
  const n = width * height;
  const dRefl = refl.map(() => new Float32Array(n));
  const dBur = buried.map(() => new Float32Array(n));
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const x = originX + (col + 0.5) * pixelSize;
      const y = originY - (row + 0.5) * pixelSize;
      const q = row * width + col;
      refl.forEach((r, i) => (dRefl[i]![q] = segDist(x, y, ...r.s) * mpu));
      buried.forEach((b, i) => (dBur[i]![q] = segDist(x, y, ...b.s) * mpu));
    }
  }
  const nearBuried = new Uint8Array(n);
  for (let q = 0; q < n; q++) if (buried.some((b, i) => dBur[i]![q]! <= b.r + 1)) nearBuried[q] = 1;
  return f.slices.map((sl) => {
    const ra = airRadiusM(sl.topM, f.model), rb = airRadiusM(sl.bottomM, f.model);
    const bands = refl.map((r) => {
      const plan = (v: number) => (r.h > 0 ? Math.sqrt(Math.max(0, v * v - r.h * r.h)) : v);
      const on = !(r.h > 0 && Math.max(ra, rb) < r.h - tol);
      return { on, lo: Math.min(plan(ra), plan(rb)) - tol, hi: Math.max(plan(ra), plan(rb)) + tol };
    });
    const inSlice = buried.map((b) => b.top - 0.25 <= sl.bottomM && b.bottom + 0.25 >= sl.topM);
    const zone = new Uint8Array(n).fill(NONE);
    for (let q = 0; q < n; q++) {
      const onLocus = bands.some((b, i) => b.on && dRefl[i]![q]! >= b.lo && dRefl[i]![q]! <= b.hi);
      if (onLocus) {
        if (!nearBuried[q]) zone[q] = LOCUS;
      } else if (buried.some((b, i) => inSlice[i] && dBur[i]![q]! <= b.r + 0.25)) zone[q] = BURIED;
      else if (!nearBuried[q]) zone[q] = REST;
    }
    return zone;
  });
}

/** `airMeasure` of a folder already read, with its zones. */
function measureOf(f: FolderRead, zones: Uint8Array[]): AirMeasure {
  const out = emptyAirMeasure();
  f.slices.forEach(({ values, median }, k) => {
    const zone = zones[k]!;
    for (let q = 0; q < zone.length; q++) {
      const v = values[q] as number;
      if (!hasValue(v, f.nodata)) continue;
      const r = v / median;
      if (zone[q] === LOCUS) {
        out.locusSum += r;
        out.locusCells++;
      } else if (zone[q] === BURIED) {
        out.buriedSum += r;
        out.buriedCells++;
      } else if (zone[q] === REST) {
        out.restSum += r;
        out.restCells++;
      }
    }
  });
  return out;
}

/** The measure of one output folder against its truth.json. */
export async function airMeasure(outDir: string, truthFile: string): Promise<AirMeasure> {
  const f = await readFolder(outDir);
  return measureOf(f, zonesOf(f, truthFile));
}

/**
 * What the airEvents step takes out where there is something to take (issue 18's acceptance measure; a
 * definition of its own, 2026-12-05). The same scene processed without the step (`before`) and with it
 * (`after`): both runs share pass 1, so their velocity model, slice windows and grid are the same, and a
 * cell is compared with itself.
 *
 * A cell counts when, before the step, it is brighter than 99 % of its slice's background cells (on no
 * locus, away from buried objects): it stands out at a 1 % false-alarm rate, so it holds energy the
 * background does not explain. Its energy above the background is v / median - mean of the background's
 * v / median, each run with its own slice median and background (after: floored at 0, so noise left on
 * a cleaned cell counts against the step). Summed over the counted locus cells (buried-object cells
 * alike), before over after, in dB: `suppressionDb`. A step that changes nothing reads 0 dB.
 *
 * Why not the plain locus figure (`airMeasure`): on the held-out scenes most locus cells are background
 * (pooled over even seeds 2-48 the loci held -0.1 dB over the other cells before the step), and a cell at
 * the noise floor cannot become 10 dB weaker; the old figures stay beside this one.
 */
export interface AirSuppression {
  /** Energy above the background, summed over the counted locus cells, before and after; their number. */
  locusBefore: number;
  locusAfter: number;
  locusCells: number;
  /** The same on the counted buried-object cells. */
  buriedBefore: number;
  buriedAfter: number;
  buriedCells: number;
}

export const emptyAirSuppression = (): AirSuppression => ({ locusBefore: 0, locusAfter: 0, locusCells: 0, buriedBefore: 0, buriedAfter: 0, buriedCells: 0 });

/** The quantile of the background that a counted cell must exceed before the step. */
export const STANDS_OUT_QUANTILE = 0.99;

/** 10 log10(before / after); null without counted cells, +Infinity when nothing is left. */
export function suppressionDb(before: number, after: number, cells: number): number | null {
  if (!(cells > 0 && before > 0)) return null;
  return after > 0 ? 10 * Math.log10(before / after) : Infinity;
}

/** `AirSuppression` of two folders read, on their shared zones (above). */
function suppressionOf(b: FolderRead, a: FolderRead, zones: Uint8Array[]): AirSuppression {
  const out = emptyAirSuppression();
  /** The background's values over the median (sorted) and their mean. */
  const background = (f: FolderRead, k: number): { mean: number; sorted: Float64Array } => {
    const { values, median } = f.slices[k]!;
    const zone = zones[k]!;
    const rest: number[] = [];
    for (let q = 0; q < zone.length; q++) if (zone[q] === REST && hasValue(values[q] as number, f.nodata)) rest.push((values[q] as number) / median);
    return { mean: rest.reduce((x, y) => x + y, 0) / Math.max(1, rest.length), sorted: Float64Array.from(rest).sort() };
  };
  for (let k = 0; k < b.slices.length; k++) {
    const sb = b.slices[k]!, sa = a.slices[k]!;
    const zone = zones[k]!;
    const bgB = background(b, k), bgA = background(a, k);
    if (bgB.sorted.length === 0) continue;
    const limit = bgB.sorted[Math.min(bgB.sorted.length - 1, Math.floor(STANDS_OUT_QUANTILE * bgB.sorted.length))]!;
    for (let q = 0; q < zone.length; q++) {
      const c = zone[q];
      if (c !== LOCUS && c !== BURIED) continue;
      const vb = sb.values[q] as number;
      if (!hasValue(vb, b.nodata)) continue;
      const rb = vb / sb.median;
      if (!(rb > limit)) continue;
      const eb = rb - bgB.mean;
      const va = sa.values[q] as number;
      const ea = hasValue(va, a.nodata) ? Math.max(0, va / sa.median - bgA.mean) : 0;
      if (c === LOCUS) {
        out.locusBefore += eb;
        out.locusAfter += ea;
        out.locusCells++;
      } else {
        out.buriedBefore += eb;
        out.buriedAfter += ea;
        out.buriedCells++;
      }
    }
  }
  return out;
}

/**
 * Both runs of a scene, without (`beforeDir`) and with (`afterDir`) the airEvents step: each one's
 * `airMeasure`, and their `AirSuppression` (null when their grids, slice windows or velocity models
 * differ). Each folder is read once and the cells are zoned once when the two share them.
 */
export async function airMeasures(beforeDir: string, afterDir: string, truthFile: string): Promise<{ before: AirMeasure; after: AirMeasure; suppression: AirSuppression | null }> {
  const b = await readFolder(beforeDir);
  const a = await readFolder(afterDir);
  const shape = (f: FolderRead) => JSON.stringify([f.grid, f.model, f.slices.map((s) => [s.band, s.topM, s.bottomM])]);
  const shared = shape(b) === shape(a);
  const zonesB = zonesOf(b, truthFile);
  const zonesA = shared ? zonesB : zonesOf(a, truthFile);
  return { before: measureOf(b, zonesB), after: measureOf(a, zonesA), suppression: shared ? suppressionOf(b, a, zonesB) : null };
}
