import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { checkContract, radargramIndexSchema } from '@lamina/contracts';
import { pointToWgs84, resolveCrs } from '@lamina/site';
import { round, writeRadargram, writeRadargramIndex } from '../src/outputs';

const dir = mkdtempSync(join(tmpdir(), 'lamina-radargrams-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** A line whose arrays are views at an offset into larger buffers (as a tile's piece of its context is). */
function line(id: string, nTraces: number, nSamples: number) {
  const data = Float32Array.from({ length: (nTraces + 2) * nSamples }, (_, i) => Math.sin(i) * 1e3).subarray(nSamples, (nTraces + 1) * nSamples);
  const x = Float64Array.from({ length: nTraces }, (_, i) => 512000.123456789 + i * 0.05);
  const y = Float64Array.from({ length: nTraces }, (_, i) => 4301000.987654321 - i * 0.01);
  return { id, nSamples, nTraces, dtNs: 0.1, timeZeroNs: 6.25, data, x, y };
}

describe('radargrams', () => {
  it('keeps every traceStep-th trace, and the index gives each kept trace its WGS84 position (proj4, 8 decimals)', async () => {
    const crs = resolveCrs('EPSG:32617');
    const lines = [line('a', 7, 5), line('b b', 4, 3)];
    // at most 3 traces of line a (every third: 0, 3, 6), every trace of line b
    const entries = [await writeRadargram(dir, lines[0]!, 3), await writeRadargram(dir, lines[1]!)];
    await writeRadargramIndex(dir, entries, (x, y) => pointToWgs84(crs, x, y));
    const index = checkContract(radargramIndexSchema, JSON.parse(readFileSync(join(dir, 'radargrams/index.json'), 'utf8')), 'index.json');
    expect(index.lines.map((l) => [l.id, l.file, l.nTraces, l.traceStep])).toEqual([
      ['a', 'radargrams/a.f32', 3, 3],
      ['b b', 'radargrams/b_b.f32', 4, 1],
    ]);
    for (const [k, l] of lines.entries()) {
      const e = index.lines[k]!;
      const kept = Array.from({ length: e.nTraces }, (_, j) => j * e.traceStep);
      const bytes = readFileSync(join(dir, e.file));
      const samples = new Float32Array(bytes.buffer, bytes.byteOffset, bytes.byteLength / 4);
      expect([...samples]).toEqual(kept.flatMap((t) => [...l.data.subarray(t * l.nSamples, (t + 1) * l.nSamples)]));
      expect([e.x, e.y]).toEqual([kept.map((t) => l.x[t]), kept.map((t) => l.y[t])]);
      const wgs = kept.map((t) => pointToWgs84(crs, l.x[t]!, l.y[t]!));
      expect([e.lon, e.lat]).toEqual([wgs.map((p) => round(p[0], 8)), wgs.map((p) => round(p[1], 8))]);
      expect([e.nSamples, e.dtNs, e.timeZeroNs]).toEqual([l.nSamples, l.dtNs, l.timeZeroNs]);
    }
    expect(readdirSync(join(dir, 'radargrams')).sort()).toEqual(['a.f32', 'b_b.f32', 'index.json']);
  });
});
