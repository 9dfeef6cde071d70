// Gridding from points spilled to disk, one row band at a time (memory: the output grid plus one band
// of points), against gridding all points in memory. The in-memory kernel is itself checked cell by
// cell against GDAL's `gdal_grid -a invdistnn` (Debian gdal-bin) in idw.test.ts, so equality here
// carries that check over to the banded path.
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { gridPoints, gridSpill, gridSpillSync, PointSpill, SpillGridder, sliceWindows, surveyGeometry, surveyGeometryOf, SliceBuilder } from '../src';
import { constantModel } from '@lamina/velocity';
import { mulberry32 as rng } from '@lamina/random';
import { tempDir } from '@lamina/test-utils';

/** Wiggly, unevenly spaced lines of our own (GPS-like jitter), values per trace with some NaN. */
function survey(nLines: number, nTraces: number, nValues: number, seed: number, nanEvery = 0) {
  const r = rng(seed);
  const lines: { x: Float64Array; y: Float64Array; values: Float32Array }[] = [];
  for (let j = 0; j < nLines; j++) {
    const x = new Float64Array(nTraces);
    const y = new Float64Array(nTraces);
    const values = new Float32Array(nTraces * nValues);
    let along = 0;
    for (let t = 0; t < nTraces; t++) {
      along += 0.03 + 0.04 * r();
      const u = j % 2 === 0 ? along : 12 - along;
      // lines at about 30 degrees, 0.4-0.6 m apart, wandering a little
      const across = j * 0.5 + 0.1 * Math.sin(u / 3 + j) + 0.02 * (r() - 0.5);
      x[t] = 500000 + u * Math.cos(Math.PI / 6) - across * Math.sin(Math.PI / 6);
      y[t] = 4000000 + u * Math.sin(Math.PI / 6) + across * Math.cos(Math.PI / 6);
      for (let b = 0; b < nValues; b++) values[t * nValues + b] = nanEvery > 0 && (t * nValues + b + j) % nanEvery === 0 ? NaN : r() * (1 + b) * (1 + (j % 3));
    }
    lines.push({ x, y, values });
  }
  return lines;
}

function spillOf(lines: ReturnType<typeof survey>, nValues: number, dir = tempDir()): PointSpill {
  const s = new PointSpill(nValues, dir);
  for (const l of lines) s.addLine(l.x, l.y, l.values);
  return s;
}

function inMemory(lines: ReturnType<typeof survey>, nValues: number) {
  const n = lines.reduce((a, l) => a + l.x.length, 0);
  const coords = new Float64Array(2 * n);
  const values = new Float32Array(n * nValues);
  const starts = new Int32Array(lines.length + 1);
  let k = 0;
  lines.forEach((l, j) => {
    starts[j] = k;
    for (let t = 0; t < l.x.length; t++) {
      coords[2 * (k + t)] = l.x[t]!;
      coords[2 * (k + t) + 1] = l.y[t]!;
    }
    values.set(l.values, k * nValues);
    k += l.x.length;
  });
  starts[lines.length] = k;
  return { coords, values, starts };
}

const windows = sliceWindows(0, 1, { thicknessM: 0.25 }); // 4 slices
const crs = 'EPSG:32617';

