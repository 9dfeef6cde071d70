// `lamina merge` of a survey in two directions: the one-line strip rule reads each direction's own
// slices (screening's CrossingLines), so the tiles write them beside their stacks (screen-lines.json
// `directions`) and the merge mosaics them. Checked: the mosaics of the four tiles' direction stacks
// equal, cell for cell, the stacks of one tile holding the whole survey (the untiled gridding), and the
// survey screened again gives the untiled run's anomalies, interfaces, forecast and targets byte for
// byte, as for one direction (test/batch-engines.test.ts). This small site has no one-line strip, so the
// rule's own effect is checked in packages/screening/test/crossing-lines.test.ts.
import { existsSync, readFileSync } from 'node:fs';
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { writeMosaic } from '../packages/tiles/src/merge/mosaic';
import { readMergeInputs } from '../packages/tiles/src/merge/inputs';
import { root, lamina, buildCli } from './built-cli';

let work: string;

beforeAll(async () => {
  work = await mkdtemp(join(tmpdir(), 'lamina-merge2-'));
  buildCli();
  await lamina('simulate', join(root, 'test/fixtures/tiny-two-directions.json'), '--out', join(work, 'site'));
  await lamina('velocity', join(work, 'site'), '--out', join(work, 'survey'));
  const velocity = join(work, 'survey', 'velocity.json');
  await lamina('process', join(work, 'site'), '--velocity', velocity, '--out', join(work, 'untiled'));
  await lamina('tiles', join(work, 'site'), '--size', '3', '--overlap', '1', '--velocity', velocity, '--out', join(work, 'tiles'));
  const manifest = JSON.parse(readFileSync(join(work, 'tiles', 'tiles.json'), 'utf8')) as { tiles: unknown[] };
  for (let i = 0; i < manifest.tiles.length; i++) await lamina('process-tile', join(work, 'tiles', 'tiles.json'), '--index', String(i), '-q');
  await lamina('merge', join(work, 'tiles'), '--out', join(work, 'merged'), '-q');
  // one tile holding the whole survey: its direction stacks are the untiled run's
  await lamina('tiles', join(work, 'site'), '--size', '100', '--velocity', velocity, '--out', join(work, 'whole'));
  await lamina('process-tile', join(work, 'whole', 'tiles.json'), '--index', '0', '-q');
}, 600_000);

describe('lamina merge of a survey in two directions', () => {
  it('the tiles keep each direction\'s own stack, and the merge gives the untiled run\'s objects byte for byte', () => {
    const tiles = JSON.parse(readFileSync(join(work, 'tiles', 'tiles.json'), 'utf8')) as { tiles: { dir: string }[] };
    const kept = tiles.tiles.map((t) => JSON.parse(readFileSync(join(work, 'tiles', `${t.dir}-out`, 'screen-lines.json'), 'utf8')) as { directions?: { azimuthDeg: number }[] });
    // every tile of this grid is crossed by lines of both directions: north (0) and east (90)
    for (const k of kept) expect(k.directions?.map((d) => Math.round(d.azimuthDeg)).sort((a, b) => a - b)).toEqual([0, 90]);
    for (const f of ['anomalies.geojson', 'interfaces.geojson', 'forecast.geojson', 'targets.csv']) expect(readFileSync(join(work, 'merged', f), 'utf8'), f).toBe(readFileSync(join(work, 'untiled', f), 'utf8'));
    for (const f of ['mosaic-direction-0.f32', 'mosaic-direction-1.f32']) expect(existsSync(join(work, 'merged', f)), f).toBe(false);
  });

  it('the mosaic of the tiles\' direction stacks is the whole survey\'s, cell for cell', async () => {
    const scratch = await mkdtemp(join(tmpdir(), 'lamina-mosaic2-'));
    const mosaic = await writeMosaic(await readMergeInputs(join(work, 'tiles', 'tiles.json')), scratch, scratch, { keep: true });
    const whole = JSON.parse(readFileSync(join(work, 'whole', 'tiles.json'), 'utf8')) as { tiles: { dir: string }[] };
    const wholeOut = join(work, 'whole', `${whole.tiles[0]!.dir}-out`);
    const wholeLines = JSON.parse(readFileSync(join(wholeOut, 'screen-lines.json'), 'utf8')) as { directions: { azimuthDeg: number; file: string }[] };
    const dirs = mosaic.raw!.directions!;
    expect(dirs).toHaveLength(2);
    const { width, height } = mosaic.json;
    const bands = mosaic.json.slices.length;
    for (const d of dirs) {
      const own = wholeLines.directions.find((w) => Math.abs(w.azimuthDeg - d.azimuthDeg) < 1)!;
      const b = readFileSync(join(wholeOut, own.file));
      const all = new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
      expect(all.length).toBe(width * height * bands);
      for (let k = 0; k < bands; k++) expect(Array.from(d.raw.readRows(k, 0, height) as Float32Array)).toEqual(Array.from(all.subarray(k * width * height, (k + 1) * width * height)));
    }
    mosaic.raw!.slices.remove();
    mosaic.raw!.before?.remove();
    for (const d of dirs) d.raw.remove();
  });
});
