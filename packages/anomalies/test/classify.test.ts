import { describe, expect, it } from 'vitest';
import { buildAnomaly, classifyAnomalies, fresnelRadiusM, isPointPiece, isPointSized, joinAlignedPieces, makeMember, maxUtilityWidthM, pointDepthExtentM, pointFootprintM, sameSliceWidthM, type Anomaly3D, type ClassifyContext } from '../src';
import { grid } from './helpers';

const g = grid(200, 200, 0.125, 0, 25);
const stack = { grid: g, slices: Array.from({ length: 12 }, (_, i) => ({ index: i, topM: 0.125 * i, bottomM: 0.125 * (i + 1), values: new Float32Array(200 * 200).fill(1) })) };
const cellsOf = (test: (x: number, y: number) => boolean): Int32Array => {
  const out: number[] = [];
  for (let r = 0; r < g.height; r++)
    for (let c = 0; c < g.width; c++) if (test(g.originX + (c + 0.5) * g.cellSize, g.originY - (r + 0.5) * g.cellSize)) out.push(r * g.width + c);
  return Int32Array.from(out);
};
/** An anomaly of the given cells on slices [s0, s1], peak energy `peak` over a unit noise. */
function anomaly(cells: Int32Array, s0: number, s1: number, peak = 10): Anomaly3D {
  const members = [];
  for (let s = s0; s <= s1; s++) {
    for (const k of cells) stack.slices[s]!.values[k] = peak;
    members.push(makeMember(members.length, s, cells, stack, new Float32Array(g.width * g.height).fill(5), { metresPerUnit: 1 }, 1));
  }
  return buildAnomaly('A', members, stack, { metresPerUnit: 1 });
}
const ctx: ClassifyContext = { velocityMPerNs: 0.1, frequencyMHz: 400, lineSpacingM: 0.5, nearSurfaceM: 0.19, cellM: 0.125 };

describe('physics of the bounds', () => {
  it('first Fresnel zone radius sqrt(lambda z / 2) (from memory: Sheriff and Geldart)', () => {
    // lambda = 0.1 m/ns / 400 MHz = 0.25 m; z = 1 m: sqrt(0.125) = 0.35355 m
    expect(fresnelRadiusM(1, 0.1, 400)).toBeCloseTo(Math.sqrt(0.125), 12);
    expect(maxUtilityWidthM(1, ctx)).toBeCloseTo(1.5 + 2 * Math.sqrt(0.125) + 0.5, 12);
  });
});

describe('classes', () => {
  it('a pipe is a utility, a footing a structure, a one-line blob clutter, a site-wide sheet a layer, a near-surface speck clutter', () => {
    // 20 dB over the noise
    const pipe = anomaly(cellsOf((x, y) => Math.abs(y - 20) < 0.2 && x > 2 && x < 20), 6, 7, 100);
    const footing = anomaly(cellsOf((x, y) => Math.abs(x - 5) < 0.45 && Math.abs(y - 10) < 0.45), 4, 5);
    const stone = anomaly(cellsOf((x, y) => Math.abs(x - 15) < 0.4 && Math.abs(y - 10) < 0.15), 5, 5);
    const sheet = anomaly(cellsOf((x, y) => x > 1 && x < 24 && y > 1 && y < 17), 8, 9);
    const speck = anomaly(cellsOf((x, y) => Math.abs(x - 20) < 0.3 && Math.abs(y - 15) < 0.3), 0, 0);
    const air = anomaly(cellsOf((x, y) => Math.abs(x - 22) < 0.3 && Math.abs(y - 22) < 0.3), 3, 4);
    const c = classifyAnomalies(
      [pipe, footing, stone, sheet, speck, air].map((a, i) => ({ anomaly: a, aboveGround: i === 5 })),
      ctx,
    );
    expect(c.map((x) => x.class)).toEqual(['utility', 'structure', 'clutter', 'layer', 'clutter', 'above-ground']);
  });

  it('a band a few metres wide along a line is not a layer (a layer spreads both ways)', () => {
    const band = anomaly(cellsOf((x, y) => x > 2 && x < 23 && Math.abs(y - 12) < 1.6), 9, 9);
    expect(classifyAnomalies([{ anomaly: band, aboveGround: false }], ctx)[0]!.class).not.toBe('layer');
  });

  it('a weaker copy below a strong object is its echo, a stronger one below is not', () => {
    const pipeCells = cellsOf((x, y) => Math.abs(y - 20) < 0.2 && x > 2 && x < 20);
    const pipe = anomaly(pipeCells, 4, 5, 100);
    const ring = anomaly(pipeCells, 8, 8, 20);
    const deeper = anomaly(cellsOf((x, y) => Math.abs(y - 20) < 0.2 && x > 2 && x < 20), 10, 10, 1000);
    const c = classifyAnomalies([pipe, ring, deeper].map((a) => ({ anomaly: a, aboveGround: false })), ctx);
    expect(c[1]!.echoOf).toBe(0);
    expect(c[1]!.class).toBe('utility');
    expect(c[2]!.echoOf).toBeUndefined();
  });
});

