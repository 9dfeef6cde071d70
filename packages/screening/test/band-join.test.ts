// Screening a grid in overlapping row bands and joining the bands' anomalies (BandJoin) against
// screening the whole grid at once: each object once, compact ones whole, a pipe that runs through every
// band covered end to end with no cell reported twice. The reference is the project's own whole-grid
// screening; what is checked is that cutting the grid changes neither what is found nor how often.
import { describe, expect, it } from 'vitest';
import { pointInRing } from '@lamina/anomalies';
import type { SliceGrid, SliceStack } from '@lamina/slices';
import { BandJoin, linesInRows, screenBands, screenSite, type GeoJsonFeature, type Line, type ScreenResult } from '../src';
import { constantVelocity, identity, surveyLines, synthStack } from './synth';

const grid: SliceGrid = { crs: 'EPSG:32617', originX: 1000, originY: 2040, cellSize: 0.1, width: 60, height: 400, nodata: -9999 };
const depths = [0.5, 0.7, 0.9];
// compact objects, most on the rows where the bands below meet (cores end at rows 66, 133, 200, 266, 333)
const blobs = [
  [1000.6, 2037.0],
  [1004.5, 2033.35], // row 66
  [1003.4, 2028.6],
  [1000.9, 2026.65], // row 133
  [1004.8, 2020.0], // row 200
  [1005.0, 2013.35], // row 266
  [1003.5, 2006.65], // row 333
] as const;
const pipeX = 1002.0;
const paint = (x: number, y: number) => {
  let v = Math.abs(x - pipeX) < 0.16 ? 6 : 0;
  for (const [bx, by] of blobs) if (Math.hypot(x - bx, y - by) < 0.4) v = 6;
  return v;
};
const stack = synthStack(grid, depths, 0.2, paint, 11);
const lines = surveyLines(grid, 0.5, 0.05);
const velocity = constantVelocity(0.1);

function bandStack(s: SliceStack, first: number, last: number): SliceStack {
  const w = s.grid.width;
  return {
    grid: { ...s.grid, originY: s.grid.originY - first * s.grid.cellSize, height: last - first },
    slices: s.slices.map((sl) => ({ ...sl, values: sl.values.subarray(first * w, last * w) })),
  };
}

function screen(st: SliceStack, ls: Line[]): ScreenResult {
  return screenSite({ stack: st, plan: [], velocity, lines: ls, lineSpacingM: 0.5, metresPerUnit: 1, toWgs84: identity }, { forecast: false });
}

function banded(maxRows: number, overlap: number): GeoJsonFeature[] {
  const join = new BandJoin({ toWgs84: identity, metresPerUnit: 1 });
  const out: GeoJsonFeature[] = [];
  for (const b of screenBands(grid.height, maxRows, overlap)) {
    const st = bandStack(stack, b.first, b.last);
    const ls = linesInRows(lines, grid.originY, grid.cellSize, b.first, b.last, 0.5);
    out.push(...join.take(screen(st, ls), b, grid.height, { main: st }).map((j) => j.feature));
  }
  return out;
}

type Ring = [number, number][];
/** (slice, cell) pairs inside each member outline of a feature (the outlines are in site coordinates here). */
function cellsOf(f: GeoJsonFeature): Set<string> {
  const out = new Set<string>();
  for (const m of f.properties.members as { slice: number; outline: { type: string; coordinates: unknown } }[]) {
    const polys = (m.outline.type === 'Polygon' ? [m.outline.coordinates] : m.outline.coordinates) as Ring[][];
    for (let row = 0; row < grid.height; row++)
      for (let col = 0; col < grid.width; col++) {
        const x = grid.originX + (col + 0.5) * grid.cellSize, y = grid.originY - (row + 0.5) * grid.cellSize;
        if (polys.some((rings) => pointInRing(x, y, rings[0]!) && !rings.slice(1).some((h) => pointInRing(x, y, h)))) out.add(`${m.slice}:${row * grid.width + col}`);
      }
  }
  return out;
}

