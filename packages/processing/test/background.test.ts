import { describe, expect, it } from 'vitest';
import { backgroundRemoval } from '../src';
import { addDiffraction, addRicker, argmaxAbs, makeLine, trace } from './synth';

const F = 400;

describe('background removal', () => {
  it('whole-line mean removes a flat event and keeps a hyperbola', () => {
    const line = makeLine(201, 400, 0.1, 0.02, 2);
    for (let t = 0; t < line.nTraces; t++) addRicker(line, t, 10, 1, F); // flat: a wall parallel to the line
    addDiffraction(line, 2, 0.8, 0.1, 0.16, F);
    const hyp = makeLine(201, 400, 0.1, 0.02, 2);
    addDiffraction(hyp, 2, 0.8, 0.1, 0.16, F);
    const out = backgroundRemoval(line);
    // far from the apex the flat event is gone
    for (const t of [0, 30, 170, 200]) expect(Math.abs(trace(out, t)[100] as number)).toBeLessThan(0.02);
    // the apex keeps most of its amplitude (the mean trace holds only 1/201 of each hyperbola sample per trace)
    const apex = argmaxAbs(trace(out, 100));
    const apexRef = argmaxAbs(trace(hyp, 100));
    expect(Math.abs(apex.index - apexRef.index)).toBeLessThanOrEqual(1);
    expect(apex.value / apexRef.value).toBeGreaterThan(0.85);
  });

  it('moving window (metres) removes a flat event that stops half-way, where a whole-line mean cannot', () => {
    const line = makeLine(401, 200, 0.1, 0.05);
    for (let t = 0; t < 200; t++) addRicker(line, t, 8, 1, F);
    const whole = backgroundRemoval(line);
    const moving = backgroundRemoval(line, { method: 'movingMean', windowM: 4 });
    const i = 80;
    // whole-line mean leaves about half of the event on both halves
    expect(Math.abs(trace(whole, 50)[i] as number)).toBeGreaterThan(0.4);
    expect(Math.abs(trace(moving, 50)[i] as number)).toBeLessThan(1e-5);
    expect(Math.abs(trace(moving, 350)[i] as number)).toBeLessThan(1e-5);
  });

  it('the window is in metres whatever the CRS unit', () => {
    const line = makeLine(101, 50, 0.1, 0.05);
    for (let i = 0; i < line.data.length; i++) line.data[i] = Math.sin(i * 0.37) + (i % 50 === 7 ? 5 : 0);
    const ft = 1200 / 3937; // US survey foot, m
    const inFeet = { ...line, x: Float64Array.from(line.x, (v) => v / ft) };
    const a = backgroundRemoval(line, { method: 'movingMean', windowM: 1.33 });
    const b = backgroundRemoval(inFeet, { method: 'movingMean', windowM: 1.33, metresPerUnit: ft });
    for (let i = 0; i < a.data.length; i++) expect(b.data[i]).toBeCloseTo(a.data[i] as number, 5);
    const inPlace = backgroundRemoval(line, { method: 'movingMean', windowM: 1.33 }, line.data);
    expect(Array.from(inPlace.data)).toEqual(Array.from(a.data));
  });
});
