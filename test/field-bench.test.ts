// Smoke test of the field benchmark's path (bench/field-lib.ts): two tiny random scenes simulated,
// processed by the CLI and scored; the pooled row sums their counts.
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { C_M_PER_NS } from '@lamina/constants';
import { afterAll, describe, expect, it } from 'vitest';
import { randomScenario, simulateSite } from '@lamina/simulate';
import { airMeasures, suppressionDb } from '../bench/air-measure';
import { emptyRow, parseSeeds, pool, runScene, runScenes, type FieldRow } from '../bench/field-lib';
import { pairedIntervals, poolIntervals } from '../bench/field-intervals';
import { cachedSiteDir, simulateCached } from '../bench/site-cache';
import { replayFolder } from '../bench/velocity-replay';

const work = mkdtempSync(join(tmpdir(), 'lamina-field-smoke-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe('pnpm bench field (smoke)', () => {
  it('scores two tiny scenes and pools them by summing', async () => {
    const rows = [];
    for (const seed of [1, 2]) rows.push(await runScene(randomScenario(seed, { sideM: [5, 6], maxTraces: 1200 }), work, seed % 2 ? 'tune' : 'held-out', seed, { threads: 1, keep: true }));
    for (const r of rows) {
      expect(r.error).toBeNull();
      expect(r.kFitted === null || r.kFitted > 0).toBe(true);
      expect(r.utilities).toBeGreaterThanOrEqual(1);
      expect(r.buriedTargets + r.airTargets + r.clutterTargets).toBe(r.targets);
      expect(r.surveyedAreaM2).toBeGreaterThan(20);
    }
    const p = pool('both', rows);
    expect(p.targets).toBe(rows[0]!.targets + rows[1]!.targets);
    if (p.targets) expect(p.precisionByCount).toBeCloseTo((rows[0]!.buriedTargets + rows[1]!.buriedTargets) / p.targets, 12);
    expect(p.utilityRecall).toBeCloseTo((rows[0]!.utilityCoveredM + rows[1]!.utilityCoveredM) / (rows[0]!.utilitySurveyedM + rows[1]!.utilitySurveyedM), 12);
    // issue 18's paired measure: a run against itself (a step that changed nothing) reads 0 dB
    for (const r of rows) {
      const s = (await airMeasures(join(work, `${r.name}-out`), join(work, `${r.name}-out`), join(work, `${r.name}-site`, 'truth.json'))).suppression;
      expect(s).not.toBeNull();
      expect(s!.locusAfter).toBe(s!.locusBefore);
      expect(s!.buriedAfter).toBe(s!.buriedBefore);
      expect(s!.buriedCells).toBeGreaterThan(0);
      expect(suppressionDb(s!.buriedBefore, s!.buriedAfter, s!.buriedCells)).toBe(0);
    }
    expect(suppressionDb(10, 1, 5)).toBeCloseTo(10, 12);
    expect(suppressionDb(10, 0, 5)).toBe(Infinity);
    expect(suppressionDb(0, 0, 0)).toBeNull();
    expect(parseSeeds('1-3,8')).toEqual([1, 2, 3, 8]);
    expect(parseSeeds('1-9/2,12')).toEqual([1, 3, 5, 7, 9, 12]);
    // bench/velocity-replay.ts: the site model replayed on the kept runs' fits gives their site K
    const replayed = replayFolder(work);
    expect(replayed.map((r) => r.name)).toEqual(rows.map((r) => r.name));
    for (const r of replayed) expect(r.kReplay).toBe(r.kRun);
    // and moves it when the model is asked for something else (here: a fallback, where no fit was usable)
    for (const r of replayed) if (r.fits === 0) expect(replayFolder(work, { fallbackVelocityMPerNs: 0.05 }).find((q) => q.name === r.name)!.kReplay).toBeCloseTo((C_M_PER_NS / 0.05) ** 2, 9);
  });

  it('runs scenes side by side and returns them in order', async () => {
    let running = 0, most = 0;
    const ended: number[] = [];
    const out = await runScenes([30, 5, 20, 1, 10], 2, async (ms) => {
      most = Math.max(most, ++running);
      await new Promise((r) => setTimeout(r, ms));
      running--;
      return ms * 2;
    }, (r) => ended.push(r));
    expect(out).toEqual([60, 10, 40, 2, 20]);
    expect(most).toBe(2);
    expect(ended).not.toEqual(out);
    expect([...ended].sort((a, b) => a - b)).toEqual([...out].sort((a, b) => a - b));
  });

  it('puts bootstrap intervals over scenes around the pooled figures, and paired ones around a difference', () => {
    // scenes with 10 targets each, 5..9 of them on buried objects (pooled precision 0.7)
    const scene = (i: number, buried: number): FieldRow => ({ ...emptyRow(`s${i}`, 'tune', i), targets: 10, buriedTargets: buried, utilitySurveyedM: 10, utilityCoveredM: 8 });
    const rows = [5, 6, 7, 8, 9, 5, 6, 7, 8, 9].map((b, i) => scene(i, b));
    const iv = poolIntervals(rows);
    expect(pool('all', rows).precisionByCount).toBeCloseTo(0.7, 12);
    expect(iv.precisionByCount![0]).toBeLessThan(0.7);
    expect(iv.precisionByCount![1]).toBeGreaterThan(0.7);
    // the same rows give the same intervals; identical scenes give none of width
    expect(poolIntervals(rows)).toEqual(iv);
    expect(poolIntervals(rows.map((r) => ({ ...r, buriedTargets: 7 }))).precisionByCount).toEqual([0.7, 0.7]);
    expect(iv.utilityRecall).toEqual([0.8, 0.8]);
    // a run against itself differs by 0 everywhere; one more buried target in every scene by exactly +0.1,
    // an interval of no width, while each run's own interval is wide
    const same = pairedIntervals(rows, rows);
    expect(same.scenes).toBe(10);
    expect(same.diff.precisionByCount).toEqual({ diff: 0, interval: [0, 0] });
    const better = pairedIntervals(rows, rows.map((r) => ({ ...r, buriedTargets: r.buriedTargets + 1 })));
    expect(better.diff.precisionByCount.diff).toBeCloseTo(0.1, 12);
    expect(better.diff.precisionByCount.interval![0]).toBeCloseTo(0.1, 12);
    expect(better.diff.precisionByCount.interval![1]).toBeCloseTo(0.1, 12);
    expect(iv.precisionByCount![1] - iv.precisionByCount![0]).toBeGreaterThan(0.05);
  });

  it('keeps simulated sites in a cache keyed by scenario and simulator sources, the same files as a fresh simulation', async () => {
    const cache = join(work, 'cache');
    const scene = randomScenario(5, { sideM: [5, 6], maxTraces: 800 });
    expect(await simulateCached(scene, join(work, 'c1'), cache)).toBe(false);
    expect(await simulateCached(scene, join(work, 'c2'), cache)).toBe(true);
    await simulateSite(scene, join(work, 'fresh'));
    const files = (d: string) => readdirSync(d, { recursive: true, withFileTypes: true }).filter((e) => e.isFile()).map((e) => join(e.parentPath, e.name).slice(d.length)).sort();
    expect(files(join(work, 'c2'))).toEqual(files(join(work, 'fresh')));
    for (const f of files(join(work, 'fresh'))) expect(readFileSync(join(work, 'c2', f)).equals(readFileSync(join(work, 'fresh', f))), f).toBe(true);
    // another scene (or another noise draw) is another entry
    expect(cachedSiteDir({ ...scene, noiseSeed: 1 }, cache)).not.toBe(cachedSiteDir(scene, cache));
  });
});
