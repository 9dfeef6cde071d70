import { describe, expect, it } from 'vitest';
import { constantModel, depthAtVerticalTimeNs, hyperbolaTimes, verticalTwoWayTimeNs } from '../src/physics';

// The browser entry (`@lamina/velocity/physics`) is src/physics.ts: these tests import it directly.
describe('vertical (zero-offset) time and depth', () => {
  const layered = {
    layers: [
      { topM: 0, bottomM: 0.5, velocityMPerNs: 0.12 },
      { topM: 0.5, bottomM: 1e9, velocityMPerNs: 0.08 },
    ],
  };
  it('constant velocity: d = v t / 2 (two-way time)', () => {
    expect(depthAtVerticalTimeNs(constantModel(0.1), 20)).toBeCloseTo(1, 12);
    expect(verticalTwoWayTimeNs(constantModel(0.1), 1)).toBeCloseTo(20, 12);
    // negative time (above time-zero on a radargram) is a negative depth at the top velocity
    expect(depthAtVerticalTimeNs(constantModel(0.1), -4)).toBeCloseTo(-0.2, 12);
  });
  it('layered: adds interval times and round-trips', () => {
    // worked by hand: 0.5 m at 0.12 m/ns is 8.333 ns two-way; 0.5 m more at 0.08 is 12.5 ns
    expect(verticalTwoWayTimeNs(layered, 1)).toBeCloseTo(2 * (0.5 / 0.12) + 2 * (0.5 / 0.08), 9);
    for (const d of [0, 0.1, 0.5, 0.9, 3]) expect(depthAtVerticalTimeNs(layered, verticalTwoWayTimeNs(layered, d))).toBeCloseTo(d, 9);
  });
});

describe('hyperbolaTimes (drawing)', () => {
  it('diffraction move-out equals the two-leg path from the antennas to a point target', () => {
    // Geometry of a common-offset pair over a point: t = (|Tx - P| + |Rx - P|) / v (common practice, no source).
    const v = 0.1;
    const sep = 0.2;
    const depth = 0.6;
    const t0 = (2 * Math.hypot(depth, sep / 2)) / v;
    const xs = [-1.5, -0.4, 0, 0.3, 2];
    const ts = hyperbolaTimes(xs, t0, v, sep);
    xs.forEach((x, i) => expect(ts[i]).toBeCloseTo((Math.hypot(x - sep / 2, depth) + Math.hypot(x + sep / 2, depth)) / v, 9));
    expect(hyperbolaTimes([0], 10, 0.1)[0]).toBeCloseTo(10, 12);
  });
});

describe('the browser entry', () => {
  it('@lamina/velocity/physics reaches only modules without node imports', async () => {
    const { readdirSync, readFileSync } = await import('node:fs');
    const { fileURLToPath } = await import('node:url');
    const pkg = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { exports: Record<string, string> };
    expect(pkg.exports['./physics']).toBe('./src/physics.ts');
    const imports = (f: string) => [...readFileSync(fileURLToPath(new URL(f, import.meta.url)), 'utf8').matchAll(/^\s*(?:import|export)[^;]*?from\s+'([^']+)'/gm)].map((m) => m[1]!);
    for (const f of ['../src/physics.ts', '../src/model.ts']) for (const m of imports(f)) expect(['./model', '@lamina/constants'], `${f} imports ${m}`).toContain(m);
    // @lamina/constants imports only its own files
    for (const f of readdirSync(fileURLToPath(new URL('../../constants/src/', import.meta.url)))) {
      for (const m of imports(`../../constants/src/${f}`)) expect(m.startsWith('./'), `constants/src/${f} imports ${m}`).toBe(true);
    }
  });
});
