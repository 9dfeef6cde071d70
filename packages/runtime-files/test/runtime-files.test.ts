import { describe, expect, it } from 'vitest';
import { bundled, bundledWorkerName, startWorker, workerFile } from '../src';

describe('runtime-files from source', () => {
  it('is not the bundle, and boots a worker entry through tsx', () => {
    expect(bundled).toBe(false);
    const entry = new URL('./probe-worker.ts', import.meta.url);
    const { file, workerData } = workerFile(entry);
    expect(file.pathname.endsWith('/runtime-files/src/tsx-boot.mjs')).toBe(true);
    expect(workerData).toEqual({ entry: entry.href });
  });

  it('names the bundled file of an entry after it, and refuses anything but a .ts entry', () => {
    expect(bundledWorkerName(new URL('file:///a/b/line-worker.ts'))).toBe('line-worker.mjs');
    expect(() => bundledWorkerName('x/worker.js')).toThrow('Expected a worker entry ending in .ts, found worker.js.');
  });

  it('runs a TypeScript entry on a worker thread', async () => {
    const w = startWorker(new URL('./probe-worker.ts', import.meta.url));
    try {
      const reply = await new Promise((ok, fail) => {
        w.once('message', ok);
        w.once('error', fail);
        w.postMessage(20);
      });
      expect(reply).toBe(21);
    } finally {
      await w.terminate();
    }
  });
});
