import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { defaultRecipe, withAirEvents, type Recipe } from '@lamina/processing';
import { lineSpillPath, readLineSpill, removeLineSpills, writeLineSpill } from '../src/line-spill';
import { pass2Steps } from '../src/line-task';

const dir = mkdtempSync(join(tmpdir(), 'lamina-line-spill-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function line(id: string, nTraces: number, nSamples: number) {
  const data = Float32Array.from({ length: nTraces * nSamples }, (_, i) => Math.sin(i) * 1e3);
  const x = Float64Array.from({ length: nTraces }, (_, i) => 512000.123456789 + i * 0.05);
  const y = Float64Array.from({ length: nTraces }, (_, i) => 4301000.987654321 - i * 0.01);
  return { id, nSamples, nTraces, dtNs: 0.1, timeZeroNs: 6.25, data, x, y };
}

describe('pass 1 lines kept for pass 2', () => {
  it('round-trips every field bit for bit, with and without the line before background removal, and removes the file', async () => {
    for (const [i, id] of ['a', 'line with a long id ü'].entries()) {
      const l = line(id, 7 + i, 33);
      const before = { ...l, data: l.data.map((v) => v + 1) };
      const path = lineSpillPath(dir, i);
      await writeLineSpill(path, l, i === 0 ? before : undefined);
      const r = await readLineSpill(path);
      expect({ ...r.line, data: [...r.line.data], x: [...r.line.x], y: [...r.line.y] }).toEqual({ ...l, data: [...l.data], x: [...l.x], y: [...l.y] });
      if (i === 0) expect([...(r.before?.data ?? [])]).toEqual([...before.data]);
      else expect(r.before).toBeUndefined();
    }
    expect(readdirSync(join(dir, 'pass1-lines'))).toEqual([]);
    await removeLineSpills(dir);
    expect(readdirSync(dir)).toEqual([]);
  });

  it('pass 2 starts from pass 1 only when the steps that need the velocity come last', () => {
    const base = withAirEvents(defaultRecipe(400));
    // airEvents needs pass 1's air-velocity fits: pass 2 runs it too
    expect(pass2Steps(base)?.map((s) => s.step)).toEqual(['airEvents', 'migration']);
    const noMigration: Recipe = { steps: base.steps.filter((s) => s.step !== 'migration' && s.step !== 'airEvents') };
    expect(pass2Steps(noMigration)).toEqual([]);
    const envelopeLast: Recipe = { steps: [...base.steps, { step: 'envelope' }] };
    expect(pass2Steps(envelopeLast)?.map((s) => s.step)).toEqual(['airEvents', 'migration', 'envelope']);
    const airEarly: Recipe = { steps: [base.steps[0]!, { step: 'airEvents' }, ...base.steps.slice(1).filter((s) => s.step !== 'airEvents')] };
    expect(pass2Steps(airEarly)).toBeUndefined();
    const gainAfter: Recipe = { steps: [...base.steps, { step: 'gain', kind: 'agc' }] };
    expect(pass2Steps(gainAfter)).toBeUndefined();
  });
});
