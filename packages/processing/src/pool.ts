import { availableParallelism } from 'node:os';
import type { Worker } from 'node:worker_threads';
import { startWorker } from '@lamina/runtime-files';
import { InputError } from '@lamina/errors';
import type { RadarLine } from '@lamina/radar-data';
import { runRecipe, type Recipe, type RecipeContext, type RecipeResult, type RunOptions } from './recipe';

export interface WorkerRequest {
  id: number;
  line: RadarLine;
  recipe: Recipe;
  ctx: RecipeContext;
  options: RunOptions;
}

export type WorkerReply =
  | { id: number; ok: true; result: RecipeResult }
  | {
      id: number;
      ok: false;
      error: { name: string; message: string; file?: string; detail?: string; field?: string; offset?: number; line?: number };
    };

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

/** A fixed pool of worker threads running processing recipes; each worker takes one line at a time. */
export function createProcessingPool(options: PoolOptions = {}): ProcessingPool {
  const size = Math.max(1, options.threads ?? availableParallelism());
  const workers: Worker[] = [];
  const idle: Worker[] = [];
  const queue: { req: WorkerRequest; transfer: ArrayBuffer[]; resolve: (r: RecipeResult) => void; reject: (e: unknown) => void }[] = [];
  const pending = new Map<number, { resolve: (r: RecipeResult) => void; reject: (e: unknown) => void; worker: Worker }>();
  let nextId = 1;
  let closed = false;

  const pump = () => {
    while (idle.length && queue.length) {
      const w = idle.pop() as Worker;
      const job = queue.shift()!;
      pending.set(job.req.id, { resolve: job.resolve, reject: job.reject, worker: w });
      w.postMessage(job.req, job.transfer);
    }
  };

  for (let i = 0; i < size; i++) {
    const w = startWorker(new URL('./worker.ts', import.meta.url));
    w.on('message', (msg: WorkerReply) => {
      const p = pending.get(msg.id);
      if (!p) return;
      pending.delete(msg.id);
      idle.push(w);
      if (msg.ok) p.resolve(msg.result);
      else {
        const e = msg.error;
        if (e.name === 'InputError' && e.file !== undefined) {
          p.reject(new InputError(e.file, e.detail ?? e.message, { field: e.field, offset: e.offset, line: e.line }));
        } else p.reject(Object.assign(new Error(e.message), { name: e.name }));
      }
      pump();
    });
    w.on('error', (err) => {
      for (const [id, p] of pending) {
        if (p.worker === w) {
          pending.delete(id);
          p.reject(err);
        }
      }
    });
    workers.push(w);
    idle.push(w);
  }

  return {
    size,
    run(line, recipe, ctx, opts = {}) {
      if (closed) return Promise.reject(new Error('processing pool is closed'));
      const { transfer, ...runOptions } = opts;
      const req: WorkerRequest = { id: nextId++, line, recipe, ctx, options: runOptions };
      const buf = line.data.buffer as ArrayBuffer;
      const movable = transfer && line.data.byteOffset === 0 && line.data.byteLength === buf.byteLength;
      return new Promise<RecipeResult>((resolve, reject) => {
        queue.push({ req, transfer: movable ? [buf] : [], resolve, reject });
        pump();
      });
    },
    async close() {
      closed = true;
      const gone = new Error('processing pool closed before the line was processed');
      for (const job of queue.splice(0)) job.reject(gone);
      for (const p of pending.values()) p.reject(gone);
      pending.clear();
      await Promise.all(workers.map((w) => w.terminate()));
    },
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
