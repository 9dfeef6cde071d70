import { describe, expect, it } from 'vitest';
import { envelope, kirchhoffMigrate as migrate } from '../src';
import { addDiffraction, addNoise, addRicker, argmaxAbs, makeLine, rng, trace } from './synth';

const F = 400;
const V = 0.1;
const S = 0.16;

function peak2d(line: ReturnType<typeof makeLine>): { trace: number; sample: number; value: number } {
  const env = envelope(line);
  let best = { trace: 0, sample: 0, value: -1 };
  for (let t = 0; t < line.nTraces; t++) {
    for (let i = 0; i < line.nSamples; i++) {
      const e = env.data[t * line.nSamples + i] as number;
      if (e > best.value) best = { trace: t, sample: i, value: e };
    }
  }
  return best;
}

/** Share of the envelope energy within +-r traces of trace t0 at sample i0 (one row). */
function rowConcentration(line: ReturnType<typeof makeLine>, t0: number, i0: number, r: number): number {
  const env = envelope(line);
  let near = 0;
  let all = 0;
  for (let t = 0; t < line.nTraces; t++) {
    const e = (env.data[t * line.nSamples + i0] as number) ** 2;
    all += e;
    if (Math.abs(t - t0) <= r) near += e;
  }
  return near / all;
}

describe('Kirchhoff migration of a bistatic point diffraction', () => {
  // Apex two-way time from the bistatic geometry: t0 = 2 sqrt(z^2 + (s/2)^2) / v (straight rays, constant v).
  const z = 1.0;
  const tz = 5;
  const t0 = tz + (2 * Math.hypot(z, S / 2)) / V;

  it('collapses to within one trace and a few samples of the apex (regular spacing)', () => {
    const line = makeLine(201, 320, 0.1, 0.02, tz);
    addDiffraction(line, 2.0, z, V, S, F);
    const m = migrate(line, { velocityMPerNs: V, separationM: S });
    const p = peak2d(m);
    expect(Math.abs(p.trace - 100)).toBeLessThanOrEqual(1);
    expect(Math.abs(p.sample - t0 / 0.1)).toBeLessThanOrEqual(3);
    // focusing: the apex row holds far more of its energy near the apex after migration
    const before = rowConcentration(line, 100, Math.round(t0 / 0.1), 5);
    const after = rowConcentration(m, 100, Math.round(t0 / 0.1), 5);
    expect(after).toBeGreaterThan(0.6);
    expect(after).toBeGreaterThan(2 * before);
  });

  it('collapses on irregular trace spacing, measured from positions, with noise', () => {
    const r = rng(7);
    const line = makeLine(201, 320, 0.1, 0.02, tz);
    let xAcc = 0;
    for (let t = 0; t < line.nTraces; t++) {
      line.x[t] = xAcc * 0.8; // a line not along x: 0.8 / 0.6 direction cosines
      line.y[t] = xAcc * 0.6;
      xAcc += 0.02 * (0.5 + r.next());
    }
    // along-track distance is xAcc for each trace; place the point under the trace nearest 2.0 m
    const along = Array.from(line.x, (xv, t) => Math.hypot(xv, line.y[t] as number));
    let tApex = 0;
    for (let t = 0; t < along.length; t++) if (Math.abs((along[t] as number) - 2) < Math.abs((along[tApex] as number) - 2)) tApex = t;
    const lineAlong = { ...line, x: Float64Array.from(along), y: new Float64Array(line.nTraces) };
    addDiffraction(lineAlong, along[tApex] as number, z, V, S, F);
    addNoise(line, 0.02, 11);
    const m = migrate(line, { velocityMPerNs: V, separationM: S });
    const p = peak2d(m);
    expect(Math.abs(p.trace - tApex)).toBeLessThanOrEqual(1);
    expect(Math.abs(p.sample - t0 / 0.1)).toBeLessThanOrEqual(3);
  });

  it('gives the same result in CRS feet with metresPerUnit', () => {
    const line = makeLine(101, 400, 0.1, 0.03, tz);
    addDiffraction(line, 1.5, 0.8, V, S, F);
    const ft = 1200 / 3937; // US survey foot, m
    const lineFt = { ...line, x: Float64Array.from(line.x, (v) => v / ft) };
    const a = migrate(line, { velocityMPerNs: V, separationM: S });
    const b = migrate(lineFt, { velocityMPerNs: V, separationM: S, metresPerUnit: ft });
    let d = 0;
    for (let i = 0; i < a.data.length; i++) d = Math.max(d, Math.abs((a.data[i] as number) - (b.data[i] as number)));
    expect(d).toBeLessThan(1e-5);
  });

  it('passes samples above the shallowest point through and accepts out = line.data', () => {
    const line = makeLine(21, 200, 0.1, 0.05, tz);
    addDiffraction(line, 0.5, 0.5, V, S, F);
    const copy = line.data.slice();
    const ref = migrate(line, { velocityMPerNs: V, separationM: S });
    const inPlace = migrate(line, { velocityMPerNs: V, separationM: S }, line.data);
    expect(inPlace.data).toBe(line.data);
    expect(Array.from(inPlace.data)).toEqual(Array.from(ref.data));
    // before time-zero + s/v nothing moves
    const kMax = Math.floor((tz + S / V) / 0.1);
    for (let t = 0; t < 21; t++) for (let k = 0; k <= kMax; k++) expect(ref.data[t * 200 + k]).toBe(copy[t * 200 + k]);
  });
});

describe('Kirchhoff migration of a flat reflector (stationary phase)', () => {
  // A flat event must stay flat, at its time and (with the half-derivative filter and a wide aperture)
  // about its amplitude: stationary-phase evaluation of the 2D Kirchhoff integral, exploding-reflector model.
  it('keeps time and amplitude with the half-derivative filter', () => {
    const line = makeLine(301, 320, 0.1, 0.02, 5);
    const tt = 5 + (2 * Math.hypot(1, S / 2)) / V;
    for (let t = 0; t < line.nTraces; t++) addRicker(line, t, tt, 1, F);
    const m = migrate(line, { velocityMPerNs: V, separationM: S, apertureM: 3, maxAngleDeg: 70, halfDerivative: true });
    const p = argmaxAbs(trace(m, 150));
    expect(Math.abs(p.index - tt / 0.1)).toBeLessThanOrEqual(1);
    expect(p.value).toBeGreaterThan(0.85);
    expect(p.value).toBeLessThan(1.15);
  });
});