describe('gridding in row bands from a point spill', () => {
  it('many bands give the in-memory grid cell for cell (anisotropic, 30 degree lines, NaN values)', () => {
    const lines = survey(24, 260, windows.length, 7, 97);
    const m = inMemory(lines, windows.length);
    const spill = spillOf(lines, windows.length);
    try {
      const ref = gridPoints(m.coords, m.values, m.starts, windows, { crs });
      const banded = gridSpillSync(spill, windows, { crs, bandBytes: 20000 })[0]!;
      expect(banded.gridding!.rowBands).toBeGreaterThan(10);
      expect(banded.grid).toEqual(ref.grid);
      const { rowBands, ...info } = banded.gridding!;
      expect(info).toEqual(ref.gridding);
      for (let k = 0; k < windows.length; k++) expect(Array.from(banded.slices[k]!.values)).toEqual(Array.from(ref.slices[k]!.values));
    } finally {
      spill.remove();
    }
  });

  it('two stacks side by side, levelled, equal gridding each in memory', () => {
    const ns = windows.length;
    const lines = survey(16, 200, 2 * ns, 11);
    const m = inMemory(lines, 2 * ns);
    const half = (s: number) => {
      const v = new Float32Array((m.values.length / 2) | 0);
      for (let t = 0; t < v.length / ns; t++) for (let k = 0; k < ns; k++) v[t * ns + k] = m.values[t * 2 * ns + s * ns + k]!;
      return v;
    };
    const spill = spillOf(lines, 2 * ns);
    try {
      const stacks = gridSpillSync(spill, windows, { crs, level: true, bandBytes: 30000 });
      expect(stacks).toHaveLength(2);
      for (const s of [0, 1]) {
        const ref = gridPoints(m.coords, half(s), m.starts, windows, { crs, level: true });
        for (let k = 0; k < ns; k++) expect(Array.from(stacks[s]!.slices[k]!.values)).toEqual(Array.from(ref.slices[k]!.values));
      }
    } finally {
      spill.remove();
    }
  });

  it('on worker threads gives the same grid as on the calling thread', async () => {
    // big enough for the workers to be used (cells x values >= 2e6)
    const lines = survey(40, 400, 40, 3);
    const w40 = sliceWindows(0, 2, { thicknessM: 0.05 }).slice(0, 40);
    const spill = spillOf(lines, 40);
    try {
      const opts = { crs, cellSizeM: 0.05, bandBytes: 400000 };
      const one = gridSpillSync(spill, w40, opts)[0]!;
      const two = (await gridSpill(spill, w40, { ...opts, threads: 2 }))[0]!;
      expect(one.grid.width * one.grid.height * 40).toBeGreaterThan(2e6);
      expect(two.gridding!.rowBands).toBeGreaterThan(1);
      for (let k = 0; k < 40; k += 7) expect(Buffer.from(two.slices[k]!.values.buffer, two.slices[k]!.values.byteOffset, two.slices[k]!.values.byteLength).equals(Buffer.from(one.slices[k]!.values.buffer, one.slices[k]!.values.byteOffset, one.slices[k]!.values.byteLength))).toBe(true);
    } finally {
      spill.remove();
    }
  });

  it('any rows, asked for one band at a time (overlapping, 1 and 2 threads), equal the same rows of the whole grid', async () => {
    const lines = survey(40, 400, 40, 3);
    const w40 = sliceWindows(0, 2, { thicknessM: 0.05 }).slice(0, 40);
    const spill = spillOf(lines, 40);
    try {
      const opts = { crs, cellSizeM: 0.05, bandBytes: 400000 };
      const whole = gridSpillSync(spill, w40, opts)[0]!;
      const { width, height, originY, cellSize } = whole.grid;
      for (const threads of [1, 2]) {
        const gridder = SpillGridder.open(spill, w40, { ...opts, threads });
        for (const [r0, r1] of [[0, 37], [20, Math.floor(height / 2)], [Math.floor(height / 2) - 5, height], [height - 1, height]] as const) {
          const band = (await gridder.rows(r0, r1))[0]!;
          expect(band.grid).toEqual({ ...whole.grid, originY: originY - r0 * cellSize, height: r1 - r0 });
          for (let k = 0; k < 40; k += 13) expect(Array.from(band.slices[k]!.values)).toEqual(Array.from(whole.slices[k]!.values.subarray(r0 * width, r1 * width)));
        }
      }
    } finally {
      spill.remove();
    }
  });

  it('line spacing read one line at a time is the exact nearest distance to another line (brute force)', () => {
    const lines = survey(9, 150, 1, 5);
    const m = inMemory(lines, 1);
    const g = surveyGeometry(m.coords, m.starts);
    const found: number[] = [];
    lines.forEach((l, j) => {
      for (const f of [0.25, 0.5, 0.75]) {
        const i = Math.floor((l.x.length - 1) * f);
        let best = Infinity;
        lines.forEach((o, k) => {
          if (k !== j) for (let t = 0; t < o.x.length; t++) best = Math.min(best, Math.hypot(o.x[t]! - l.x[i]!, o.y[t]! - l.y[i]!));
        });
        found.push(best);
      }
    });
    found.sort((a, b) => a - b);
    const med = found.length % 2 ? found[found.length >> 1]! : (found[found.length / 2 - 1]! + found[found.length / 2]!) / 2;
    expect(g.lineSpacing).toBe(med);
    const spill = spillOf(lines, 1);
    try {
      const starts = spill.lineStarts();
      expect(surveyGeometryOf({ lineStarts: starts, line: (l) => spill.readCoords(starts[l]!, starts[l + 1]!) })).toEqual(g);
    } finally {
      spill.remove();
    }
  });

  it('the builder keeps positions and slice values on disk, 16 + 4 * nSlices bytes per trace, and deletes them', () => {
    const dir = tempDir();
    const b = new SliceBuilder({ windows, model: constantModel(0.1), separationM: 0.1, spillDir: dir });
    const ns = 200;
    for (let j = 0; j < 5; j++) {
      const x = Float64Array.from({ length: 100 }, (_, t) => t * 0.05);
      b.add({ id: `L${j}`, nTraces: 100, nSamples: ns, dtNs: 0.1, timeZeroNs: 1, data: new Float32Array(100 * ns).fill(1), x, y: new Float64Array(100).fill(j * 0.5) });
    }
    const [sub] = readdirSync(dir);
    const bytes = readdirSync(join(dir, sub!)).reduce((a, f) => a + statSync(join(dir, sub!, f)).size, 0);
    expect(bytes).toBe(500 * (16 + 4 * windows.length));
    const stack = b.grid({ crs });
    expect(stack.gridding!.traceCount).toBe(500);
    b.dispose();
    expect(existsSync(join(dir, sub!))).toBe(false);
  });
  it("one direction's lines alone (rowsOfLines: first stack, same grid and search) equal a spill of those lines gridded with that grid's parameters", async () => {
    const ns = windows.length;
    const lines = survey(12, 200, 2 * ns, 11, 53);
    const keep = Uint8Array.from(lines, (_, j) => (j % 3 === 1 ? 0 : 1));
    const spill = spillOf(lines, 2 * ns);
    const kept = lines.filter((_, j) => keep[j]).map((l) => ({ ...l, values: Float32Array.from({ length: l.x.length * ns }, (_, q) => l.values[Math.floor(q / ns) * 2 * ns + (q % ns)]!) }));
    const only = spillOf(kept, ns);
    try {
      const gridder = SpillGridder.open(spill, windows, { crs, bandBytes: 30000 });
      const g = gridder.grid;
      const info = gridder.gridding;
      let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
      for (const l of lines) for (let t = 0; t < l.x.length; t++) {
        minX = Math.min(minX, l.x[t]!); maxX = Math.max(maxX, l.x[t]!);
        minY = Math.min(minY, l.y[t]!); maxY = Math.max(maxY, l.y[t]!);
      }
      const ref = gridSpillSync(only, windows, { crs, bounds: [minX, minY, maxX, maxY], cellSizeM: g.cellSize, radiusM: info.radius, radiusAcrossM: info.radiusAcross, directionDeg: info.directionDeg })[0]!;
      expect(ref.grid).toEqual(g);
      for (const r of [[0, g.height], [3, 17]] as const) {
        const part = await gridder.rowsOfLines(r[0], r[1], keep);
        expect(part.slices.length).toBe(ns);
        for (let k = 0; k < ns; k++) expect(Array.from(part.slices[k]!.values)).toEqual(Array.from(ref.slices[k]!.values.subarray(r[0] * g.width, r[1] * g.width)));
      }
      // the whole-survey rows are unchanged by the call
      const [main] = await gridder.rows(0, g.height);
      const [whole] = gridSpillSync(spill, windows, { crs });
      for (let k = 0; k < ns; k++) expect(Array.from(main!.slices[k]!.values)).toEqual(Array.from(whole!.slices[k]!.values));
    } finally {
      spill.remove();
      only.remove();
    }
  });
});
