// Site velocity with big pipes (brief B, item 4): uniform K 16 soil at 250 MHz with a 0.3 m and a 0.6 m
// pipe across the lines, simulated by our own simulator. A point fit reads these pipes as faster soil
// (K 12.7 and 11.3 before radii were fitted); with the radius fitted the site K must be within 5 % of
// the truth and the model constant (the soil is uniform). Truth: the scenario's soil K.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { defaultRecipe, runRecipe } from '@lamina/processing';
import { loadSite, readLine } from '@lamina/site';
import { parseScenario, simulateSite } from '@lamina/simulate';
import { buildVelocityReport, lineHyperbolas, recipeForVelocity, type VelocityReport } from '@lamina/velocity';

const scenario = parseScenario({
  name: 'uniform16-pipes',
  description: 'Invented test scene: uniform K 16 soil, 250 MHz, a 0.3 m and a 0.6 m pipe across the lines',
  seed: 4242,
  crs: 'EPSG:32617',
  antenna: { frequencyMHz: 250, separationM: 0.3 },
  recording: { sampleIntervalNs: 0.2, samples: 640, timeZeroNs: 8, timeZeroJitterNs: 0.1 },
  soil: { permittivity: 16, attenuationDbPerM: 4 },
  noise: { rms: 0.003, clutterPerM2: 0.3, clutterMaxDepthM: 2 },
  survey: { origin: [431250, 4429815], azimuthDeg: 90, lengthM: 24, widthM: 8, lineSpacingM: 0.5, traceSpacingM: 0.05 },
  plan: [],
  buried: [
    { id: 'pipe-03', kind: 'pipe', utility: 'water', from: [431256, 4429820, 1.2], to: [431256, 4429800, 1.2], radiusM: 0.3, material: 'metal' },
    { id: 'drain-06', kind: 'pipe', utility: 'sewer', from: [431266, 4429820, 1.8], to: [431266, 4429800, 1.8], radiusM: 0.6, material: 'plastic' },
  ],
});

let dir: string;
let report: VelocityReport;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'lamina-velocity-pipes-'));
  await simulateSite(scenario, join(dir, 'site'));
  const site = await loadSite(join(dir, 'site'));
  const recipe = recipeForVelocity(defaultRecipe(250));
  const fits = [];
  for (const src of site.lines) {
    const line = runRecipe(await readLine(site, src), recipe, { frequencyMHz: 250, separationM: 0.3, metresPerUnit: 1 }).line;
    fits.push(...lineHyperbolas(line, { separationM: 0.3, frequencyMHz: 250 }));
  }
  report = buildVelocityReport(fits, { separationM: 0.3 });
}, 600_000);

afterAll(async () => {
  if (dir) await rm(dir, { recursive: true, force: true });
});

describe('site velocity over big pipes (uniform K 16, 250 MHz)', () => {
  it('reads the soil K within 5 % and builds a constant model', () => {
    expect(Math.abs(report.site.permittivity / 16 - 1)).toBeLessThan(0.05);
    expect(report.model.kind).toBe('constant');
  });

  it('fits the radius of both pipes where it is resolved (within 25 %), with their velocity within 10 %', () => {
    for (const [x, r] of [
      [431256, 0.3],
      [431266, 0.6],
    ] as const) {
      const on = report.hyperbolas.filter((h) => Math.abs(h.x - x) < 0.5 && h.radiusResolved);
      expect(on.length, `resolved fits on the ${r} m pipe`).toBeGreaterThanOrEqual(5);
      const radii = on.map((h) => h.radiusM!).sort((a, b) => a - b);
      expect(Math.abs(radii[radii.length >> 1]! / r - 1)).toBeLessThan(0.25);
      for (const h of on) expect(Math.abs(h.permittivity / 16 - 1)).toBeLessThan(0.1);
    }
  });
});
