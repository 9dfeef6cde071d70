import { buildAnomaly, isExtensive, linkMembers, memberOf, stationaryChains, type ClassifyContext, type Member } from '@lamina/anomalies';
import type { SliceGrid, SliceStack } from '@lamina/slices';
import { describe, expect, it } from 'vitest';
import { objectsOfExtensive } from '../src/screen';

// A 20 x 20 m grid of 0.1 m cells; slices 0.1 m thick from 0.5 m.
const g: SliceGrid = { crs: 'local', originX: 0, originY: 20, cellSize: 0.1, width: 200, height: 200, nodata: -9999 };
const stack: SliceStack = { grid: g, slices: Array.from({ length: 8 }, (_, i) => ({ index: i, topM: 0.5 + 0.1 * i, bottomM: 0.6 + 0.1 * i, values: new Float32Array(0) })) };
// soil v 0.1 m/ns (K 9), 400 MHz, lines 0.5 m apart: a structure reaches 6 m + 2 rF + 0.5 m, about 7.2 m at 1 m
const ctx: ClassifyContext = { velocityMPerNs: 0.1, frequencyMHz: 400, lineSpacingM: 0.5, nearSurfaceM: 0.2, cellM: 0.1 };
const isLayer = (shape: Parameters<typeof isExtensive>[0], z: number) => isExtensive(shape, z, ctx);
const build = (ms: Member[]) => buildAnomaly('A', ms, stack);
// the usual links (as screenSite relinks)
const relink = (ms: Member[]) => linkMembers(ms.map((m, i) => ({ ...m, id: i })), g.width * g.height, g.cellSize).map((grp) => grp.map((i) => ms[i]!));

/** Cells of the rectangle x0 <= x < x1, y0 <= y < y1 (m), ascending. */
function rect(x0: number, x1: number, y0: number, y1: number): Int32Array {
  const out: number[] = [];
  for (let row = 0; row < g.height; row++)
    for (let col = 0; col < g.width; col++) {
      const x = (col + 0.5) * g.cellSize, y = g.originY - (row + 0.5) * g.cellSize;
      if (x >= x0 && x < x1 && y >= y0 && y < y1) out.push(row * g.width + col);
    }
  return Int32Array.from(out);
}
let nextId = 0;
const member = (slice: number, cells: Int32Array) => memberOf(nextId++, slice, cells, new Float32Array(cells.length).fill(10), stack);

// A pipe east-west at y = 10 m from x = 8 to 19 m (0.5 m wide in the slices), seen in slices 0-2; a layer
// dipping east at about 4 degrees: the band where it crosses a slice is 3 m wide and 16 m long (north-
// south) and moves 1.5 m east per slice (a slice of 0.1 m over tan 3.8 degrees), slices 3-7. Where a band
// meets the pipe's footprint the two link into one anomaly too large for any object.
const pipe = [0, 1, 2].map((s) => member(s, rect(8, 19, 9.75, 10.25)));
const bands = [2, 3, 4, 5].map((s, i) => member(s, rect(1 + 1.5 * i, 4 + 1.5 * i, 2, 8)));
const bandsOverPipe = [3, 4, 5, 6, 7].map((s, i) => member(s, rect(6 + 1.5 * i, 9 + 1.5 * i, 2, 18)));

