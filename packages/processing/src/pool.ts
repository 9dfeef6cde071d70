import { availableParallelism } from 'node:os';
import { createPool } from '@lamina/runtime-files';
import type { RadarLine } from '@lamina/radar-data';
import { runRecipe, type Recipe, type RecipeContext, type RecipeResult, type RunOptions } from './recipe';

/** One line to process on a worker (the message recipe-worker.ts serves). */
export interface RecipeTask {
  line: RadarLine;
  recipe: Recipe;
  ctx: RecipeContext;
  options: RunOptions;
}

export interface PoolOptions {
  /** Worker threads. @default os.availableParallelism() */
  threads?: number;
}

export interface ProcessingPool {
  readonly size: number;
  /**
   * Runs `runRecipe` on a worker. The line's arrays are copied to the worker (set `transfer` to move
   * `line.data` instead, which detaches it here); results come back by transfer.
   */
  run(line: RadarLine, recipe: Recipe, ctx: RecipeContext, options?: RunOptions & { transfer?: boolean }): Promise<RecipeResult>;
  close(): Promise<void>;
}

/** The worker pool of @lamina/runtime-files running processing recipes; each worker takes one line at a time. */
export function createProcessingPool(options: PoolOptions = {}): ProcessingPool {
  const pool = createPool<RecipeTask, RecipeResult>(new URL('./recipe-worker.ts', import.meta.url), Math.max(1, options.threads ?? availableParallelism()));
  return {
    size: pool.size,
    run(line, recipe, ctx, opts = {}) {
      const { transfer, ...runOptions } = opts;
      const buf = line.data.buffer as ArrayBuffer;
      const movable = transfer && line.data.byteOffset === 0 && line.data.byteLength === buf.byteLength;
      return pool.run({ line, recipe, ctx, options: runOptions }, movable ? [buf] : []);
    },
    close: () => pool.close(),
  };
}

/**
 * Processes lines on `threads` worker threads (1: in this thread, no workers), results in input order.
 * Identical to `runRecipe` on each line in turn.
 */
export async function processLines(
  lines: readonly RadarLine[],
  recipe: Recipe,
  ctx: RecipeContext | ((line: RadarLine) => RecipeContext),
  options: RunOptions & PoolOptions = {},
): Promise<RecipeResult[]> {
  const { threads, ...runOptions } = options;
  const ctxOf = typeof ctx === 'function' ? ctx : () => ctx;
  const n = Math.min(threads ?? availableParallelism(), lines.length);
  if (n <= 1) return lines.map((l) => runRecipe(l, recipe, ctxOf(l), runOptions));
  const pool = createProcessingPool({ threads: n });
  try {
    return await Promise.all(lines.map((l) => pool.run(l, recipe, ctxOf(l), runOptions)));
  } finally {
    await pool.close();
  }
}

/** Runs one line on a one-off worker (for callers with their own scheduling). */
export async function processLineInWorker(line: RadarLine, recipe: Recipe, ctx: RecipeContext, options: RunOptions = {}): Promise<RecipeResult> {
  const pool = createProcessingPool({ threads: 1 });
  try {
    return await pool.run(line, recipe, ctx, options);
  } finally {
    await pool.close();
  }
}
