// An outside check of the whole `lamina process` on lines we did not simulate: five lines of a 2D full-wave
// (FDTD) simulation written apart from Lamina and its simulator (test/fixtures/fullwave-reference/, a copy
// of ../shared/fullwave-reference/; its README and truth.json give the scene). Not a tuning target: the
// checks are what its README's physics says to expect, with tolerances named beside each; what Lamina
// does not do yet on these lines is listed as `todo` with today's figures (issue 12).
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import { pointFromWgs84, resolveCrs } from '@lamina/site';
import { buildCli, lamina, root } from './built-cli';

const site = join(root, 'test/fixtures/fullwave-reference');
interface Truth {
  origin: [number, number];
  K: number;
  pipes: { id: string; p0: [number, number]; depth: number; radius: number }[];
  overhead: { id: string; p0: [number, number]; heightM: number; radius: number }[];
  antenna: { heightM: number; separationM: number; frequencyMHz: number };
}
interface Fit { line: string; x0M: number; t0Ns: number; permittivity: number; origin: string }
interface Anomaly { id: string; class?: string; origin: string; depthTopM: number; depthBottomM: number; centroid: [number, number]; echoOf?: string }

let work: string;
let truth: Truth;
let fits: Fit[];
/** Anomalies with their centroid as x along the lines from the truth's origin, m (lines run along x). */
let anomalies: (Anomaly & { x: number })[];
let targets: Map<string, { depthUncertaintyM: number }>;
let sliceThicknessM: number;

beforeAll(async () => {
  buildCli();
  work = await mkdtemp(join(tmpdir(), 'lamina-fullwave-'));
  await lamina('process', site, '--out', work);
  const json = async (f: string) => JSON.parse(await readFile(f, 'utf8'));
  truth = await json(join(site, 'truth.json'));
  const velocity = await json(join(work, 'velocity.json'));
  fits = velocity.hyperbolas;
  const crs = resolveCrs('EPSG:32632');
  anomalies = (await json(join(work, 'anomalies.geojson'))).features.map((f: { properties: Anomaly }) => ({
    ...f.properties,
    x: pointFromWgs84(crs, f.properties.centroid[0], f.properties.centroid[1])[0] - truth.origin[0],
  }));
  targets = new Map((await json(join(work, 'targets.geojson'))).features.map((f: { properties: { id: string; depthUncertaintyM: number } }) => [f.properties.id, f.properties]));
  const slices = (await json(join(work, 'slices.json'))).slices as { topM: number; bottomM: number }[];
  sliceThicknessM = Math.max(...slices.map((s) => s.bottomM - s.topM));
}, 120_000);
afterAll(() => rm(work, { recursive: true, force: true }));

