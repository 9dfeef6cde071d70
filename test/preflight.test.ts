// The checks of `lamina process` before pass 1 (issue 16): what the positions mean and whether the run
// fits, from headers only. Refusals come before any line is processed (no progress reported, nothing
// written beside the output folder); the size estimate is checked against a real run's slices.json.
import { cpSync, mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { estimateSize, runProcess } from '@lamina/pipeline';
import { openSegy, writeSegy } from '@lamina/radar-data';
import { checkSurvey, loadSite, pointToWgs84, resolveCrs } from '@lamina/site';
import { simulateScenarioFile } from '@lamina/simulate';

const repo = resolve(import.meta.dirname, '..');
let work: string;
let site: string;

beforeAll(async () => {
  work = mkdtempSync(join(tmpdir(), 'lamina-preflight-'));
  site = join(work, 'site');
  await simulateScenarioFile(join(repo, 'test/fixtures/tiny-scenario.json'), site);
});
afterAll(() => rmSync(work, { recursive: true, force: true }));

/** runProcess that must fail before pass 1: the message; no progress was reported and nothing written. */
async function refused(siteDir: string, options: Parameters<typeof runProcess>[2] = {}): Promise<string> {
  const parent = mkdtempSync(join(work, 'out-'));
  const stages: string[] = [];
  const t0 = performance.now();
  try {
    await runProcess(siteDir, join(parent, 'out'), { threads: 0, ...options, onProgress: (s) => stages.push(s) });
  } catch (e) {
    expect((e as Error).name, String(e)).toBe('InputError');
    expect(stages, 'refused before any line was processed').toEqual([]);
    expect(readdirSync(parent), 'nothing written').toEqual([]);
    console.log(`refused in ${(performance.now() - t0).toFixed(0)} ms: ${(e as Error).message}`);
    return (e as Error).message;
  }
  throw new Error('expected an InputError');
}

describe('lamina process: checks before pass 1', () => {
  it('the issue 16 case: a line in degrees (scalar -10000) in a UTM site is refused naming the file and traces', async () => {
    const bad = join(work, 'degrees');
    cpSync(site, bad, { recursive: true });
    const json = JSON.parse(readFileSync(join(bad, 'site.json'), 'utf8')) as { lines: { file: string; start?: unknown; positions?: unknown }[] };
    const line = json.lines.filter((l) => !l.start && !l.positions)[1]!; // a line positioned by its headers
    const file = join(bad, line.file);
    const r = await openSegy(file, {});
    const n = r.nTraces;
    const h = await r.readTraceHeaders(0, n);
    const data = await r.readTraces(0, n);
    const spec = { nSamples: r.nSamples, dtNs: r.dtNs };
    await r.close();
    // the same traces, their positions given as the GPS's lon/lat with scalar -10000 (1e-4 degrees)
    const crs = resolveCrs('EPSG:32617');
    const lon = new Float64Array(n);
    const lat = new Float64Array(n);
    for (let t = 0; t < n; t++) [lon[t], lat[t]] = pointToWgs84(crs, h.cdpX[t]!, h.cdpY[t]!);
    await writeSegy(file, { ...spec, coordinateScalar: -10000, traces: { data, x: lon, y: lat } });
    const m = await refused(bad);
    expect(m).toContain(line.file);
    expect(m).toMatch(/look like degrees .* at traces 1\.\.\d+; reproject them$/);
  });

  it('a run that cannot fit is refused at once with the numbers and the option to change', async () => {
    expect(await refused(site, { cellSizeM: 1e-4 })).toMatch(/site\.json: expected a grid of at most 4e\+8 cells, found that the lines need a grid of \d+ x \d+ cells of 0\.0001 m .*choose a larger --cell-size or split the site with `lamina tiles`$/);
    expect(await refused(site, { cellSizeM: -1 })).toBe('command line: --cell-size: expected a positive number of metres, found -1');
    expect(await refused(site, { sliceOverlap: 1 })).toBe('command line: --slice-overlap: expected a fraction from 0 to 0.9, found 1');
    expect(await refused(site, { sliceThicknessM: 1e-4 })).toMatch(/^command line: --slice-thickness: expected slices at least one sample deep \(at most 320 slices from records of 320 samples\), found \d+ slices; choose a thicker --slice-thickness/);
    expect(await refused(site, { memoryBytes: 2 ** 20 })).toMatch(/site\.json: expected a run that fits in memory \(1 MiB\), found that a grid of .* and \d+ slices need about .*; choose a larger --cell-size/);
    expect(await refused(site, { freeBytes: 1000 })).toMatch(/out: expected room for the run's files \(up to .* for \d+ traces, a grid of .* and \d+ slices\), found 1 KiB free on its filesystem; free space, write elsewhere/);
  });

  it('the estimate from headers matches the grid and slices of a real run', async () => {
    const out = join(work, 'run');
    await runProcess(site, out, { threads: 0 });
    const s = await loadSite(site);
    const est = estimateSize(s, await checkSurvey(s));
    const real = JSON.parse(readFileSync(join(out, 'slices.json'), 'utf8')) as { width: number; height: number; cellSize: number; slices: unknown[] };
    // the cell size comes from the line spacing of the positions kept 0.1 m apart: within 2 %
    expect(est.cellSizeM).toBeCloseTo(real.cellSize, 2);
    expect(Math.abs(est.width - real.width)).toBeLessThanOrEqual(2);
    expect(Math.abs(est.height - real.height)).toBeLessThanOrEqual(2);
    console.log(`estimate ${JSON.stringify(est)}; real ${real.width} x ${real.height} cells of ${real.cellSize} m, ${real.slices.length} slices`);
    // slice count: about record time x frequency whatever the velocity. Time-zero is picked from the
    // samples in pass 1, so the estimate takes it as 0: an upper bound, by about t0 x f slices (5 ns x 0.4 GHz)
    expect(est.slices).toBeGreaterThanOrEqual(real.slices.length);
    expect(est.slices).toBeLessThanOrEqual(real.slices.length + 3);
    const tif = readdirSync(out).includes('slices.tif') ? readFileSync(join(out, 'slices.tif')).length : 0;
    expect(est.diskBytes).toBeGreaterThan(tif);
  });
});
