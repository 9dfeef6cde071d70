import { PYTHON } from '@lamina/test-utils';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeSegy, type RadarLine } from '@lamina/radar-data';
import { loadSite, pointToWgs84, readLine, resolveCrs, type Site } from '@lamina/site';
import { LINE_BYTES_PER_SAMPLE, ownerTile, readTilesManifest, tracesInBox, writeTiles, type TilesManifest } from '../src';

// A small site written here (seeded, no committed fixture): three 30 m lines crossing a 2 x 2 grid of
// 20 m tiles, one positioned by trace headers, one by start/end, one by a CSV of fixes, with a GPS offset
// so that a piece that re-applied the offset twice would show; two plan features, one far away.
const E0 = 500010;
const N0 = 3900010;
let root: string;
let siteDir: string;
let outDir: string;
let site: Site;
let manifest: TilesManifest;
const originals = new Map<string, RadarLine>();

function samples(n: number, ns: number, seed: number): Float32Array {
  const d = new Float32Array(n * ns);
  for (let i = 0; i < d.length; i++) d[i] = Math.sin(i * 0.37 + seed) * 1000 + (i % ns);
  return d;
}

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'lamina-tiles-'));
  siteDir = join(root, 'site');
  outDir = join(root, 'tiles');
  mkdirSync(join(siteDir, 'lines'), { recursive: true });
  const n = 301; // 30 m at 0.1 m
  const ns = 32;
  const xs = Float64Array.from({ length: n }, (_, i) => E0 + i * 0.1);
  await writeSegy(join(siteDir, 'lines/a.sgy'), { nSamples: ns, dtNs: 0.1, traces: { data: samples(n, ns, 1), x: xs, y: new Float64Array(n).fill(N0 + 5) } });
  await writeSegy(join(siteDir, 'lines/b.sgy'), { nSamples: ns, dtNs: 0.1, traces: { data: samples(n, ns, 2), x: new Float64Array(n), y: new Float64Array(n) } });
  await writeSegy(join(siteDir, 'lines/c.sgy'), { nSamples: ns, dtNs: 0.1, traces: { data: samples(n, ns, 3), x: new Float64Array(n), y: new Float64Array(n) } });
  // diagonal line by CSV fixes every 10 traces (the site package interpolates between fixes)
  const csv = ['trace,x,y'];
  for (let t = 1; t <= n; t += 10) csv.push(`${t},${E0 + 2 + (t - 1) * 0.08},${N0 + 1 + (t - 1) * 0.06}`);
  writeFileSync(join(siteDir, 'lines/c.csv'), csv.join('\n') + '\n');
  const [lon, lat] = pointToWgs84(resolveCrs('EPSG:32617'), E0 + 5, N0 + 8);
  writeFileSync(
    join(siteDir, 'plan.geojson'),
    JSON.stringify({
      type: 'FeatureCollection',
      features: [
        { type: 'Feature', properties: { kind: 'post', id: 'near' }, geometry: { type: 'Point', coordinates: [lon, lat] } },
        { type: 'Feature', properties: { kind: 'tree', id: 'far' }, geometry: { type: 'Point', coordinates: [lon + 0.004, lat + 0.003] } },
      ],
    }),
  );
  writeFileSync(
    join(siteDir, 'site.json'),
    JSON.stringify({
      name: 'tiles-test',
      crs: 'EPSG:32617',
      antenna: { frequencyMHz: 400, separationM: 0.16, gpsOffset: { alongM: 0.3, acrossM: 0.1 } },
      plan: 'plan.geojson',
      lines: [
        { id: 'a', file: 'lines/a.sgy' },
        { id: 'b', file: 'lines/b.sgy', start: [E0 + 15, N0 - 5], end: [E0 + 15, N0 + 25] },
        { id: 'c', file: 'lines/c.sgy', positions: 'lines/c.csv' },
      ],
    }),
  );
  site = await loadSite(siteDir);
  for (const l of site.lines) originals.set(l.id, await readLine(site, l));
  manifest = await writeTiles(siteDir, outDir, { sizeM: 20, overlapM: 2 });
}, 60_000);

afterAll(() => rmSync(root, { recursive: true, force: true }));

