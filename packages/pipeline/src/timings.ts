/**
 * The pipeline's own stage timers (`lamina process --timings`, `pnpm bench process`). Stages are timed
 * on the main thread by wall clock; the per-line work inside the two passes runs on worker threads, so
 * it is also summed per part over all lines (thread-seconds), which says what the passes spend time on.
 */
export interface ProcessTimings {
  /** Wall-clock seconds of each stage, in the order they first ran. */
  stages: { stage: string; seconds: number }[];
  /** Wall-clock seconds of the whole run. */
  totalSeconds: number;
  /** Thread-seconds of each part of the per-line work, summed over lines (on `threads` threads). */
  lineWork: { part: string; seconds: number }[];
  threads: number;
}

/** Milliseconds per part, added up (per-line work parts: a plain object so it crosses the worker boundary). */
export type PartTimes = Record<string, number>;

export function addParts(into: PartTimes, from: PartTimes): void {
  for (const [k, v] of Object.entries(from)) into[k] = (into[k] ?? 0) + v;
}

/** Times `fn` (sync or async) and adds its milliseconds to `into[part]`. */
export function timed<T>(into: PartTimes, part: string, fn: () => T): T {
  const t0 = performance.now();
  const add = () => (into[part] = (into[part] ?? 0) + performance.now() - t0);
  const r = fn();
  if (r instanceof Promise) return r.finally(add) as T;
  add();
  return r;
}

export class StageTimer {
  private readonly started = performance.now();
  private readonly stageMs: PartTimes = {};
  readonly lineMs: PartTimes = {};

  /** Times `fn` as (part of) `stage`; a stage timed several times adds up. */
  time<T>(stage: string, fn: () => T): T {
    return timed(this.stageMs, stage, fn);
  }

  /** Starts timing `stage` (for code that does not fit in one function); call the result to stop. */
  start(stage: string): () => void {
    const t0 = performance.now();
    return () => {
      this.stageMs[stage] = (this.stageMs[stage] ?? 0) + performance.now() - t0;
    };
  }

  result(threads: number): ProcessTimings {
    const s = (ms: number) => ms / 1000;
    return {
      stages: Object.entries(this.stageMs).map(([stage, ms]) => ({ stage, seconds: s(ms) })),
      totalSeconds: s(performance.now() - this.started),
      lineWork: Object.entries(this.lineMs).map(([part, ms]) => ({ part, seconds: s(ms) })),
      threads,
    };
  }
}

/** The timings as a text table: seconds and share of the run per stage, then the per-line work. */
export function formatTimings(t: ProcessTimings): string {
  const rows: string[] = [];
  const pct = (x: number, of: number) => (of > 0 ? `${((100 * x) / of).toFixed(1)}%` : '-');
  const w = Math.max(28, ...t.stages.map((r) => r.stage.length), ...t.lineWork.map((r) => r.part.length + 2));
  rows.push(`${'stage'.padEnd(w)} ${'s'.padStart(8)} ${'share'.padStart(7)}`);
  for (const r of t.stages) rows.push(`${r.stage.padEnd(w)} ${r.seconds.toFixed(2).padStart(8)} ${pct(r.seconds, t.totalSeconds).padStart(7)}`);
  const other = t.totalSeconds - t.stages.reduce((a, r) => a + r.seconds, 0);
  rows.push(`${'(other)'.padEnd(w)} ${other.toFixed(2).padStart(8)} ${pct(other, t.totalSeconds).padStart(7)}`);
  rows.push(`${'total'.padEnd(w)} ${t.totalSeconds.toFixed(2).padStart(8)} ${'100.0%'.padStart(7)}`);
  if (t.lineWork.length > 0) {
    const sum = t.lineWork.reduce((a, r) => a + r.seconds, 0);
    rows.push('', `per-line work in the two passes, thread-seconds on ${t.threads > 0 ? `${t.threads} worker thread(s)` : 'the main thread'}:`);
    for (const r of t.lineWork) rows.push(`  ${r.part.padEnd(w - 2)} ${r.seconds.toFixed(2).padStart(8)} ${pct(r.seconds, sum).padStart(7)}`);
  }
  return rows.join('\n');
}
