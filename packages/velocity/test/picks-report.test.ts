import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { isInputError } from '@lamina/errors';
import { buildVelocityReport, fitManualPicks, lineHyperbolas, parsePicks, velocityJson, velocityJsonChunks, writeVelocityJson } from '../src';
import { bistatic, synthLine } from './synth';

const line = synthLine('L7', [{ x0: 4, z: 0.9, v: 0.11, amp: 1 }], { nTraces: 200, nSamples: 512, dtNs: 0.1, fMHz: 400 });

function expectInputError(fn: () => unknown, field: string | RegExp) {
  try {
    fn();
  } catch (e) {
    expect(isInputError(e)).toBe(true);
    if (isInputError(e)) {
      if (typeof field === 'string') expect(e.field).toBe(field);
      else expect(e.message).toMatch(field);
      expect(e.message.startsWith('picks.json')).toBe(true);
    }
    return;
  }
  throw new Error('expected an InputError');
}

describe('picks file', () => {
  const good = {
    hyperbolas: [
      {
        line: 'L7',
        picks: [60, 70, 80, 90, 100, 110].map((t) => ({ trace: t, timeNs: bistatic(t * 0.05 - 4, 0.9, 0.11, 0.15) })),
      },
    ],
  };

  it('parses and fits manual picks by trace or by offset', () => {
    const p = parsePicks(JSON.stringify(good), 'picks.json');
    const f = fitManualPicks(line, p.hyperbolas[0]!, 'picks.json', 0, { separationM: 0.15 });
    expect(f.source).toBe('manual');
    expect(f.velocityMPerNs).toBeCloseTo(0.11, 6);
    expect(f.depthM).toBeCloseTo(0.9, 6);
    expect(f.trace).toBe(80);
    const byOffset = { hyperbolas: [{ line: 'L7', picks: good.hyperbolas[0]!.picks.map((q) => ({ offsetM: q.trace * 0.05, timeNs: q.timeNs })) }] };
    const g = fitManualPicks(line, parsePicks(JSON.stringify(byOffset), 'picks.json').hyperbolas[0]!, 'picks.json', 0, { separationM: 0.15 });
    expect(g.velocityMPerNs).toBeCloseTo(0.11, 6);
  });

  it('names the JSON path of what is wrong', () => {
    expectInputError(() => parsePicks('{"hyperbolas": [', 'picks.json'), /expected JSON/);
    const noTime = structuredClone(good) as { hyperbolas: { picks: Record<string, unknown>[] }[] };
    delete noTime.hyperbolas[0]!.picks[2]!.timeNs;
    expectInputError(() => parsePicks(JSON.stringify(noTime), 'picks.json'), 'hyperbolas[0].picks[2].timeNs');
    const both = structuredClone(good) as { hyperbolas: { picks: Record<string, unknown>[] }[] };
    both.hyperbolas[0]!.picks[1]!.offsetM = 1;
    expectInputError(() => parsePicks(JSON.stringify(both), 'picks.json'), 'hyperbolas[0].picks[1]');
    const few = { hyperbolas: [{ line: 'L7', picks: good.hyperbolas[0]!.picks.slice(0, 3) }] };
    expectInputError(() => parsePicks(JSON.stringify(few), 'picks.json'), 'hyperbolas[0].picks');
    const far = structuredClone(good);
    far.hyperbolas[0]!.picks[0]!.trace = 500;
    expectInputError(() => fitManualPicks(line, parsePicks(JSON.stringify(far), 'picks.json').hyperbolas[0]!, 'picks.json', 0), 'hyperbolas[0].picks[0].trace');
  });
});

describe('velocity.json', () => {
  it('carries the fixed names of the contract (DEVELOPERS.md) and is written atomically', async () => {
    const fits = lineHyperbolas(line, { separationM: 0.15, frequencyMHz: 400 });
    expect(fits.length).toBe(1);
    const report = buildVelocityReport(fits, { separationM: 0.15 });
    const dir = mkdtempSync(join(tmpdir(), 'lamina-velocity-'));
    const file = join(dir, 'velocity.json');
    await writeVelocityJson(file, report);
    const j = JSON.parse(readFileSync(file, 'utf8'));
    for (const k of ['velocityMPerNs', 'permittivity', 'spreadMPerNs', 'fitCount', 'moisture']) expect(j.site).toHaveProperty(k);
    expect(j.model.kind).toBe('constant');
    for (const k of ['topM', 'bottomM', 'velocityMPerNs', 'permittivity']) expect(j.model.layers[0]).toHaveProperty(k);
    for (const k of ['line', 'trace', 'x', 'y', 't0Ns', 'velocityMPerNs', 'permittivity', 'depthM', 'uncertaintyMPerNs', 'origin']) expect(j.hyperbolas[0]).toHaveProperty(k);
    expect(j.hyperbolas[0].line).toBe('L7');
    expect(j.site.velocityMPerNs).toBeCloseTo(0.11, 3);
  });

  it('written in pieces (velocityJsonChunks) is the same text as JSON.stringify(report, null-for-non-finite, 2)', () => {
    const fits = lineHyperbolas(line, { separationM: 0.15, frequencyMHz: 400 });
    const report = buildVelocityReport([...fits, ...fits.map((f) => ({ ...f, trace: f.trace + 1, rmsNs: Number.NaN }))], { separationM: 0.15 });
    expect(report.hyperbolas[0]!.picks!.offsetM.length).toBeGreaterThan(3);
    for (const r of [report, { ...report, hyperbolas: [] }, { ...report, site: { ...report.site, note: undefined } }]) {
      // JSON.stringify is the reference (ECMA-262, JSON.stringify with a replacer and an indent of 2)
      const want = JSON.stringify(r, (_k, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? null : v), 2) + '\n';
      expect([...velocityJsonChunks(r)].join('')).toBe(want);
      expect(velocityJson(r)).toBe(want);
    }
  });
});

