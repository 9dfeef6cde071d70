import { spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { formatSummary } from '../../../apps/cli/src/commands/info';
import { loadSite, summarizeSite } from '../src';

// `lamina info` end to end (apps/cli/src/commands/info.ts) on the corpus: exit codes and one-line errors.
const root = join(import.meta.dirname, '../../..');
const bad = join(import.meta.dirname, 'bad');
const lamina = (...args: string[]) => spawnSync(process.execPath, ['--import', 'tsx', join(root, 'apps/cli/src/main.ts'), ...args], { cwd: root, encoding: 'utf8' });
const listing = (d: string) => readdirSync(d, { recursive: true }).map(String).sort();

describe('lamina info', () => {
  it('bad input: one line on stderr naming the file, exit 2, nothing written', () => {
    const dir = join(bad, 'line-one-trace'); // a valid manifest; its one line is the fault
    const before = listing(bad);
    const one = lamina('info', dir, '--json');
    expect(one.status).toBe(2);
    expect(one.stdout).toBe('');
    expect(one.stderr.trim()).toBe('error: packages/site/test/bad/line-one-trace/l01.sgy: expected a line of at least 2 traces, found 1');
    expect(listing(bad)).toEqual(before);
  });

  it('prints lines, extent and plan of a good site', async () => {
    // The corpus' shared line is valid: 20 traces, 0.5 m apart eastward at (500000, 3900000) in EPSG:32617.
    const tmp = mkdtempSync(join(tmpdir(), 'lamina-info-'));
    cpSync(join(bad, '_shared'), join(tmp, '_shared'), { recursive: true });
    const dir = join(tmp, 'site');
    mkdirSync(dir);
    writeFileSync(join(dir, 'site.json'), JSON.stringify({ name: 'ok', crs: 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, lines: [{ file: '../_shared/l01.sgy' }] }));
    const j = lamina('info', dir, '--json');
    expect(j.status, j.stderr).toBe(0);
    const s = JSON.parse(j.stdout) as { totalTraces: number; lines: { lengthM: number; samples: number }[]; extent: { crs: number[]; wgs84: number[] } };
    expect(s.totalTraces).toBe(20);
    expect(s.lines[0]?.lengthM).toBeCloseTo(9.5, 6);
    expect(s.lines[0]?.samples).toBe(16);
    expect(s.extent.crs).toEqual([500000, 3900000, 500009.5, 3900000]);
    // UTM 17N central meridian is 81 W: easting 500000 lies on it.
    expect(s.extent.wgs84[0]).toBeCloseTo(-81, 9);
    const t = formatSummary(await summarizeSite(await loadSite(dir)));
    expect(t).toMatch(/lines {5}1, 20 traces, 9\.5 m surveyed/);
    expect(t).toMatch(/extent {4}EPSG:32617: x 500000\.00 \.\. 500009\.50, y 3900000\.00 \.\. 3900000\.00 m/);
    rmSync(tmp, { recursive: true, force: true });
  });
});
