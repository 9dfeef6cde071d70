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
// The second, `airSuppression` (issue 18's acceptance measure since 2026-12-05), pairs a scene's run without
// the airEvents step with its run with it, cell by cell, on the cells that stood out before the step.
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

/** Cell classes of `classify`: on no locus and away from buried objects (the background), on an air-wave locus, on a buried object, neither. */
const REST = 0, LOCUS = 1, BURIED = 2, NONE = 3;

interface ClassifiedSlice {
  /** The slice's values (slices.tif band) and the median of those with a value. */
  values: ArrayLike<number>;
  median: number;
  /** REST, LOCUS, BURIED or NONE (also for cells without a value). */
  cls: Uint8Array;
}

interface Classified {
  grid: { width: number; height: number; originX: number; originY: number; pixelSize: number };
  windows: string;
  slices: ClassifiedSlice[];
}

/** Every slice of an output folder with its cells classed against truth.json (the rules in the header). */
async function classify(outDir: string, truthFile: string): Promise<Classified> {
  const truth = readScoreTruth(truthFile);
  const mpu = truth.metresPerUnit;
  const sj = JSON.parse(readFileSync(join(outDir, 'slices.json'), 'utf8')) as { slices: { index: number; band: number; topM: number; bottomM: number }[]; nodata: number };
  const vj = JSON.parse(readFileSync(join(outDir, 'velocity.json'), 'utf8')) as { model: VelocityModel };
  const tif = await readGeoTiff(readFileSync(join(outDir, 'slices.tif')));
  const f = truth.antenna?.frequencyMHz;
  const tol = f && f > 0 ? 0.25 + (C_M_PER_NS * (1000 / f)) / 4 : 0.5;
  const seg = (a: { from?: number[]; to?: number[]; center?: number[] }): [number, number, number, number] =>
    a.center ? [a.center[0]!, a.center[1]!, a.center[0]!, a.center[1]!] : [a.from![0]!, a.from![1]!, a.to![0]!, a.to![1]!];
  const refl = truth.aboveGround.filter((a) => a.airWave?.traces === undefined || a.airWave.traces > 0).map((a) => ({ s: seg(a), h: a.kind === 'overhead' ? (a.heightM ?? 0) : 0 }));
  const buried = truth.buried.map((b) => {
    const s = seg(b);
    const z0 = b.center ? b.center[2]! : Math.min(b.from![2]!, b.to![2]!);
    const z1 = b.center ? b.center[2]! : Math.max(b.from![2]!, b.to![2]!);
    return { s, r: b.radiusM, top: z0 - b.radiusM, bottom: z1 + b.radiusM };
  });
  const { width, height, originX, originY, pixelSize } = tif;
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
  const slices: ClassifiedSlice[] = [];
  for (const sl of sj.slices) {
    const band = tif.bands[sl.band - 1];
    if (!band) continue;
    const vals: number[] = [];
    for (let q = 0; q < n; q++) {
      const v = band[q]!;
      if (v !== sj.nodata && Number.isFinite(v)) vals.push(v);
    }
    if (vals.length === 0) continue;
    vals.sort((a, b) => a - b);
    const median = vals[vals.length >> 1]!;
    if (!(median > 0)) continue;
    const ra = airRadiusM(sl.topM, vj.model), rb = airRadiusM(sl.bottomM, vj.model);
    const bands = refl.map((r) => {
      const plan = (v: number) => (r.h > 0 ? Math.sqrt(Math.max(0, v * v - r.h * r.h)) : v);
      const on = !(r.h > 0 && Math.max(ra, rb) < r.h - tol);
      return { on, lo: Math.min(plan(ra), plan(rb)) - tol, hi: Math.max(plan(ra), plan(rb)) + tol };
    });
    const inSlice = buried.map((b) => b.top - 0.25 <= sl.bottomM && b.bottom + 0.25 >= sl.topM);
    const cls = new Uint8Array(n).fill(NONE);
    for (let q = 0; q < n; q++) {
      const v = band[q]!;
      if (v === sj.nodata || !Number.isFinite(v)) continue;
      const onLocus = bands.some((b, i) => b.on && dRefl[i]![q]! >= b.lo && dRefl[i]![q]! <= b.hi);
      if (onLocus) {
        if (!nearBuried[q]) cls[q] = LOCUS;
      } else if (buried.some((b, i) => inSlice[i] && dBur[i]![q]! <= b.r + 0.25)) cls[q] = BURIED;
      else if (!nearBuried[q]) cls[q] = REST;
    }
    slices.push({ values: band, median, cls });
  }
  const windows = JSON.stringify(sj.slices.map((s) => [s.band, s.topM, s.bottomM]));
  return { grid: { width, height, originX, originY, pixelSize }, windows, slices };
}

/** The measure of one output folder against its truth.json. */
export async function airMeasure(outDir: string, truthFile: string): Promise<AirMeasure> {
  const out = emptyAirMeasure();
  for (const { values, median, cls } of (await classify(outDir, truthFile)).slices) {
    for (let q = 0; q < cls.length; q++) {
      const r = (values[q] as number) / median;
      if (cls[q] === LOCUS) {
        out.locusSum += r;
        out.locusCells++;
      } else if (cls[q] === BURIED) {
        out.buriedSum += r;
        out.buriedCells++;
      } else if (cls[q] === REST) {
        out.restSum += r;
        out.restCells++;
      }
    }
  }
  return out;
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

/** The paired measure of a scene processed without (`beforeDir`) and with (`afterDir`) the airEvents step; null when their grids or slices differ. */
export async function airSuppression(beforeDir: string, afterDir: string, truthFile: string): Promise<AirSuppression | null> {
  const b = await classify(beforeDir, truthFile);
  const a = await classify(afterDir, truthFile);
  if (JSON.stringify(b.grid) !== JSON.stringify(a.grid) || b.windows !== a.windows || b.slices.length !== a.slices.length) return null;
  const out = emptyAirSuppression();
  const background = (s: ClassifiedSlice): { mean: number; sorted: Float64Array } => {
    const rest: number[] = [];
    for (let q = 0; q < s.cls.length; q++) if (s.cls[q] === REST) rest.push((s.values[q] as number) / s.median);
    const sorted = Float64Array.from(rest).sort();
    return { mean: rest.reduce((x, y) => x + y, 0) / Math.max(1, rest.length), sorted };
  };
  for (let k = 0; k < b.slices.length; k++) {
    const sb = b.slices[k]!, sa = a.slices[k]!;
    const bgB = background(sb), bgA = background(sa);
    if (bgB.sorted.length === 0) continue;
    const limit = bgB.sorted[Math.min(bgB.sorted.length - 1, Math.floor(STANDS_OUT_QUANTILE * bgB.sorted.length))]!;
    for (let q = 0; q < sb.cls.length; q++) {
      const c = sb.cls[q];
      if (c !== LOCUS && c !== BURIED) continue;
      const rb = (sb.values[q] as number) / sb.median;
      if (!(rb > limit)) continue;
      const eb = rb - bgB.mean;
      const ra = (sa.values[q] as number) / sa.median;
      const ea = Number.isFinite(ra) ? Math.max(0, ra - bgA.mean) : 0;
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
