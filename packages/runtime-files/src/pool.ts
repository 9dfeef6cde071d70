import { availableParallelism } from 'node:os';
import type { Worker } from 'node:worker_threads';
import { InputError } from '@lamina/errors';
import { startWorker } from './runtime-files';

/**
 * The one worker pool of the tool: a fixed set of threads running one task module (started by
 * `startWorker`, so from the build or from source alike). The module serves tasks with `serveTasks`:
 * it answers each `{ id, task }` message with `{ id, result }` or `{ id, error }`. A task goes to the
 * next idle worker, so uneven tasks balance; each `run` resolves with its own task's result, so callers
 * that collect results by task get the same answer on any number of threads.
 */
export interface Pool<T, R> {
  readonly size: number;
  /** Runs `task` on the next idle worker; `transfer` lists buffers to move rather than copy. */
  run(task: T, transfer?: ArrayBuffer[]): Promise<R>;
  /** Stops the workers; tasks not finished yet are rejected. */
  close(): Promise<void>;
}

/** An error as it crosses the thread boundary (InputError's fields kept, so it comes back as one). */
export interface SerialisedError {
  name: string;
  message: string;
  file?: string;
  field?: string;
  offset?: number;
  line?: number;
  detail?: string;
  stack?: string;
}

/** Worker threads when the caller names none: LAMINA_THREADS, else the cores, at most 8. */
export function defaultThreads(): number {
  const env = Number(process.env.LAMINA_THREADS);
  if (Number.isInteger(env) && env > 0) return env;
  return Math.max(1, Math.min(availableParallelism(), 8));
}

/** The worker's error on this side: an InputError again when it was one, else an Error of its name. */
export function reviveError(e: SerialisedError): Error {
  if (e.name === 'InputError' && e.file !== undefined && e.detail !== undefined) {
    const where: { field?: string; offset?: number; line?: number } = {};
    if (e.field !== undefined) where.field = e.field;
    if (e.offset !== undefined) where.offset = e.offset;
    if (e.line !== undefined) where.line = e.line;
    return new InputError(e.file, e.detail, where);
  }
  const err = new Error(e.message);
  err.name = e.name;
  if (e.stack) err.stack = e.stack;
  return err;
}

/** A pool of `size` workers running the task module `entry` (`new URL('./<name>.ts', import.meta.url)`). */
export function createPool<T, R>(entry: URL, size: number): Pool<T, R> {
  const pending = new Map<number, { resolve: (r: R) => void; reject: (e: Error) => void }>();
  const queue: { id: number; task: T; transfer: ArrayBuffer[] }[] = [];
  const idle: Worker[] = [];
  const busy = new Map<Worker, number>();
  let nextId = 0;
  let failed: Error | undefined;
  let closed = false;

  const dispatch = () => {
    while (idle.length > 0 && queue.length > 0) {
      const w = idle.pop()!;
      const job = queue.shift()!;
      busy.set(w, job.id);
      w.postMessage({ id: job.id, task: job.task }, job.transfer);
    }
  };

  const workers: Worker[] = [];
  for (let i = 0; i < Math.max(1, size); i++) {
    const w = startWorker(entry);
    w.on('message', (m: { id: number; result?: R; error?: SerialisedError }) => {
      const p = pending.get(m.id);
      pending.delete(m.id);
      busy.delete(w);
      idle.push(w);
      if (p) {
        if (m.error) p.reject(reviveError(m.error));
        else p.resolve(m.result as R);
      }
      dispatch();
    });
    w.on('error', (e) => {
      failed = e;
      const id = busy.get(w);
      if (id !== undefined) {
        pending.get(id)?.reject(e);
        pending.delete(id);
      }
    });
    workers.push(w);
    idle.push(w);
  }

  return {
    size: workers.length,
    run(task, transfer = []) {
      if (closed) return Promise.reject(new Error('the worker pool is closed'));
      if (failed) return Promise.reject(failed);
      const id = nextId++;
      const p = new Promise<R>((resolve, reject) => pending.set(id, { resolve, reject }));
      queue.push({ id, task, transfer });
      dispatch();
      return p;
    },
    async close() {
      closed = true;
      queue.length = 0;
      const gone = new Error('the worker pool was closed before the task finished');
      for (const p of pending.values()) p.reject(gone);
      pending.clear();
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}

/** Serve tasks inside a worker: call once from the task module. */
export async function serveTasks<T, R>(handle: (task: T) => Promise<{ result: R; transfer?: ArrayBuffer[] }> | { result: R; transfer?: ArrayBuffer[] }): Promise<void> {
  const { parentPort } = await import('node:worker_threads');
  if (!parentPort) throw new Error('serveTasks must run inside a worker thread');
  const port = parentPort;
  port.on('message', async (m: { id: number; task: T }) => {
    try {
      const { result, transfer } = await handle(m.task);
      port.postMessage({ id: m.id, result }, transfer ?? []);
    } catch (e) {
      const err = e as Error & Partial<SerialisedError>;
      const out: SerialisedError = { name: err.name ?? 'Error', message: err.message ?? String(e) };
      if (err.stack !== undefined) out.stack = err.stack;
      for (const k of ['file', 'field', 'offset', 'line', 'detail'] as const) if (err[k] !== undefined) (out as unknown as Record<string, unknown>)[k] = err[k];
      port.postMessage({ id: m.id, error: out });
    }
  });
}