describe('objects inside a laterally extensive anomaly (objectsOfExtensive)', () => {
  it('takes a pipe that keeps its position out of the layer it is linked with; the layer bands, moving down-dip, stay one anomaly', () => {
    const whole = build([...pipe, ...bandsOverPipe]);
    expect(isLayer(whole.shape, whole.depthBottomM)).toBe(true);
    const parts = objectsOfExtensive(whole, isLayer, build, (ms) => [ms]);
    expect(parts).toHaveLength(2);
    const [obj, rest] = parts;
    expect(obj!.members.map((m) => m.id).sort()).toEqual(pipe.map((m) => m.id).sort());
    expect(obj!.shape.kind).toBe('linear');
    expect(isLayer(obj!.shape, obj!.depthBottomM)).toBe(false);
    expect(rest!.members.map((m) => m.id).sort()).toEqual(bandsOverPipe.map((m) => m.id).sort());
  });

  it('joins again two chains of one pipe whose members shift by more than a chain allows', () => {
    // the pipe's response 0.2 m further north from slice 2 on: 0.3 of 0.5 m shared, under the chains' 0.7
    const shifted = [0, 1, 2, 3].map((s) => member(s, s < 2 ? rect(8, 19, 9.75, 10.25) : rect(8, 19, 9.95, 10.45)));
    expect(stationaryChains(shifted)).toHaveLength(2);
    const whole = build([...shifted, ...bandsOverPipe.slice(1)]);
    expect(isLayer(whole.shape, whole.depthBottomM)).toBe(true);
    const parts = objectsOfExtensive(whole, isLayer, build, relink);
    expect(parts).toHaveLength(2);
    expect(parts[0]!.members.map((m) => m.id).sort()).toEqual(shifted.map((m) => m.id).sort());
  });

  it('a layer alone comes back as it is: its bands share half their cells from slice to slice, under the chains 0.7', () => {
    const layer = build(bandsOverPipe);
    expect(isLayer(layer.shape, layer.depthBottomM)).toBe(true);
    expect(stationaryChains(bandsOverPipe)).toHaveLength(5);
    expect(objectsOfExtensive(layer, isLayer, build, (ms) => [ms])).toEqual([layer]);
  });

  it('an anomaly that is not extensive comes back as it is, and so do two objects side by side that make none', () => {
    const a = build(pipe);
    expect(objectsOfExtensive(a, isLayer, build, (ms) => [ms])).toEqual([a]);
    const small = build([...pipe, ...bands.slice(0, 1)]);
    expect(isLayer(small.shape, small.depthBottomM)).toBe(false);
    expect(objectsOfExtensive(small, isLayer, build, (ms) => [ms])).toEqual([small]);
  });

  it('chains a member with one about its size at the same place, and with a band along it, not with a blob under it nor a band at an angle its shape fixes', () => {
    const pipeA = member(2, rect(8, 19, 9.75, 10.25));
    const pipeB = member(3, rect(8, 19, 9.7, 10.3));
    expect(stationaryChains([pipeA, pipeB])).toHaveLength(1);
    // a blob under the pipe's long member, all of it inside: of another kind (a ghost's piece, a stone)
    const blob = member(3, rect(13, 13.8, 9.75, 10.25));
    expect(blob.shape.kind).toBe('compact');
    expect(stationaryChains([pipeA, blob])).toHaveLength(2);
    // a piece of a pipe 10 x 1 m at azimuth 151 (its shape fixes its direction within atan(1 / 10), 6
    // degrees) inside a band 14 x 3 m (12 degrees): along it at 148 degrees they chain, across it at
    // 136 degrees (15 degrees off, more than either shape's spread) they do not
    const piece = member(2, strip(10, 10, 10, 1, 151));
    for (const [az, groups] of [[148, 1], [136, 2]] as const) {
      const band = member(3, strip(10, 10, 14, 3, az));
      expect(piece.cells.filter((k) => band.cells.includes(k)).length).toBeGreaterThan(0.7 * piece.cells.length);
      expect(stationaryChains([piece, band])).toHaveLength(groups);
    }
  });
});

/** Cells of a rectangle length x width (m) centred on (cx, cy) with its long axis at azimuth `azDeg`, ascending. */
function strip(cx: number, cy: number, length: number, width: number, azDeg: number): Int32Array {
  const a = (azDeg * Math.PI) / 180, ux = Math.sin(a), uy = Math.cos(a);
  const out: number[] = [];
  for (let row = 0; row < g.height; row++)
    for (let col = 0; col < g.width; col++) {
      const dx = (col + 0.5) * g.cellSize - cx, dy = g.originY - (row + 0.5) * g.cellSize - cy;
      if (Math.abs(dx * ux + dy * uy) <= length / 2 && Math.abs(-dx * uy + dy * ux) <= width / 2) out.push(row * g.width + col);
    }
  return Int32Array.from(out);
}