describe('artefacts of the survey, not objects', () => {
  // lines run east-west (azimuth 90), 0.25 m apart; 400 MHz at 0.1 m/ns: lambda 0.25 m
  const lines: ClassifyContext = { ...ctx, lineSpacingM: 0.25, lineAzimuthsDeg: [90] };

  it('a strip one line wide along a line, deeper than where the Fresnel zone passes the line spacing, is clutter; across the lines or wider it is a utility', () => {
    // slices 8-9: 1.0-1.25 m, rF(1.125 m) = sqrt(0.25 x 1.125 / 2) = 0.375 m: a buried object spans
    // at least 2 rF - s = 0.5 m across the lines; the strip is 0.125 m wide
    const strip = anomaly(cellsOf((x, y) => Math.abs(y - 6.06) < 0.07 && x > 3 && x < 9), 8, 9);
    const across = anomaly(cellsOf((x, y) => Math.abs(x - 12.06) < 0.07 && y > 3 && y < 9), 8, 9);
    const wide = anomaly(cellsOf((x, y) => Math.abs(y - 16) < 0.45 && x > 3 && x < 9), 8, 9);
    const c = classifyAnomalies([strip, across, wide].map((a) => ({ anomaly: a, aboveGround: false })), lines);
    expect(c.map((x) => x.class)).toEqual(['clutter', 'utility', 'utility']);
    expect(c[0]!.reason).toMatch(/along one line/);
    // at 0.125-0.25 m (rF 0.11 m; within the slice an object along the lines reaches
    // sqrt(2 x 0.125 x 0.125 + 0.125^2) = 0.22 m across, less than the spacing) a line's neighbours need not see it
    const shallow = anomaly(cellsOf((x, y) => Math.abs(y - 6.06) < 0.07 && x > 3 && x < 9), 1, 1);
    expect(classifyAnomalies([{ anomaly: shallow, aboveGround: false }], { ...lines, nearSurfaceM: 0 })[0]!.class).toBe('utility');
  });

  it("a strip as wide as one line's gridded footprint (2 spacings) along a line is clutter where an object along the lines would reach the next lines within its slice", () => {
    // 0.45 m wide (one line gridded with a 0.25 m search radius either side); at 1.0-1.125 m an object
    // along the lines falls in the slice out to sqrt(2 x 1 x 0.125 + 0.125^2) = 0.52 m across
    const deep = anomaly(cellsOf((x, y) => Math.abs(y - 6.06) < 0.22 && x > 3 && x < 9), 8, 8);
    const c = classifyAnomalies([{ anomaly: deep, aboveGround: false }], lines)[0]!;
    expect(c.class).toBe('clutter');
    expect(c.reason).toMatch(/reach within its slice 0.52 m/);
    // at 0.125-0.25 m it reaches 0.22 m: it may be an object seen on one line
    const shallow = anomaly(cellsOf((x, y) => Math.abs(y - 6.06) < 0.22 && x > 3 && x < 9), 1, 1);
    expect(classifyAnomalies([{ anomaly: shallow, aboveGround: false }], { ...lines, nearSurfaceM: 0 })[0]!.class).toBe('utility');
  });

  it('a blob in the near-surface zone and the slice mostly inside it is clutter; one reaching a slice below is kept', () => {
    // zone 0.19 m: slice 1 (0.125-0.25) lies 52 % inside it, slice 2 (0.25-0.375) below it
    const z: ClassifyContext = { ...ctx, nearSurfaceM: 0.19 };
    const speck = anomaly(cellsOf((x, y) => Math.abs(x - 5) < 0.9 && Math.abs(y - 5) < 0.9), 0, 1);
    const deeper = anomaly(cellsOf((x, y) => Math.abs(x - 15) < 0.9 && Math.abs(y - 5) < 0.9), 0, 2);
    const c = classifyAnomalies([speck, deeper].map((a) => ({ anomaly: a, aboveGround: false })), z);
    expect(c.map((x) => x.class)).toEqual(['clutter', 'structure']);
    // a slice reaching into the zone by under half its thickness counts as below it (zone 0.18 m: 44 %)
    const edge = classifyAnomalies([{ anomaly: anomaly(cellsOf((x, y) => Math.abs(x - 5) < 0.9 && Math.abs(y - 15) < 0.9), 0, 1), aboveGround: false }], { ...ctx, nearSurfaceM: 0.18 });
    expect(edge[0]!.class).toBe('structure');
  });

  it("what is strongest and largest in the near-surface zone, fades below it and is no longer than a point's response down to its bottom is the zone's clutter", () => {
    // zone 0.19 m, slices 0.125 m: slice 1 (0.125-0.25) is inside it, slice 2 (0.25-0.375) below it
    const z: ClassifyContext = { ...ctx, nearSurfaceM: 0.19 };
    const box = (x: number, y: number, hx: number, hy: number) => cellsOf((px, py) => Math.abs(px - x) < hx && Math.abs(py - y) < hy);
    /** Members in slices 1 and 2 with their own cells and peaks. */
    const twoSlices = (zoneCells: Int32Array, zonePeak: number, deepCells: Int32Array, deepPeak: number) => {
      const members = [[1, zoneCells, zonePeak], [2, deepCells, deepPeak]].map(([s, cells, peak], i) => {
        for (const k of cells as Int32Array) stack.slices[s as number]!.values[k] = peak as number;
        return makeMember(i, s as number, cells as Int32Array, stack, new Float32Array(g.width * g.height).fill(5), { metresPerUnit: 1 }, 1);
      });
      return buildAnomaly('A', members, stack, { metresPerUnit: 1 });
    };
    // a point's response down to 0.375 m (slice 0.125 m + one pulse 0.125 m): 2 sqrt(2 * 0.375 * 0.25 + 0.25^2) + 0.5 + 0.125 = 1.625 m
    expect(pointFootprintM(0.375, 0.125, ctx)).toBeCloseTo(1.625, 12);
    // 1.4 x 1.2 m in the zone at 20 dB, a 0.6 x 0.5 m tail below at 13 dB
    const residue = twoSlices(box(5, 5, 0.7, 0.6), 100, box(5, 5, 0.3, 0.25), 20);
    // the same, but the part below is the larger one (an object whose body or flanks widen below the zone)
    const grows = twoSlices(box(10, 5, 0.3, 0.25), 100, box(10, 5, 0.7, 0.6), 20);
    // the same, but stronger below (an object whose top the zone's slice catches)
    const stronger = twoSlices(box(15, 5, 0.7, 0.6), 20, box(15, 5, 0.3, 0.25), 100);
    // a pipe crossing the lines: strongest and widest in the zone but 4 m long, several point footprints
    const pipe = twoSlices(box(5, 15, 2, 0.4), 100, box(5, 15, 1, 0.2), 20);
    const c = classifyAnomalies([residue, grows, stronger, pipe].map((a) => ({ anomaly: a, aboveGround: false })), z);
    expect(c.map((x) => x.class)).toEqual(['clutter', 'structure', 'structure', 'utility']);
    expect(c[0]!.reason).toMatch(/strongest and largest inside it/);
    expect(classifyAnomalies([{ anomaly: residue, aboveGround: false }], z, { zoneResidue: false })[0]!.class).toBe('structure');
  });

  it('a strip the caller found to be part of a planar reflector is a layer', () => {
    const strip = anomaly(cellsOf((x, y) => Math.abs(y - 8.06) < 0.07 && x > 3 && x < 20), 3, 3);
    expect(classifyAnomalies([{ anomaly: strip, aboveGround: false, planar: true }], lines)[0]!.class).toBe('layer');
  });
});

