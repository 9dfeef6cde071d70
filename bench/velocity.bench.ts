// Hyperbola detection per line: the detector before this branch (a copy kept in bench/velocity-before/,
// its own FFT envelope, moving-median background and LM from every start) against the current one
// (@lamina/velocity), side by side on the same generated lines, alternately, and the ratio of medians.
// Lines: simulated by our own simulator (uniform K 16, 250 MHz, a 0.3 m and a 0.6 m pipe, clutter,
// noise), 481 traces x 640 samples each, processed with the default recipe minus migration, as
// `lamina velocity` does. Timings on shared cores are noisy: read the ratio, not the seconds.
// Usage: pnpm bench velocity   (LAMINA_BENCH_RUNS=5 to repeat more)
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { RadarLine } from '../packages/radar-data/src/index';
import { defaultRecipe, runRecipe } from '../packages/processing/src/index';
import { loadSite, readLine } from '../packages/site/src/index';
import { parseScenario, simulateSite } from '../packages/simulate/src/index';
import { detectHyperbolas, recipeForVelocity } from '../packages/velocity/src/index';
import { detectHyperbolas as detectBefore } from './velocity-before/detect';

const RUNS = Number(process.env.LAMINA_BENCH_RUNS ?? 3);
const FREQ = 250;
const SEP = 0.3;

const scenario = parseScenario({
  name: 'bench-velocity',
  description: 'Uniform K 16, 250 MHz, a 0.3 m and a 0.6 m pipe across three lines (invented bench scene)',
  seed: 4242,
  crs: 'EPSG:32617',
  antenna: { frequencyMHz: FREQ, separationM: SEP },
  recording: { sampleIntervalNs: 0.2, samples: 640, timeZeroNs: 8, timeZeroJitterNs: 0.1 },
  soil: { permittivity: 16, attenuationDbPerM: 4 },
  noise: { rms: 0.003, clutterPerM2: 0.5, clutterMaxDepthM: 2 },
  survey: { origin: [431250, 4429815], azimuthDeg: 90, lengthM: 24, widthM: 1, lineSpacingM: 0.5, traceSpacingM: 0.05 },
  plan: [],
  buried: [
    { id: 'pipe-03', kind: 'pipe', utility: 'water', from: [431256, 4429820, 1.2], to: [431256, 4429800, 1.2], radiusM: 0.3, material: 'metal' },
    { id: 'drain-06', kind: 'pipe', utility: 'sewer', from: [431266, 4429820, 1.8], to: [431266, 4429800, 1.8], radiusM: 0.6, material: 'plastic' },
  ],
});

const dir = await mkdtemp(join(tmpdir(), 'lamina-bench-velocity-'));
try {
  await simulateSite(scenario, join(dir, 'site'));
  const site = await loadSite(join(dir, 'site'));
  const recipe = recipeForVelocity(defaultRecipe(FREQ));
  const lines: RadarLine[] = [];
  for (const src of site.lines) lines.push(runRecipe(await readLine(site, src), recipe, { frequencyMHz: FREQ, separationM: SEP, metresPerUnit: 1 }).line);
  console.log(`${lines.length} lines of ${lines[0]!.nTraces} traces x ${lines[0]!.nSamples} samples, ${RUNS} runs each, alternating`);
  const opts = { separationM: SEP, metresPerUnit: 1, frequencyMHz: FREQ };
  const before: number[] = [];
  const after: number[] = [];
  let nBefore = 0;
  let nAfter = 0;
  // One untimed pass each, so JIT warm-up is not charged to whichever runs first.
  detectBefore(lines[0]!, opts);
  detectHyperbolas(lines[0]!, opts);
  for (let r = 0; r < RUNS; r++) {
    for (const line of lines) {
      let t = performance.now();
      nBefore = detectBefore(line, opts).length;
      before.push(performance.now() - t);
      t = performance.now();
      nAfter = detectHyperbolas(line, opts).length;
      after.push(performance.now() - t);
    }
  }
  const median = (a: number[]) => a.slice().sort((p, q) => p - q)[a.length >> 1]!;
  const mb = median(before);
  const ma = median(after);
  console.log(`detection per line, median of ${before.length}: before ${mb.toFixed(0)} ms (${nBefore} fits on the last line), after ${ma.toFixed(0)} ms (${nAfter} fits)`);
  console.log(`ratio before / after: ${(mb / ma).toFixed(1)}x`);
} finally {
  await rm(dir, { recursive: true, force: true });
}
