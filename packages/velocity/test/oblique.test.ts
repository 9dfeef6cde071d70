import { describe, expect, it } from 'vitest';
import { buildVelocityReport, C_M_PER_NS, lineDirection, lineHyperbolas, type HyperbolaFit } from '../src';
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
});