describe('tracesInBox', () => {
  it('grows each run by one trace and merges touching runs', () => {
    const x = [0, 1, 2, 3, 4, 5, 6, 7];
    const y = x.map(() => 0);
    expect(tracesInBox(x, y, [2, -1, 3, 1])).toEqual([[1, 4]]);
    expect(tracesInBox(x, y, [-1, -1, 10, 1])).toEqual([[0, 7]]);
    expect(tracesInBox([0, 5, 0, 5], [0, 0, 0, 0], [4, -1, 6, 1])).toEqual([[0, 3]]);
    expect(tracesInBox(x, y, [20, 20, 30, 30])).toEqual([]);
  });
});

describe('writeTiles', () => {
  it('writes a manifest and a loadable site per tile', async () => {
    expect(readdirSync(outDir).sort()).toEqual(['tiles.json', ...manifest.tiles.map((t) => t.dir)].sort());
    const m = await readTilesManifest(outDir);
    expect(m).toEqual(manifest);
    expect(manifest.tiles.length).toBeGreaterThanOrEqual(2);
    for (const t of manifest.tiles) {
      const s = await loadSite(join(outDir, t.dir));
      expect(s.crs.input).toBe('EPSG:32617');
      expect(s.antenna).toEqual(site.antenna);
      expect(s.lines.map((l) => l.id)).toEqual(t.lines.map((l) => l.id));
      expect(t.command).toBe(`lamina process ${t.dir} --out ${t.dir}-out`);
    }
  });

  it('puts every trace of the site in at least one tile, with its samples and position unchanged', async () => {
    const covered = new Map<string, Uint8Array>();
    for (const [id, l] of originals) covered.set(id, new Uint8Array(l.nTraces));
    for (const t of manifest.tiles) {
      const s = await loadSite(join(outDir, t.dir));
      for (const [k, src] of s.lines.entries()) {
        const entry = t.lines[k]!;
        const orig = originals.get(entry.source)!;
        const piece = await readLine(s, src);
        expect(piece.nTraces).toBe(entry.last - entry.first + 1);
        expect(piece.data).toEqual(orig.data.subarray(entry.first * orig.nSamples, (entry.last + 1) * orig.nSamples));
        for (let i = 0; i < piece.nTraces; i++) {
          // positions worked out for the whole file, then cut: the same numbers
          expect(piece.x[i]).toBe(orig.x[entry.first + i]);
          expect(piece.y[i]).toBe(orig.y[entry.first + i]);
          covered.get(entry.source)![entry.first + i] = 1;
        }
        const whole = entry.first === 0 && entry.last === orig.nTraces - 1;
        expect(entry.traces).toEqual(whole ? undefined : [entry.first, entry.last]);
      }
    }
    for (const [id, c] of covered) expect(c.every((v) => v === 1), `line ${id}`).toBe(true);
  });

  it('gives every trace an owner tile whose bounds hold it; pieces stay within bounds but for one trace each end', () => {
    for (const l of originals.values()) {
      for (let i = 0; i < l.nTraces; i++) {
        const t = ownerTile(manifest, l.x[i]!, l.y[i]!);
        expect(t).toBeDefined();
        const [x0, y0, x1, y1] = t!.core;
        expect(l.x[i]! >= x0 && l.x[i]! < x1 && l.y[i]! >= y0 && l.y[i]! < y1).toBe(true);
      }
    }
    for (const t of manifest.tiles) {
      const [x0, y0, x1, y1] = t.bounds;
      for (const e of t.lines) {
        const l = originals.get(e.source)!;
        for (let i = e.first + 1; i < e.last; i++) expect(l.x[i]! >= x0 && l.x[i]! <= x1 && l.y[i]! >= y0 && l.y[i]! <= y1).toBe(true);
      }
    }
  });

  it('processes a piece with its whole line by default; with a line context, with the traces that close along it', async () => {
    // whole: the line as the site uses it, so line-wide steps (time-zero, mean background, migration) are the untiled run's
    let pieces = 0;
    for (const t of manifest.tiles) {
      for (const e of t.lines.filter((l) => l.traces)) {
        expect(e.context).toEqual([0, originals.get(e.source)!.nTraces - 1]);
        pieces++;
      }
      const s = await loadSite(join(outDir, t.dir));
      for (const l of s.lines) expect(l.context).toEqual(t.lines.find((e) => e.id === l.id)!.context);
    }
    expect(pieces).toBeGreaterThan(0);
    // line a runs east at 0.1 m a trace: 2.95 m of context is 29 traces beyond each end (less at the line's ends)
    const bounded = await writeTiles(siteDir, join(root, 'bounded'), { sizeM: 20, overlapM: 2, lineContextM: 2.95 });
    expect(bounded.lineContextM).toBe(2.95);
    const n = originals.get('a')!.nTraces;
    const a = bounded.tiles.flatMap((t) => t.lines.filter((l) => l.source === 'a' && l.traces));
    expect(a.length).toBeGreaterThan(1);
    for (const e of a) expect(e.context).toEqual([Math.max(0, e.first - 29), Math.min(n - 1, e.last + 29)]);
    rmSync(join(root, 'bounded'), { recursive: true, force: true });
    // a line whose processing needs more than the line memory (LINE_BYTES_PER_SAMPLE x traces x samples)
    // is processed in that many traces around each piece: 250 traces of 32 samples here
    const capped = await writeTiles(siteDir, join(root, 'capped'), { sizeM: 20, overlapM: 2, lineMemoryMiB: (250 * LINE_BYTES_PER_SAMPLE * 32) / 2 ** 20 });
    expect(capped.lineMemoryMiB).toBeCloseTo(0.48828125, 10);
    for (const e of capped.tiles.flatMap((t) => t.lines.filter((l) => l.traces))) {
      const [c0, c1] = e.context!;
      expect(c1 - c0 + 1).toBe(Math.max(250, e.last - e.first + 1));
      expect(c0 <= e.first && c1 >= e.last && c0 >= 0 && c1 < n).toBe(true);
      // centred on the piece unless a line end is nearer
      if (c0 > 0 && c1 < n - 1) expect(Math.abs(e.first - c0 - (c1 - e.last))).toBeLessThanOrEqual(1);
    }
    rmSync(join(root, 'capped'), { recursive: true, force: true });
  });

  it('keeps plan features near a tile and drops far ones', async () => {
    for (const t of manifest.tiles) {
      const s = await loadSite(join(outDir, t.dir));
      expect(s.plan.map((f) => f.id)).not.toContain('far');
      expect(s.plan.length).toBe(t.planFeatures);
    }
    expect(manifest.tiles.some((t) => t.planFeatures === 1)).toBe(true);
  });

  it('a piece is a trace range of the original file: segyio reads the same samples there', () => {
    // Reference: Debian's python3-segyio (1.8) reading the original file at the piece's first trace.
    const t = manifest.tiles.find((x) => x.lines.some((l) => l.traces))!;
    const e = t.lines.find((l) => l.traces)!;
    const file = join(outDir, t.dir, e.file);
    const py = 'import segyio,sys\nwith segyio.open(sys.argv[1], ignore_geometry=True) as f:\n  print(f.tracecount, float(f.trace[int(sys.argv[2])][5]))';
    const r = spawnSync(PYTHON, ['-c', py, file, String(e.traces![0])], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const [count, s5] = r.stdout.trim().split(' ').map(Number);
    const orig = originals.get(e.source)!;
    expect(count).toBe(orig.nTraces);
    expect(s5).toBeCloseTo(orig.data[e.first * orig.nSamples + 5]!, 3);
  });

  it('refers to the original files for every line and piece, relative to the tile, and copies no SEG-Y', async () => {
    for (const t of manifest.tiles) {
      for (const l of t.lines) {
        expect(l.file.startsWith('..')).toBe(true);
        expect(existsSync(join(outDir, t.dir, l.file))).toBe(true);
      }
      expect(readdirSync(join(outDir, t.dir), { recursive: true }).filter((f) => String(f).endsWith('.sgy'))).toEqual([]);
    }
  });

  it('refuses a bad size or overlap with one message and writes nothing', async () => {
    const out = join(root, 'refused');
    await expect(writeTiles(siteDir, out, { sizeM: 0 })).rejects.toThrow('tiles options: size: expected a tile size in m > 0, found 0');
    await expect(writeTiles(siteDir, out, { sizeM: 10, overlapM: 6 })).rejects.toThrow('tiles options: overlap: expected an overlap in m >= 0 and below half the tile size (5), found 6');
    await expect(writeTiles(siteDir, out, { sizeM: 20, lineContextM: -1 })).rejects.toThrow('tiles options: lineContext: expected a line context in m >= 0, found -1');
    expect(existsSync(out)).toBe(false);
    expect(readdirSync(dirname(out)).some((f) => f.startsWith('.lamina-stage'))).toBe(false);
  });
});