describe('point scatterers', () => {
  it("a point's footprint across the lines: the offset y where sqrt(z^2 + y^2) = z + e (a 3-4-5 triangle), both sides, plus a line spacing and a cell", () => {
    // v 0.1 m/ns, 400 MHz: one period is 0.125 m of depth; a slice 0.125 m thick: e = 0.25 m. At z = 1 m
    // the diffraction leaves slice and pulse at y = 0.75 m (hypot(1, 0.75) = 1.25, Pythagoras).
    expect(Math.hypot(1, 0.75)).toBeCloseTo(1.25, 12);
    expect(pointFootprintM(1, 0.125, ctx)).toBeCloseTo(2 * 0.75 + 0.5 + 0.125, 12);
  });

  it('a cylinder of the largest utility diameter along the lines stays in one slice out to the offset where its reflection leaves slice and pulse', () => {
    // top 0.25 m, R 0.75 m, slice 0.125 m + pulse 0.125 m: from a line at d = 0.75 m the reflection comes
    // from sqrt((0.25 + 0.75)^2 + 0.75^2) - 0.75 = 0.5 m (Pythagoras), the bottom of slice and pulse
    expect(Math.hypot(1, 0.75) - 0.75).toBeCloseTo(0.25 + 0.125 + 0.125, 12);
    expect(sameSliceWidthM(0.25, 0.125, ctx)).toBeCloseTo(2 * 0.75 + 0.5 + 0.125, 12);
  });

  // lines 0.5 m apart; blobs 0.9 x 0.9 m in one slice at 1.0-1.125 m (footprint there 2.1 m), wider than a line
  const blob = (x: number, y: number, peak: number) => anomaly(cellsOf((px, py) => Math.abs(px - x) < 0.45 && Math.abs(py - y) < 0.45), 8, 8, peak);

  it("the site's point-sized anomalies are clutter, an outlier of their strengths (above Tukey's upper fence) stays a structure", () => {
    // eight stones 16-20 dB over the noise (peak energies 40-100 over unit noise) and one at 30 dB
    const stones = [40, 50, 60, 70, 80, 90, 100, 55].map((p, i) => blob(2 + 2.5 * i, 6, p));
    const valve = blob(10, 14, 1000);
    const c = classifyAnomalies([...stones, valve].map((a) => ({ anomaly: a, aboveGround: false })), ctx);
    expect(c.slice(0, 8).map((x) => x.class)).toEqual(Array(8).fill('clutter'));
    expect(c[8]!.class).toBe('structure');
    expect(c[8]!.reason).toMatch(/Tukey/);
    // a footing wider than a point's footprint is no point, however weak
    const footing = anomaly(cellsOf((x, y) => Math.abs(x - 20) < 1.4 && Math.abs(y - 14) < 1.4), 8, 8, 40);
    expect(classifyAnomalies([...stones, footing].map((a) => ({ anomaly: a, aboveGround: false })), ctx)[8]!.class).toBe('structure');
  });

  it("compact anomalies starting in the near-surface zone and one pulse thick are the site's shallow clutter when there are five or more, but for a strength outlier", () => {
    // zone 0.19 m, slices 0.125 m: blobs 2 x 2 m (larger than a point's footprint) in slices 1-2 (0.125-0.375 m)
    const z: ClassifyContext = { ...ctx, nearSurfaceM: 0.19 };
    const blobAt = (x: number, peak: number) => anomaly(cellsOf((px, py) => Math.abs(px - x) < 1 && Math.abs(py - 20) < 1), 1, 2, peak);
    const roots = [40, 50, 60, 70, 80].map((p, i) => blobAt(3 + 3.5 * i, p));
    const vault = anomaly(cellsOf((px, py) => Math.abs(px - 10) < 1 && Math.abs(py - 5) < 1), 1, 2, 2000);
    const c = classifyAnomalies([...roots, vault].map((a) => ({ anomaly: a, aboveGround: false })), z);
    expect(c.slice(0, 5).map((x) => x.class)).toEqual(Array(5).fill('clutter'));
    expect(c[0]!.reason).toMatch(/near-surface zone/);
    expect(c[5]!.class).toBe('structure');
    // four of them are no population: they stay structures
    expect(classifyAnomalies(roots.slice(0, 4).map((a) => ({ anomaly: a, aboveGround: false })), z).map((x) => x.class)).toEqual(Array(4).fill('structure'));
  });

  it("short strips across the lines (a stone's response, migrated along the lines only) join the point-sized population, and so do strips along them no longer than that response", () => {
    // lines east-west (azimuth 90), 0.5 m apart; strips 1.6 x 0.25 m in one slice at 1.0-1.125 m (footprint 2.1 m)
    const lines: ClassifyContext = { ...ctx, lineAzimuthsDeg: [90] };
    const across = (x: number, peak: number) => anomaly(cellsOf((px, py) => Math.abs(px - x) < 0.125 && Math.abs(py - 6) < 0.8), 8, 8, peak);
    const stones = [40, 50, 60, 70, 80, 90].map((p, i) => across(2 + 2.5 * i, p));
    const cable = across(10, 1000);
    const along = anomaly(cellsOf((px, py) => Math.abs(px - 10) < 0.8 && Math.abs(py - 16) < 0.125), 8, 8, 40);
    const longer = anomaly(cellsOf((px, py) => Math.abs(px - 10) < 1.5 && Math.abs(py - 16) < 0.125), 8, 8, 40);
    expect(stones.every((a) => a.shape.kind === 'linear' && isPointSized(a, lines))).toBe(true);
    expect(isPointSized(along, lines)).toBe(true);
    expect(isPointSized(longer, lines)).toBe(false);
    const c = classifyAnomalies([...stones, cable, along].map((a) => ({ anomaly: a, aboveGround: false })), lines);
    expect(c.slice(0, 6).map((x) => x.class)).toEqual(Array(6).fill('clutter'));
    expect(c[6]!.class).toBe('utility');
    // (a strip that narrow along a line is a one-line strip: clutter for that reason first)
    expect(c[7]!.reason).toMatch(/strip along one line/);
  });

  it("a point's response reaches as deep as its diffraction on the lines at the edge of its footprint, plus one pulse and one slice", () => {
    // v 0.1 m/ns, 400 MHz, slices 0.125 m, top 1 m: footprint 2.125 m (above), so on the lines 1.0625 m
    // across the diffraction arrives at hypot(1, 1.0625) m (Pythagoras); then one pulse (0.125 m) and one slice
    const reach = Math.hypot(1, 1.0625) - 1 + 0.125 + 0.125;
    expect(reach).toBeCloseTo(0.709, 3);
    expect(pointDepthExtentM(1, 0.125, ctx)).toBeCloseTo(reach, 12);
    // from 0.75 m (footprint 2 sqrt(2 * 0.75 * 0.25 + 0.25^2) + 0.5 + 0.125 = 1.948 m) it reaches 0.729 m:
    // slices 6-10 (0.625 m) lie within it, slices 6-11 (0.75 m) do not
    expect(pointDepthExtentM(0.75, 0.125, ctx)).toBeCloseTo(0.729, 3);
    const blobIn = (last: number) => anomaly(cellsOf((x, y) => Math.abs(x - 12) < 0.45 && Math.abs(y - 3) < 0.45), 6, last);
    expect(isPointSized(blobIn(10), ctx)).toBe(true);
    expect(isPointSized(blobIn(11), ctx)).toBe(false);
    // a velocity 1e-7 lower moves the bound by nanometres, not across a slice
    expect(isPointSized(blobIn(10), { ...ctx, velocityMPerNs: 0.1 - 1e-7 })).toBe(true);
    // a piece that may join a utility's pieces is one pulse thick: two slices, whatever the rounding, not three
    expect(isPointPiece(blobIn(7), ctx)).toBe(true);
    expect(isPointPiece(blobIn(7), { ...ctx, velocityMPerNs: 0.1 - 1e-7 })).toBe(true);
    expect(isPointPiece(blobIn(8), ctx)).toBe(false);
  });

  it('with fewer than five point-sized anomalies there is no population to be weak against: they stay structures', () => {
    const few = [40, 50, 60].map((p, i) => blob(2 + 2.5 * i, 6, p));
    expect(classifyAnomalies(few.map((a) => ({ anomaly: a, aboveGround: false })), ctx).map((x) => x.class)).toEqual(['structure', 'structure', 'structure']);
  });
});

