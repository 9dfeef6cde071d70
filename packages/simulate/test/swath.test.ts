import { describe, expect, it } from 'vitest';
import type { LineGeom, Scatterer } from '../src/model';
import { linesAroundObstructions } from '../src/swath';

const line = (id: string, n: number, step: number): LineGeom => {
  const mx = new Float64Array(n), my = new Float64Array(n);
  for (let j = 0; j < n; j++) mx[j] = j * step;
  return { id, index: 0, mx, my, dx: 1, dy: 0, positionSource: 'headers' };
};
const post = (x: number, y: number, radius: number, z = 0): Scatterer => ({ type: 'point', truth: 0, medium: 'air', x, y, z, radius, r: -1, spread: 'cylinder' });

describe('linesAroundObstructions', () => {
  it('stops a line at a post beside it and goes on after it in a new file', () => {
    // 10 m line, a post of radius 0.04 m 0.1 m beside it at 5 m; cart half width 0.3 m, separation 0.2 m:
    // footprint half length 0.1 + 0.3 = 0.4 m, so no trace within 0.44 m of x = 5
    const out = linesAroundObstructions([line('l01', 1001, 0.01)], [post(5, 0.1, 0.04)], 0.3, 0.2);
    expect(out.map((l) => l.id)).toEqual(['l01', 'l01b']);
    expect(out.map((l) => l.index)).toEqual([0, 1]);
    expect(out[0]!.mx[0]).toBe(0);
    // the last trace before the gap and the first after it, within one trace step of 5 -+ 0.44
    expect(out[0]!.mx.at(-1)!).toBeLessThanOrEqual(4.56 + 1e-9);
    expect(out[0]!.mx.at(-1)!).toBeGreaterThan(4.54);
    expect(out[1]!.mx[0]).toBeGreaterThanOrEqual(5.44 - 1e-9);
    expect(out[1]!.mx[0]).toBeLessThan(5.46);
    expect(out[1]!.mx.at(-1)!).toBeCloseTo(10, 6);
  });

  it('leaves lines that pass the object at the cart half width or more, and ignores overhead objects', () => {
    const lines = [line('l01', 101, 0.1)];
    expect(linesAroundObstructions(lines, [post(5, 0.35, 0.04)], 0.3, 0.2)).toEqual(lines);
    expect(linesAroundObstructions(lines, [post(5, 0, 0.04, 4)], 0.3, 0.2)).toEqual(lines);
  });

  it('drops pieces shorter than the footprint and takes walls as chains of points', () => {
    // a wall across the line at 0.5 m from its start: the 0.5 m before it is too short to record
    const wall: Scatterer = { type: 'segment', truth: 0, medium: 'air', ax: 0.5, ay: -3, az: 0, bx: 0.5, by: 3, bz: 0, radius: 0, r: -1, spread: 'plane', polarised: false };
    const out = linesAroundObstructions([line('l01', 101, 0.1)], [wall], 0.3, 0.2);
    expect(out.map((l) => l.id)).toEqual(['l01']);
    // footprint half length 0.4 m: the first trace at 0.9 m (0.4 m past the wall) or the next
    expect(out[0]!.mx[0]).toBeGreaterThanOrEqual(0.9 - 1e-9);
    expect(out[0]!.mx[0]).toBeLessThan(1.05);
  });

  it('names a line\'s pieces past "z" by number', () => {
    // 40 thin posts 1 m apart beside a 40.5 m line, a footprint 0.24 m long: 41 pieces of about 0.7 m
    const posts = Array.from({ length: 40 }, (_, k) => post(0.5 + k, 0.1, 0.01));
    const out = linesAroundObstructions([line('l01', 4051, 0.01)], posts, 0.12, 0);
    expect(out.length).toBe(41);
    expect(out.length).toBeGreaterThan(27);
    expect(out[1]!.id).toBe('l01b');
    expect(out[25]!.id).toBe('l01z');
    expect(out[26]!.id).toBe('l01-27');
    expect(new Set(out.map((l) => l.id)).size).toBe(out.length);
  });
});
