// One writer at a time on an output folder (issue 16): a second `process` on the same folder is refused
// while the first runs, and a review saved by the viewer while `process` replaces the folder waits for the
// folder's write lock and lands in the new folder instead of being dropped with the old one.
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runProcess } from '@lamina/pipeline';
import { simulateScenarioFile } from '@lamina/simulate';
import { ReviewStore } from '../apps/viewer/src/index';

const repo = resolve(import.meta.dirname, '..');
const work = mkdtempSync(join(tmpdir(), 'lamina-one-writer-'));
const site = join(work, 'site');
beforeAll(() => simulateScenarioFile(join(repo, 'test/fixtures/fuzz-scenario.json'), site));
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe('one writer at a time', () => {
  it('refuses a second process on the same output folder while the first runs', async () => {
    const out = join(work, 'out-a');
    let second: Promise<string> | undefined;
    await runProcess(site, out, {
      threads: 0,
      onProgress: (stage) => {
        if (stage === 'processing lines' && !second) second = runProcess(site, out, { threads: 0 }).then(() => 'finished', (e: Error) => e.message);
      },
    });
    expect(await second).toMatch(/out-a: expected no other writer, found lamina process \(process \d+, since .*\) working on it; wait for it to finish or use another output folder$/);
    expect(JSON.parse(readFileSync(join(out, 'run.json'), 'utf8')).site.name).toBe('fuzz');
  });

  it('a review saved while process replaces the folder lands in the new folder', async () => {
    const out = join(work, 'out-b');
    await runProcess(site, out, { threads: 0 });
    const anomalies = JSON.parse(readFileSync(join(out, 'anomalies.geojson'), 'utf8')) as { features: { properties: { id: string } }[] };
    const id = anomalies.features[0]!.properties.id;
    const store = new ReviewStore(out);
    let saved: Promise<unknown> | undefined;
    await runProcess(site, out, {
      threads: 0,
      // at 'targets' the run has read review.json for the last time and holds the write lock until its commit
      onProgress: (stage) => {
        if (stage === 'targets' && !saved) saved = store.apply({ anomalyId: id, decision: 'accept', note: 'saved during the run' });
      },
    });
    await saved;
    const review = JSON.parse(readFileSync(join(out, 'review.json'), 'utf8')) as { decisions: { anomalyId: string; decision: string; note?: string }[] };
    expect(review.decisions).toContainEqual(expect.objectContaining({ anomalyId: id, decision: 'accept', note: 'saved during the run' }));
  });
});