describe('joining pieces of a utility', () => {
  it('joins pieces along a line across gaps up to two line spacings, not pieces of a row of footings nor pieces at other depths', () => {
    // a pipe at 30 degrees seen once per line: short pieces 0.8 m apart along its axis
    const along = (t: number): [number, number] => [3 + t * Math.cos(Math.PI / 6), 12 + t * Math.sin(Math.PI / 6)];
    const pieces = [0, 1.6, 3.2, 4.8].map((t) => anomaly(cellsOf((x, y) => Math.hypot(x - along(t)[0], y - along(t)[1]) < 0.3), 5, 5));
    const footings = [0, 2.4, 4.8].map((d) => anomaly(cellsOf((x, y) => Math.abs(x - 3 - d) < 0.45 && Math.abs(y - 4) < 0.45), 5, 5));
    const deep = anomaly(cellsOf((x, y) => Math.hypot(x - along(6.4)[0], y - along(6.4)[1]) < 0.3), 10, 10);
    const groups = joinAlignedPieces([...pieces, ...footings, deep], g, 0.5, (z) => maxUtilityWidthM(z, ctx), { metresPerUnit: 1 });
    expect(groups).toContainEqual([0, 1, 2, 3]);
    for (const i of [4, 5, 6, 7]) expect(groups).toContainEqual([i]);
  });

  it('a point-sized piece of a utility joins its linear pieces (alsoJoinable), two such pieces alone do not', () => {
    // a pipe along y = 12 m at 0.625-0.75 m: linear pieces either side of a compact 0.9 m blob where its response breaks up
    const left = anomaly(cellsOf((x, y) => Math.abs(y - 12) < 0.2 && x > 2 && x < 6), 5, 5);
    const blob = anomaly(cellsOf((x, y) => Math.abs(y - 12) < 0.45 && Math.abs(x - 6.8) < 0.45), 5, 5);
    const right = anomaly(cellsOf((x, y) => Math.abs(y - 12) < 0.2 && x > 7.6 && x < 12), 5, 5);
    const also = { metresPerUnit: 1, alsoJoinable: (a: Anomaly3D) => isPointPiece(a, ctx) };
    expect(isPointPiece(blob, ctx)).toBe(true);
    expect(joinAlignedPieces([left, blob, right], g, 0.5, (z) => maxUtilityWidthM(z, ctx), { metresPerUnit: 1 })).toContainEqual([1]);
    expect(joinAlignedPieces([left, blob, right], g, 0.5, (z) => maxUtilityWidthM(z, ctx), also)).toContainEqual([0, 1, 2]);
    const stones = [6.8, 7.9].map((x0) => anomaly(cellsOf((x, y) => Math.abs(y - 20) < 0.45 && Math.abs(x - x0) < 0.45), 5, 5));
    expect(joinAlignedPieces(stones, g, 0.5, (z) => maxUtilityWidthM(z, ctx), also)).toEqual([[0], [1]]);
  });

  it('a utility crossing the lines at a shallow angle, seen as blobs drawn out along each line, joins when seen on three lines or more; two such blobs stay apart', () => {
    // lines east-west (azimuth 90) 0.5 m apart; a pipe at 20 degrees to them crosses them 1.37 m apart
    // along x: one 1.0 x 0.7 m blob per line, drawn along the line, no wider than 2 spacings and a cell
    const lines = [90];
    const blobs = [0, 1, 2, 3].map((i) => anomaly(cellsOf((x, y) => Math.abs(x - (4 + 1.37 * i)) < 0.5 && Math.abs(y - (8 + 0.5 * i)) < 0.35), 5, 5));
    const opts = { metresPerUnit: 1, lineAzimuthsDeg: lines };
    expect(joinAlignedPieces(blobs, g, 0.5, (z) => maxUtilityWidthM(z, ctx), { metresPerUnit: 1 })).toEqual([[0], [1], [2], [3]]);
    expect(joinAlignedPieces(blobs, g, 0.5, (z) => maxUtilityWidthM(z, ctx), opts)).toEqual([[0, 1, 2, 3]]);
    expect(joinAlignedPieces(blobs.slice(0, 2), g, 0.5, (z) => maxUtilityWidthM(z, ctx), opts)).toEqual([[0], [1]]);
  });
});