const near = (f: GeoJsonFeature, x: number, y: number) => {
  const c = f.properties.centroid as [number, number];
  return Math.hypot(c[0] - x, c[1] - y) < 0.5;
};

describe('screening in row bands', () => {
  it('plans cores that tile the grid, each band reaching `overlap` rows past its core', () => {
    const bands = screenBands(400, 120, 30);
    expect(bands.length).toBe(6);
    expect(bands[0]!.coreFirst).toBe(0);
    expect(bands.at(-1)!.coreLast).toBe(400);
    for (let i = 1; i < bands.length; i++) expect(bands[i]!.coreFirst).toBe(bands[i - 1]!.coreLast);
    for (const b of bands) {
      expect(b.first).toBe(Math.max(0, b.coreFirst - 30));
      expect(b.last).toBe(Math.min(400, b.coreLast + 30));
      expect(b.coreLast - b.coreFirst).toBeGreaterThanOrEqual(60);
    }
    expect(screenBands(400, 400, 30)).toEqual([{ first: 0, last: 400, coreFirst: 0, coreLast: 400 }]);
    // a grid a little over one band is two bands (each within maxRows + its overlap), not one
    const two = screenBands(1872, 1321, 160);
    expect(two.length).toBe(2);
    for (const b of two) expect(b.last - b.first).toBeLessThanOrEqual(1321);
    // cores never under 2 x overlap: a short grid with a small budget gets fewer, taller bands
    expect(screenBands(500, 100, 100).length).toBe(2);
  });

  it('one band keeps every anomaly of the whole-grid screening as it is', () => {
    const whole = screen(stack, lines);
    const join = new BandJoin({ toWgs84: identity, metresPerUnit: 1 });
    const kept = join.take(whole, { first: 0, last: 400, coreFirst: 0, coreLast: 400 }, 400, { main: stack });
    expect(kept.map((k) => k.feature)).toEqual([...whole.anomalyFeatures()]);
  });

  it('six bands: each compact object once and whole, the pipe covered end to end, no cell twice', () => {
    const whole = [...screen(stack, lines).anomalyFeatures()];
    const parts = banded(120, 30);
    for (const [bx, by] of blobs) {
      const w = whole.filter((f) => near(f, bx, by));
      const b = parts.filter((f) => near(f, bx, by));
      if (w.length !== 1 || b.length !== 1) console.log(bx, by, w.length, b.length, whole.map((f) => f.properties.centroid));
      expect(w.length).toBe(1);
      expect(b.length).toBe(1);
      expect(b[0]!.properties.kind).toBe('compact');
      // the same cells (robust scores are per band, so allow a cell or two per slice)
      expect(Math.abs(cellsOf(b[0]!).size - cellsOf(w[0]!).size)).toBeLessThanOrEqual(2 * depths.length);
    }
    // the pipe: one whole-grid anomaly; in bands, one piece per band at most, together covering it
    const onPipe = (f: GeoJsonFeature) => Math.abs((f.properties.centroid as number[])[0]! - pipeX) < 0.3;
    const wholePipe = whole.filter(onPipe);
    expect(wholePipe.length).toBe(1);
    const pieces = parts.filter(onPipe);
    expect(pieces.length).toBeGreaterThanOrEqual(2);
    expect(pieces.length).toBeLessThanOrEqual(6);
    const want = cellsOf(wholePipe[0]!);
    const seen = new Map<string, number>();
    for (const f of parts) for (const c of cellsOf(f)) seen.set(c, (seen.get(c) ?? 0) + 1);
    let covered = 0;
    for (const c of want) if (seen.has(c)) covered++;
    expect(covered / want.size).toBeGreaterThan(0.97);
    expect([...seen.values()].filter((n) => n > 1).length).toBe(0);
    // and nothing invented: every banded cell is a cell of some whole-grid anomaly, give or take the edges
    const all = new Set(whole.flatMap((f) => [...cellsOf(f)]));
    let extra = 0;
    for (const c of seen.keys()) if (!all.has(c)) extra++;
    expect(extra / seen.size).toBeLessThan(0.03);
  });
});
