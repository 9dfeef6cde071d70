// Worker-thread entry: runs one recipe per message. Started by pool.ts; not imported by index.ts.
import { parentPort } from 'node:worker_threads';
import { isInputError } from '@lamina/errors';
import { runRecipe } from './recipe';
import type { WorkerReply, WorkerRequest } from './pool';

parentPort?.on('message', (msg: WorkerRequest) => {
  try {
    const result = runRecipe(msg.line, msg.recipe, msg.ctx, msg.options);
    const buffers = new Set<ArrayBuffer>([result.line.data.buffer as ArrayBuffer]);
    if (result.before) buffers.add(result.before.data.buffer as ArrayBuffer);
    const reply: WorkerReply = { id: msg.id, ok: true, result };
    parentPort?.postMessage(reply, [...buffers]);
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    const reply: WorkerReply = {
      id: msg.id,
      ok: false,
      error: isInputError(err)
        ? { name: err.name, message: err.message, file: err.file, detail: err.detail, field: err.field, offset: err.offset, line: err.line }
        : { name: err.name, message: err.message },
    };
    parentPort?.postMessage(reply);
  }
});