describe('short utilities in line with nothing (minUtilityLengthM)', () => {
  // Our own rule of the classes (issue 12 item 3: `utility` is linear and continuous; `clutter` is
  // isolated); the length is the field bench's choice (ClassifyOptions.minUtilityLengthM), the checks here
  // are its geometry: in line = within 20 degrees (common practice, no source) and within half the other's
  // width plus one line spacing of its axis.
  // A 1.2 m linear piece at 0.75-1 m (20 dB): a utility by shape, too short to call on its own.
  const shortPiece = (x0: number, y0: number, azDeg: number) => {
    const t = (azDeg * Math.PI) / 180, ux = Math.sin(t), uy = Math.cos(t);
    return anomaly(cellsOf((x, y) => Math.abs((x - x0) * ux + (y - y0) * uy) < 0.6 && Math.abs(-(x - x0) * uy + (y - y0) * ux) < 0.12), 6, 7, 100);
  };
  it('alone it is clutter; with a piece of the same line further on both stay utilities', () => {
    const alone = classifyAnomalies([{ anomaly: shortPiece(10, 10, 90), aboveGround: false }], ctx);
    expect(alone[0]!.class).toBe('clutter');
    expect(alone[0]!.reason).toMatch(/in line with no other/);
    // two pieces of one east-west pipe, 4 m apart (a gap the joining does not bridge)
    const two = classifyAnomalies([shortPiece(6, 10, 90), shortPiece(12, 10, 90)].map((a) => ({ anomaly: a, aboveGround: false })), ctx);
    expect(two.map((c) => c.class)).toEqual(['utility', 'utility']);
  });

  it('a parallel piece beside it, a crossing one, or an above-ground one does not make it a line', () => {
    const beside = classifyAnomalies([shortPiece(10, 10, 90), shortPiece(10, 11.5, 90)].map((a) => ({ anomaly: a, aboveGround: false })), ctx);
    expect(beside.map((c) => c.class)).toEqual(['clutter', 'clutter']);
    const crossing = classifyAnomalies([shortPiece(10, 10, 90), shortPiece(14, 10, 45)].map((a) => ({ anomaly: a, aboveGround: false })), ctx);
    expect(crossing[0]!.class).toBe('clutter');
    const air = classifyAnomalies([shortPiece(10, 10, 90), shortPiece(14, 10, 90)].map((a, i) => ({ anomaly: a, aboveGround: i === 1 })), ctx);
    expect(air[0]!.class).toBe('clutter');
  });

  it('a utility longer than the bound stays one alone, and the rule is off at 0', () => {
    const pipe = anomaly(cellsOf((x, y) => Math.abs(y - 20) < 0.2 && x > 2 && x < 20), 6, 7, 100);
    expect(classifyAnomalies([{ anomaly: pipe, aboveGround: false }], ctx)[0]!.class).toBe('utility');
    expect(classifyAnomalies([{ anomaly: shortPiece(10, 10, 90), aboveGround: false }], ctx, { minUtilityLengthM: 0 })[0]!.class).toBe('utility');
  });
});

