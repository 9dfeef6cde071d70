import { describe, expect, it } from 'vitest';
import {
  buildSlices,
  cellCentre,
  levelLines,
  sliceWindows,
  surveyGeometry,
  SliceBuilder,
  type LineInput,
} from '../src';
import { constantModel, timeFromDepth } from '@lamina/velocity';
import { mulberry32 as rng } from '@lamina/random';

const V = 0.1; // m/ns
const SEP = 0.1; // m
const DT = 0.1; // ns
const NS = 400;
const T0 = 3; // ns, aligned time-zero

/**
 * A small survey of our own: 40 lines along x (or y), 0.5 m apart, traces every 0.05 m, over a straight
 * pipe from (2, 1) to (18, 8) at 0.8 m. Each trace's envelope is a 1 ns Gaussian pulse at the bistatic
 * two-way time of the nearest point of the pipe, weaker with horizontal distance, over weak noise.
 */
function survey(alongY = false, gains: number[] = []): LineInput[] {
  const r = rng(42);
  const lines: LineInput[] = [];
  const [ax, ay, bx, by, z] = [2, 1, 18, 8, 0.8];
  const len = Math.hypot(bx - ax, by - ay);
  for (let j = 0; j < 40; j++) {
    const n = 401;
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    const data = new Float32Array(n * NS);
    for (let t = 0; t < n; t++) {
      const along = (j % 2 === 0 ? t : n - 1 - t) * 0.05; // walked back and forth
      x[t] = alongY ? j * 0.5 : along;
      y[t] = alongY ? along : j * 0.5;
      const u = Math.max(0, Math.min(1, ((x[t]! - ax) * (bx - ax) + (y[t]! - ay) * (by - ay)) / (len * len)));
      const h = Math.hypot(x[t]! - (ax + u * (bx - ax)), y[t]! - (ay + u * (by - ay)));
      const tt = timeFromDepth(constantModel(V), Math.hypot(h, z), SEP) + T0;
      const amp = Math.exp(-((h / 0.4) ** 2)) * (gains[j] ?? 1);
      for (let s = 0; s < NS; s++) data[t * NS + s] = amp * Math.exp(-(((s * DT - tt) / 1) ** 2)) + 0.02 * r() * (gains[j] ?? 1);
    }
    lines.push({ id: `L${j}`, nTraces: n, nSamples: NS, dtNs: DT, timeZeroNs: T0, data, x, y });
  }
  return lines;
}

const windows = sliceWindows(0, 1.6, { thicknessM: 0.125 });
const opts = { windows, model: constantModel(V), separationM: SEP, crs: 'EPSG:32617' };

function pipeContrast(values: Float32Array, grid: { width: number; height: number; originX: number; originY: number; cellSize: number; nodata: number; crs: string }) {
  let on = 0;
  let off = 0;
  let nOn = 0;
  let nOff = 0;
  for (let row = 0; row < grid.height; row++) {
    for (let col = 0; col < grid.width; col++) {
      const v = values[row * grid.width + col]!;
      if (v === grid.nodata) continue;
      const [x, y] = cellCentre(grid, col, row);
      if (x < 3 || x > 17) continue;
      // Distance to the pipe's plan line through (2, 1) and (18, 8).
      const d = Math.abs((8 - 1) * x - (18 - 2) * y + 18 * 1 - 8 * 2) / Math.hypot(7, 16);
      if (d < 0.15) {
        on += v;
        nOn++;
      } else if (d > 2) {
        off += v;
        nOff++;
      }
    }
  }
  return { on: on / nOn, off: off / nOff, nOn };
}

describe('survey geometry', () => {
  it('finds trace spacing, line spacing and direction of parallel lines walked both ways', () => {
    const lines = survey();
    const b = new SliceBuilder(opts);
    for (const l of lines) b.add(l);
    const { coords, lineStarts } = b.points();
    const g = surveyGeometry(coords, lineStarts);
    expect(g.traceSpacing).toBeCloseTo(0.05, 9);
    expect(g.lineSpacing).toBeCloseTo(0.5, 9);
    expect(Math.min(g.directionDeg, 180 - g.directionDeg)).toBeLessThan(1e-6);
    expect(g.parallelism).toBeCloseTo(1, 9);
    expect(g.directions).toBe(1);
  });

  it('takes the spacing within each direction of a grid surveyed both ways, not the zero distance at crossings', () => {
    // 0.5 m lines along x and, across them, 0.8 m lines along y, a trace every 0.05 m (positions only)
    const xs = Float64Array.from({ length: 201 }, (_, i) => 0.05 * i);
    const parts: number[][] = [];
    for (let k = 0; k < 21; k++) parts.push(Array.from(xs, (x) => [x, 0.5 * k]).flat());
    for (let k = 0; k < 13; k++) parts.push(Array.from(xs, (y) => [0.8 * k, y]).flat());
    const lineStarts = Int32Array.from([0, ...parts.map((_, i) => parts.slice(0, i + 1).reduce((n, p) => n + p.length / 2, 0))]);
    const g = surveyGeometry(Float64Array.from(parts.flat()), lineStarts);
    expect(g.directions).toBe(2);
    // median over the queries of both groups: 21 x 3 at 0.5 m and 13 x 3 at 0.8 m
    expect(g.lineSpacing).toBeCloseTo(0.5, 9);
    expect(g.parallelism).toBeLessThan(0.5);
  });
});

