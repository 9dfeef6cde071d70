import { describe, expect, it } from 'vitest';
import { buildVelocityReport, C_M_PER_NS, correctObliqueCrossings, EARLY_APEX_FLAG, lineDirection, lineHyperbolas, permittivityFromVelocity, type HyperbolaFit } from '../src';
import { synthLine } from './synth';

// A pipe crossing parallel lines at angle beta is a hyperbola of apparent depth d / sin(beta) and
// apparent velocity v / sin(beta) on each line (geometry: horizontal distance |u| sin(beta)), so the
// synthetic lines below carry exactly what a pipe would give.
describe('oblique crossings of a linear reflector', () => {
  it('corrects a pipe crossing five lines at 25 degrees from a would-be air wave back to its soil K and depth', () => {
    const beta = (25 * Math.PI) / 180;
    const k = 9;
    const v = C_M_PER_NS / Math.sqrt(k);
    const d = 0.7;
    const fits: HyperbolaFit[] = [];
    const dirs: Record<string, [number, number]> = {};
    for (let j = 0; j < 5; j++) {
      const y = 0.5 * j;
      const xCross = 4 + y / Math.tan(beta);
      // A post 1.2 m north of the last line, at x = 12: seen by the lines as a compact air reflector.
      const post = { x0: 12, z: Math.hypot(1.2 + 2 - y, 0), v: C_M_PER_NS, amp: 0.4 };
      const line = synthLine(`p${j}`, [{ x0: xCross, z: d / Math.sin(beta), v: v / Math.sin(beta), amp: 1 }, post], {
        nTraces: 320,
        nSamples: 600,
        dtNs: 0.1,
        fMHz: 400,
        separationM: 0.15,
        origin: [500, 100 + y],
        noise: 0.02,
        seed: 40 + j,
      });
      dirs[line.id] = lineDirection(line);
      fits.push(...lineHyperbolas(line, { separationM: 0.15, frequencyMHz: 400 }));
    }
    const pipe = fits.filter((f) => f.t0Ns < 30 && Math.abs(f.y - 100 - ((f.x - 500 - 4) * Math.tan(beta))) < 0.2);
    expect(pipe.length).toBe(5);
    // Before the correction the pipe reads K = 9 sin^2(25 deg) = 1.6: above-ground by the K < 2 rule.
    for (const f of pipe) expect(f.origin).toBe('above-ground');
    const report = buildVelocityReport(fits, { separationM: 0.15, lineDirections: dirs });
    const corrected = report.hyperbolas.filter((f) => f.crossing);
    expect(corrected.length).toBe(5);
    for (const f of corrected) {
      expect(f.origin).toBe('subsurface');
      expect(Math.abs(f.permittivity / k - 1)).toBeLessThan(0.05);
      expect(Math.abs(f.depthM / d - 1)).toBeLessThan(0.05);
      expect(Math.abs(f.crossing!.angleDeg - 25)).toBeLessThan(2);
    }
    // The post's fits line up across the lines (strike perpendicular to them): left as they are.
    const air = report.hyperbolas.filter((f) => Math.abs(f.x - 512) < 0.3);
    expect(air.length).toBeGreaterThanOrEqual(3);
    for (const f of air) {
      expect(f.crossing).toBeUndefined();
      expect(f.origin).toBe('above-ground');
    }
    expect(Math.abs(report.site.permittivity / k - 1)).toBeLessThan(0.05);
    // The fits carry their line's direction, so the report finds the same correction without being told.
    const again = buildVelocityReport(fits, { separationM: 0.15 });
    expect(again.hyperbolas.filter((f) => f.crossing).length).toBe(5);
    expect(again.site.permittivity).toBeCloseTo(report.site.permittivity, 10);
  });

  // Fits made by hand (geometry of the pipe above; no radargram): ten lines 0.5 m apart running east.
  const fit = (line: number, x: number, t0: number, v: number): HyperbolaFit => ({
    line: `l${line}`,
    trace: 0,
    x,
    y: 0.5 * line,
    t0Ns: t0,
    velocityMPerNs: v,
    permittivity: permittivityFromVelocity(v),
    depthM: (v * t0) / 2,
    uncertaintyMPerNs: 0.02 * v,
    origin: 'subsurface',
    lineDirection: [1, 0],
  });
  const dirs = Object.fromEntries(Array.from({ length: 10 }, (_, j) => [`l${j}`, [1, 0] as [number, number]]));
  const k = 12;
  const v = C_M_PER_NS / Math.sqrt(k);
  it('corrects two pipes that cross each other at 35 degrees to the lines: one linked group, two strikes', () => {
    // Single linkage (apexes within 2.5 m on other lines, t0 within 15 %, apparent velocity within 20 %)
    // joins the two pipes where they meet into one group; each is a strike of its own.
    const beta = (35 * Math.PI) / 180;
    const d = 0.6;
    const t0 = (2 * d) / v;
    // a deterministic jitter of the apexes (a few centimetres, as picks place them)
    const jitter = (j: number) => 0.04 * Math.sin(7.1 * j);
    const a = Array.from({ length: 10 }, (_, j) => fit(j, 5 + (0.5 * j) / Math.tan(beta) + jitter(j), t0, v / Math.sin(beta)));
    const b = Array.from({ length: 10 }, (_, j) => fit(j, 5 + (0.5 * (9 - j)) / Math.tan(beta) + jitter(j + 3), t0 * 1.03, v / Math.sin(beta)));
    const out = correctObliqueCrossings([...a, ...b], dirs);
    for (const f of out) {
      expect(f.crossing).toBeDefined();
      expect(Math.abs(f.crossing!.angleDeg - 35)).toBeLessThan(2);
      expect(Math.abs(f.permittivity / k - 1)).toBeLessThan(0.05);
    }
    expect(new Set(out.map((f) => f.strike)).size).toBe(2);
  });
  it('leaves point fits linked to a pipe as they are, also three that happen to line up at other velocities', () => {
    const beta = (35 * Math.PI) / 180;
    const d = 0.6;
    const t0 = (2 * d) / v;
    const jitter = (j: number) => 0.04 * Math.sin(7.1 * j);
    const pipe = Array.from({ length: 8 }, (_, j) => fit(j + 1, 5 + (0.5 * (j + 1)) / Math.tan(beta) + jitter(j), t0, v / Math.sin(beta)));
    // point fits 1-2 m along the lines off the pipe, velocities stepping by 15 % from v to v / sin(beta)
    // (stones, fits biased by a radius), so that single linkage chains them to the pipe; those on lines
    // 4, 6 and 8 lie within 0.5 m of one straight line but read 1, 1.32 and 1.32 v
    const steps = [1, 1.15, 1.32, 1.52, 1.74, 1.52, 1.32, 1.15, 1];
    const offsets = [-1.3, 1.0, -1.8, 1.5, -1.1, 2.0, -1.6, 1.2, -2.1];
    const points = steps.map((f, m) => fit((m * 3) % 10, 5 + (0.5 * ((m * 3) % 10)) / Math.tan(beta) + offsets[m]!, t0 * (1 + 0.02 * (m % 5)), v * f));
    const out = correctObliqueCrossings([...pipe, ...points], dirs);
    for (const f of out.slice(0, 8)) expect(Math.abs(f.permittivity / k - 1)).toBeLessThan(0.05);
    for (const f of out.slice(8)) expect(f.crossing).toBeUndefined();
  });
  it('leaves a compact object seen on three lines as it is: any strike fits three apexes 0.3 m apart', () => {
    // apexes of one small object on three lines (lines 0.5 m apart, so 1 m across), scattered 0.3 m along
    // the lines by noise; both directions through them are poorly known, so neither corrects them
    const t0 = 12;
    const pts = [fit(3, 6.0, t0, v), fit(4, 6.3, t0, v), fit(5, 5.95, t0, v)];
    const out = correctObliqueCrossings(pts, dirs);
    for (const f of out) {
      expect(f.crossing).toBeUndefined();
      expect(f.velocityMPerNs).toBe(v);
    }
  });
});

