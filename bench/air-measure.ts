// A measure of the field bench (new with the airEvents step, issue 18; not one of packages/scoring's
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

/** The measure of one output folder against its truth.json. */
export async function airMeasure(outDir: string, truthFile: string): Promise<AirMeasure> {
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
  const out = emptyAirMeasure();
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
    for (let q = 0; q < n; q++) {
      const v = band[q]!;
      if (v === sj.nodata || !Number.isFinite(v)) continue;
      const onLocus = bands.some((b, i) => b.on && dRefl[i]![q]! >= b.lo && dRefl[i]![q]! <= b.hi);
      if (onLocus) {
        if (!nearBuried[q]) {
          out.locusSum += v / median;
          out.locusCells++;
        }
        continue;
      }
      if (buried.some((b, i) => inSlice[i] && dBur[i]![q]! <= b.r + 0.25)) {
        out.buriedSum += v / median;
        out.buriedCells++;
      } else if (!nearBuried[q]) {
        out.restSum += v / median;
        out.restCells++;
      }
    }
  }
  return out;
}