describe('slices of a buried pipe (synthetic survey)', () => {
  it('the pipe is a continuous linear high along its plan position in the slice at its depth', async () => {
    for (const alongY of [false, true]) {
      const stack = await buildSlices(survey(alongY), opts);
      const g = stack.gridding!;
      expect(g.directionDeg).toBeCloseTo(alongY ? 90 : 0, 6);
      // Defaults from the line spacing: cell a quarter of it, radii half of it along, all of it across.
      expect(stack.grid.cellSize).toBeCloseTo(0.125, 9);
      expect([g.radius, g.radiusAcross]).toEqual([0.25, 0.5]);
      const k = windows.findIndex((w) => w.topM <= 0.8 && 0.8 < w.bottomM);
      const c = pipeContrast(stack.slices[k]!.values, stack.grid);
      expect(c.nOn).toBeGreaterThan(100);
      expect(c.on / c.off).toBeGreaterThan(50);
      // Continuity: every stretch of 1 m along the pipe is high.
      for (let s = 0.1; s < 0.9; s += 1 / 17.5) {
        const x = 2 + s * 16;
        const y = 1 + s * 7;
        const col = Math.floor((x - stack.grid.originX) / stack.grid.cellSize);
        const row = Math.floor((stack.grid.originY - y) / stack.grid.cellSize);
        expect(stack.slices[k]!.values[row * stack.grid.width + col]!).toBeGreaterThan(20 * c.off);
      }
      // Its energy peaks in the slice that holds its depth.
      const energy = stack.slices.map((sl) => pipeContrast(sl.values, stack.grid).on);
      expect(energy.indexOf(Math.max(...energy))).toBe(k);
    }
  });

  it('levelling removes stripes from line-to-line gain differences', async () => {
    const gains = Array.from({ length: 40 }, (_, j) => (j % 2 ? 3 : 1));
    const raw = await buildSlices(survey(false, gains), { ...opts, level: false });
    const levelled = await buildSlices(survey(false, gains), { ...opts, level: true });
    expect(levelled.gridding!.levelled).toBe(true);
    // Shallow slice (above the pipe): background only. Compare rows on even and odd lines.
    const stripe = (values: Float32Array) => {
      const g = raw.grid;
      const rowMean = (y: number) => {
        const row = Math.floor((g.originY - y) / g.cellSize);
        let s = 0;
        for (let c = 0; c < g.width; c++) s += values[row * g.width + c]!;
        return s / g.width;
      };
      return rowMean(5.0) / rowMean(5.5); // y = 5.0 on line 10 (gain 1), 5.5 on line 11 (gain 3)
    };
    expect(stripe(raw.slices[0]!.values)).toBeLessThan(0.2); // (1/3)^2 in energy, smeared a little
    expect(Math.abs(stripe(levelled.slices[0]!.values) - 1)).toBeLessThan(0.2);
  });

  it('levelLines makes every line median equal the median of line medians', () => {
    const values = Float32Array.from({ length: 30 }, (_, i) => (i < 10 ? 1 : i < 20 ? 4 : 2) * (1 + (i % 10) / 10));
    const starts = Int32Array.from([0, 10, 20, 30]);
    const f = levelLines(values, 1, starts);
    expect(Array.from(f)).toEqual([2, 0.5, 1]);
    const med = (a: number, b: number) => Array.from(values.subarray(a, b)).sort((p, q) => p - q);
    for (const [a, b] of [[0, 10], [10, 20], [20, 30]]) {
      const s = med(a!, b!);
      expect((s[4]! + s[5]!) / 2).toBeCloseTo(2 * 1.45, 5);
    }
  });
});