describe('buildVelocityReport with fits in the direct-wave zone', () => {
  it('corrects the oblique crossings once: an air-wave strike stays above-ground when the early fits are taken', () => {
    // Three objects with apexes in the direct-wave zone (K 6), nothing later but a wall's air wave seen on
    // four lines 0.5 m apart at 25 degrees: apparent K 0.3, corrected once K 0.3 / sin^2(25) = 1.7, still
    // air. Corrected a second time it would read K 9.4 and join the soil.
    const c = C_M_PER_NS;
    const mk = (line: string, x: number, y: number, v: number, t0Ns: number, extra: Partial<HyperbolaFit> = {}): HyperbolaFit => ({
      line, trace: 0, x, y, t0Ns, velocityMPerNs: v, permittivity: permittivityFromVelocity(v), depthM: (v * t0Ns) / 2, uncertaintyMPerNs: 0.003, lineDirection: [1, 0], ...extra,
      origin: extra.origin ?? 'subsurface',
    });
    const vAir = c / Math.sqrt(0.3);
    const beta = (25 * Math.PI) / 180;
    const strike = [0, 1, 2, 3].map((j) => mk(`w${j}`, 4 + (0.5 * j) / Math.tan(beta), 0.5 * j, vAir, 3.66, { origin: 'above-ground', flags: ['v > c'] }));
    const vSoil = c / Math.sqrt(6);
    const early = [20, 30, 40].map((x, i) => mk(`e${i}`, x, 10, vSoil, 6, { flags: [EARLY_APEX_FLAG] }));
    const report = buildVelocityReport([...strike, ...early]);
    expect(report.site.objectCount).toBe(3);
    expect(report.site.permittivity).toBeCloseTo(6, 6);
    const crossed = report.hyperbolas.filter((f) => f.crossing);
    expect(crossed.length).toBe(4);
    for (const f of crossed) {
      expect(f.crossing!.apparentVelocityMPerNs).toBeCloseTo(vAir, 9);
      expect(f.permittivity).toBeCloseTo(0.3 / Math.sin(beta) ** 2, 6);
      expect(f.origin).toBe('above-ground');
    }
  });
});
