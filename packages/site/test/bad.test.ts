import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkPositions, defaultOpenSegy, loadSite, parsePositionsCsv, positionsFromFixes, readLine, readPlan, resolveCrs, shownPath, summarizeSite, type OpenSegy } from '../src';

// The corpus and its expected messages: test/bad/generate.ts (messages written from the format rules).
const bad = join(import.meta.dirname, 'bad');
interface Case { name: string; kind: 'site' | 'line' | 'info' | 'plan' | 'csv'; input: string; crs?: string; nTraces?: number; error: string }
const { cases } = JSON.parse(readFileSync(join(bad, 'cases.json'), 'utf8')) as { cases: Case[] };

const open: OpenSegy = defaultOpenSegy();

async function run(c: Case): Promise<void> {
  const input = join(bad, c.input);
  if (c.kind === 'site') {
    await loadSite(input);
  } else if (c.kind === 'line') {
    const site = await loadSite(input);
    for (const l of site.lines) await readLine(site, l, { open });
  } else if (c.kind === 'info') {
    await summarizeSite(await loadSite(input), { open });
  } else if (c.kind === 'plan') {
    await readPlan(input, shownPath(input), { crs: resolveCrs(c.crs ?? 'EPSG:32617') });
  } else {
    const name = shownPath(input);
    const p = positionsFromFixes(parsePositionsCsv(readFileSync(input, 'utf8'), name), c.nTraces ?? 0, name);
    checkPositions(p, resolveCrs(c.crs ?? 'EPSG:32617'), name, { what: 'CSV positions' });
  }
}

describe('bad-input corpus (test/bad/cases.json)', () => {
  it('has cases of every kind', () => {
    expect(cases.length).toBeGreaterThanOrEqual(40);
    for (const k of ['site', 'line', 'info', 'plan', 'csv']) expect(cases.some((c) => c.kind === k)).toBe(true);
  });
  for (const c of cases) {
    it(c.name, async () => {
      const dir = shownPath(join(bad, c.name));
      const expected = c.error.replaceAll('<dir>', dir);
      let err: unknown;
      try {
        await run(c);
      } catch (e) {
        err = e;
      }
      expect(err, 'expected an error').toBeInstanceOf(Error);
      expect((err as Error).name).toBe('InputError');
      expect((err as Error).message).toBe(expected);
    });
  }
});
