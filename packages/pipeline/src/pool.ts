import type { Worker } from 'node:worker_threads';
import { startWorker } from '@lamina/runtime-files';
import { availableParallelism } from 'node:os';

/**
 * A fixed pool of worker threads running one task module. The module (see `line-worker.ts`) listens for
 * `{ id, task }` messages and answers `{ id, result }` or `{ id, error }`. Results come back in task
 * order whatever order workers finish in, so a run on N threads equals the single-thread run.
 */
export interface Pool<T, R> {
  run(task: T, transfer?: ArrayBuffer[]): Promise<R>;
  close(): Promise<void>;
  readonly size: number;
}

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

export function defaultThreads(): number {
  const env = Number(process.env.LAMINA_THREADS);
  if (Number.isInteger(env) && env > 0) return env;
  return Math.max(1, Math.min(availableParallelism(), 8));
}

export function createPool<T, R>(entry: URL, size: number, revive: (e: SerialisedError) => Error): Pool<T, R> {
  const pending = new Map<number, { resolve: (r: R) => void; reject: (e: Error) => void }>();
  const queue: { id: number; task: T; transfer: ArrayBuffer[] }[] = [];
  const idle: Worker[] = [];
  const busy = new Map<Worker, number>();
  let nextId = 0;
  let failed: Error | undefined;

  const dispatch = () => {
    while (idle.length > 0 && queue.length > 0) {
      const w = idle.pop()!;
      const job = queue.shift()!;
      busy.set(w, job.id);
      w.postMessage({ id: job.id, task: job.task }, job.transfer);
    }
  };

  const workers: Worker[] = [];
  for (let i = 0; i < size; i++) {
    const w = startWorker(entry);
    w.on('message', (m: { id: number; result?: R; error?: SerialisedError }) => {
      const p = pending.get(m.id);
      pending.delete(m.id);
      busy.delete(w);
      idle.push(w);
      if (p) {
        if (m.error) p.reject(revive(m.error));
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
    size,
    run(task, transfer = []) {
      if (failed) return Promise.reject(failed);
      const id = nextId++;
      const p = new Promise<R>((resolve, reject) => pending.set(id, { resolve, reject }));
      queue.push({ id, task, transfer });
      dispatch();
      return p;
    },
    async close() {
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}

/** Serve tasks inside a worker: call from the task module. */
export async function serveTasks<T, R>(handle: (task: T) => Promise<{ result: R; transfer?: ArrayBuffer[] }>): Promise<void> {
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
