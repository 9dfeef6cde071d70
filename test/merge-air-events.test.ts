// Tiles whose recipe takes air-wave events out of the data (the `airEvents` step; issue 17): a tile's piece
// is cleaned on its whole line (site.json `context`), with the above-ground fits and plan objects of that
// line, so the merge equals the untiled run as it does without the step. The tiny invented site (a post
// beside a pipe) gets the default recipe with the step in its site.json; 3 m tiles with 1 m of overlap cut
// every line into pieces and put the post on a tile edge. Compared as test/batch-engines.test.ts compares
// (test/merge-compare.ts): every cell bit for bit (GDAL), every anomaly one to one, and anomalies.geojson,
// forecast.geojson and targets.csv byte for byte.
import { readFileSync, writeFileSync } from 'node:fs';
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { defaultRecipe, withAirEvents } from '@lamina/processing';
import { compareWithUntiled } from './merge-compare';
import { root, lamina, buildCli } from './built-cli';


let work: string;

beforeAll(async () => {
  work = await mkdtemp(join(tmpdir(), 'lamina-merge-air-'));
  buildCli();
  const site = join(work, 'site');
  await lamina('simulate', join(root, 'test/fixtures/tiny-scenario.json'), '--out', site);
  const json = JSON.parse(readFileSync(join(site, 'site.json'), 'utf8')) as { antenna: { frequencyMHz: number }; recipe?: unknown };
  json.recipe = withAirEvents(defaultRecipe(json.antenna.frequencyMHz));
  writeFileSync(join(site, 'site.json'), JSON.stringify(json, null, 1));
  await lamina('velocity', site, '--out', join(work, 'survey'));
  await lamina('process', site, '--velocity', join(work, 'survey', 'velocity.json'), '--out', join(work, 'untiled'), '-q');
  await lamina('tiles', site, '--size', '3', '--overlap', '1', '--velocity', join(work, 'survey', 'velocity.json'), '--out', join(work, 'tiles'));
  const n = (JSON.parse(readFileSync(join(work, 'tiles', 'tiles.json'), 'utf8')) as { tiles: unknown[] }).tiles.length;
  let next = 0;
  const worker = async () => {
    for (let i = next++; i < n; i = next++) await lamina('process-tile', join(work, 'tiles', 'tiles.json'), '--index', String(i), '-q');
  };
  await Promise.all([worker(), worker()]);
}, 600_000);

describe('lamina merge of tiles whose recipe removes air-wave events', () => {
  it('runs the step on every piece and equals the untiled run', async () => {
    const run = JSON.parse(readFileSync(join(work, 'untiled', 'run.json'), 'utf8')) as { log: { step: string; result?: { linesCleaned?: number } }[] };
    // the step cleaned lines (the post is near them), so the check is not vacuous
    expect(run.log.find((e) => e.step === 'airEvents')?.result?.linesCleaned).toBeGreaterThan(0);
    const out = join(work, 'merged');
    await lamina('merge', join(work, 'tiles', 'tiles.json'), '--out', out, '-q');
    const c = compareWithUntiled(out, join(work, 'untiled'), join(work, 'tiles'));
    expect(c.equalCells).toBeGreaterThan(0);
    expect(c.objects).toBeGreaterThan(0);
    for (const f of ['anomalies.geojson', 'forecast.geojson', 'targets.csv']) expect(readFileSync(join(out, f), 'utf8'), f).toBe(readFileSync(join(work, 'untiled', f), 'utf8'));
  }, 300_000);
});