describe('the full-wave reference lines (outside check)', () => {
  const period = () => 1000 / truth.antenna.frequencyMHz;

  it('reads the overhead pipe bridge as air: K 1-2 on every line, its apex where the air path puts it', () => {
    const bridge = truth.overhead[0]!;
    const s = truth.antenna.separationM;
    // README: apex about 2 (h - antenna height - bar radius) / c after time-zero; here with the bistatic offset
    const slant = bridge.heightM - truth.antenna.heightM - bridge.radius;
    const apexNs = (2 * Math.hypot(slant, s / 2)) / C_M_PER_NS;
    for (const line of ['l01', 'l02', 'l03', 'l04', 'l05']) {
      const f = fits.find((h) => h.line === line && Math.abs(h.x0M - bridge.p0[0]) < 0.1);
      expect(f, `a fit at the bridge on ${line}`).toBeDefined();
      // K 1-2 is air (common practice, no source); the fit may read a little below 1 (noise, the 2D wavelet)
      expect(f!.permittivity).toBeLessThan(2);
      expect(f!.origin).toBe('above-ground');
      // the 2D line source's wavelet is not the Ricker shape the picker expects (README): a quarter period
      expect(Math.abs(f!.t0Ns - apexNs)).toBeLessThan(period() / 4);
    }
    // its reflections in the slices are flagged, and none of them is handed on as a target
    const flagged = anomalies.filter((a) => a.class === 'above-ground' && Math.abs(a.x - bridge.p0[0]) < 1);
    expect(flagged.length).toBeGreaterThan(0);
    for (const a of anomalies) if (Math.abs(a.x - bridge.p0[0]) < 0.5) expect(targets.has(a.id), a.id).toBe(false);
  });

  it('fits the steel pipe on every line, reading the soil faster than it is (straight rays, antenna above ground)', () => {
    const pipe = truth.pipes.find((p) => p.id === 'gas-steel')!;
    const on = fits.filter((h) => h.origin === 'subsurface' && Math.abs(h.x0M - pipe.p0[0]) < 0.1);
    expect(new Set(on.map((h) => h.line)).size).toBe(5);
    for (const h of on) {
      // README: the flanks arrive early (refraction at the surface), so K below the truth; within 20 % of it
      // (our regression bound, no source)
      expect(h.permittivity).toBeLessThan(truth.K);
      expect(h.permittivity).toBeGreaterThan(0.8 * truth.K);
    }
  });

  it('hands on the steel pipe as a target at its depth, and its echoes below it as echoes, not new targets', () => {
    const pipe = truth.pipes.find((p) => p.id === 'gas-steel')!;
    const at = anomalies.filter((a) => targets.has(a.id) && Math.abs(a.x - pipe.p0[0]) < 0.25);
    expect(at.length).toBe(1);
    const a = at[0]!;
    // the top within the target's stated depth uncertainty plus one slice (the slices quantise depth)
    expect(Math.abs(a.depthTopM - pipe.depth)).toBeLessThan(targets.get(a.id)!.depthUncertaintyM + sliceThicknessM);
    // README: later echoes of the same pipe (ringing, multiples) are not new objects
    const below = anomalies.filter((b) => b.id !== a.id && Math.abs(b.x - pipe.p0[0]) < 0.5 && b.depthTopM > a.depthTopM);
    expect(below.length).toBeGreaterThan(0);
    for (const b of below) {
      expect(b.echoOf, b.id).toBe(a.id);
      expect(targets.has(b.id), b.id).toBe(false);
    }
  });

  // What these lines show Lamina does not do yet (issue 12; figures of 2026-12-05, HEAD cfb591a):
  it.todo('site K within 5 % of the truth (K 6): 7.39 today; the air-filled duct fits K 10.7-12.2 with a radius of 0.6-0.7 m (truth 0.05 m) on four of five lines');
  it('finds the air-filled duct under the bridge\'s air-wave locus as a target at its plan position and depth', () => {
    // README: the duct (x 2.0 m, top 0.6 m) lies where the bridge's air-wave locus passes within 0.3 m of it
    // at its depth; its own soil-velocity fits sit at x 2.0 on every line, so it is buried, not air
    const duct = truth.pipes.find((p) => p.id === 'telecom-duct')!;
    // truth depths are to the top of each body (truth.json `model`)
    const top = duct.depth;
    // in plan within the first Fresnel zone's radius sqrt(lambda z / 2) (0.30 m at 400 MHz, K 6, 0.6 m; the
    // formula from memory), in depth within the target's stated uncertainty plus one slice (the slices
    // quantise depth)
    const v = C_M_PER_NS / Math.sqrt(truth.K);
    const fresnelM = Math.sqrt(((v * 1000) / truth.antenna.frequencyMHz) * top / 2);
    const at = anomalies.filter((a) => targets.has(a.id) && Math.abs(a.x - duct.p0[0]) < fresnelM && Math.abs(a.depthTopM - top) < targets.get(a.id)!.depthUncertaintyM + sliceThicknessM);
    expect(at.length, 'a target on the duct').toBeGreaterThan(0);
    // (the bridge's own air wave stays flagged: the first check above)
  });
  it.todo('hands on no stone and nothing below the layer: stone-3 (x 0.96 m, 0.35 m) is a utility target today, and so is an anomaly at x 1.4 m, 2.5-2.8 m');
});
