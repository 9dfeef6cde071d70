// Whole-folder fuzzing (issue 16): a hundred seeded cases of a tiny simulated site, damaged the ways field
// data is damaged, through process, export and the viewer API (test/fuzz/fuzz.ts); two of them through
// the CLI binary too. Every case ends in success or one input-error line naming a file, and a failed
// run leaves the output folder as it was. `pnpm fuzz` runs a thousand.
import { describe, expect, it } from 'vitest';
import { runFuzz } from './fuzz/fuzz';

describe('whole-folder fuzzing', () => {
  it('100 cases: no internal error, no partial output folder', async () => {
    const report = await runFuzz({ cases: 100, seed: 1, cliEvery: 50, log: (l) => console.log(l) });
    const { internal, ...counts } = report;
    console.log(JSON.stringify(counts));
    expect(internal.map((f) => `case ${f.case} (${f.stage}): ${f.message} <- ${f.mutations.join('; ')}`)).toEqual([]);
    expect(report.cases).toBe(100);
    // both outcomes are exercised: successful runs (export, viewer) and refusals
    expect(report.ok).toBeGreaterThan(5);
    expect(report.cases - report.ok).toBeGreaterThan(50);
    expect(report.cliRuns).toBe(2);
  }, 600_000);
});
