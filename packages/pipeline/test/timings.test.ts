import { describe, expect, it } from 'vitest';
import { addParts, formatTimings, StageTimer, timed, type PartTimes } from '../src/timings';

const busy = (ms: number) => {
  const end = performance.now() + ms;
  while (performance.now() < end);
};

describe('stage timers', () => {
  it('add up a stage timed several times, keep first-run order, and leave the rest to (other)', async () => {
    const t = new StageTimer();
    t.time('b', () => busy(5));
    await t.time('a', async () => busy(5));
    const stop = t.start('b');
    busy(5);
    stop();
    busy(3);
    const r = t.result(2);
    expect(r.stages.map((s) => s.stage)).toEqual(['b', 'a']);
    expect(r.stages[0]!.seconds).toBeGreaterThanOrEqual(0.01);
    const timed_ = r.stages.reduce((a, s) => a + s.seconds, 0);
    expect(r.totalSeconds).toBeGreaterThanOrEqual(timed_ + 0.003);
    const table = formatTimings(r);
    // the shares of the stages and (other) make the whole run
    const shares = [...table.matchAll(/^(?:a|b|\(other\))\s+\d+\.\d\d\s+(\d+\.\d)%$/gm)].map((m) => Number(m[1]));
    expect(shares).toHaveLength(3);
    expect(shares.reduce((a, b) => a + b, 0)).toBeCloseTo(100, 0);
  });

  it('sums per-line parts across lines (as the workers report them)', () => {
    const total: PartTimes = {};
    for (let k = 0; k < 3; k++) {
      const line: PartTimes = {};
      timed(line, 'read', () => busy(1));
      addParts(total, line);
    }
    expect(Object.keys(total)).toEqual(['read']);
    expect(total.read).toBeGreaterThanOrEqual(3);
  });
});