describe('the near-surface zone counts the lines an object crosses (nearSurfaceLines)', () => {
  // Issue 12 item 2: the zone gives no targets unless an object is coherent across several lines. A strip
  // starting in the zone (0.19 m here) and drawn out 3 m along one east-west line crosses one line,
  // however long it is; the same strip running north-south crosses the lines 0.5 m apart six times.
  const eastWest = { ...ctx, lineAzimuthsDeg: [90] };
  it('a 3 m strip along a line is clutter, across the lines it is not', () => {
    const along = anomaly(cellsOf((x, y) => Math.abs(y - 5) < 0.15 && x > 8 && x < 11), 0, 2, 100);
    const across = anomaly(cellsOf((x, y) => Math.abs(x - 15) < 0.15 && y > 8 && y < 11), 0, 2, 100);
    const c = classifyAnomalies([along, across].map((a) => ({ anomaly: a, aboveGround: false })), eastWest);
    expect(c[0]!.class).toBe('clutter');
    expect(c[0]!.reason).toMatch(/crosses fewer than 3 lines/);
    expect(c[1]!.reason).not.toMatch(/crosses fewer than/);
    // without the lines' directions the rule reads the larger extent, as before: neither is taken by it
    const plain = classifyAnomalies([along].map((a) => ({ anomaly: a, aboveGround: false })), ctx);
    expect(plain[0]!.reason).not.toMatch(/crosses fewer than/);
  });
});
