import { availableParallelism } from 'node:os';
import { startWorker } from '@lamina/runtime-files';
import type KDBush from 'kdbush';
import { buildIndex, hasNaN, idwGrid, searchFrame, type IdwOptions } from './idw';
import type { IdwJob } from './idw-worker';
import type { SliceGrid } from './stack';

/**
 * `idwGrid` on worker threads: the kd-tree, the values and the output bands sit in SharedArrayBuffers
 * and each worker grids a band of rows (row blocks are handed out as workers finish, so uneven density
 * balances). Same result as `idwGrid`, cell for cell. Small grids run on the calling thread.
 * @default threads os.availableParallelism()
 */
export async function idwGridParallel(
  coords: Float64Array,
  values: Float32Array,
  nBands: number,
  grid: SliceGrid,
  options: IdwOptions,
  threads = availableParallelism(),
): Promise<Float32Array[]> {
  const n = coords.length / 2;
  if (values.length !== n * nBands) throw new Error(`expected ${n * nBands} values (${n} points x ${nBands} bands), found ${values.length}`);
  const cells = grid.width * grid.height;
  if (threads <= 1 || cells * Math.max(1, nBands) < 2e6) return idwGrid(coords, values, nBands, grid, options);
  const out = new SharedArrayBuffer(cells * nBands * 4);
  const workers = idwWorkers(Math.min(threads, grid.height));
  try {
    await workers.rows(buildIndex(coords, searchFrame(options), true), n, shared(values), nBands, grid, options, 0, grid.height, out, hasNaN(values));
  } finally {
    await workers.close();
  }
  return Array.from({ length: nBands }, (_, b) => new Float32Array(out, b * cells * 4, cells));
}

/** `values` in a SharedArrayBuffer (itself when it already is one, whole). */
export function shared(values: Float32Array): SharedArrayBuffer {
  if (values.buffer instanceof SharedArrayBuffer && values.byteOffset === 0 && values.byteLength === values.buffer.byteLength) return values.buffer;
  const sab = new SharedArrayBuffer(values.byteLength);
  new Float32Array(sab).set(values);
  return sab;
}

export interface IdwWorkers {
  /**
   * Grid rows [rowStart, rowEnd) into `out` (band b at byte offset b * cells * 4), the tree built with
   * `buildIndex(..., shared = true)`, on the workers. `out` may hold only the grid's rows
   * [outRow0, outRow0 + outRows) (band b at byte offset b * width * outRows * 4).
   */
  rows(
    tree: KDBush,
    n: number,
    values: SharedArrayBuffer,
    nBands: number,
    grid: SliceGrid,
    options: IdwOptions,
    rowStart: number,
    rowEnd: number,
    out: SharedArrayBuffer,
    anyNaN: boolean,
    outRow0?: number,
    outRows?: number,
  ): Promise<void>;
  close(): Promise<void>;
}

/** Gridding workers kept for several calls (one row band after another). */
export function idwWorkers(threads: number): IdwWorkers {
  const workers = Array.from({ length: Math.max(1, threads) }, () => startWorker(new URL('./idw-worker.ts', import.meta.url)));
  return {
    rows: async (tree, n, values, nBands, grid, options, rowStart, rowEnd, out, anyNaN, outRow0 = 0, outRows = grid.height) => {
      const height = rowEnd - rowStart;
      const block = Math.max(1, Math.ceil(height / (workers.length * 8)));
      let nextRow = rowStart;
      await Promise.all(
        workers.map(
          (w) =>
            new Promise<void>((resolve, reject) => {
              const onMessage = (m: { ok: boolean; error?: string }) => {
                if (m.ok) return send();
                done();
                reject(new Error(`gridding worker: ${m.error}`));
              };
              const onError = (e: Error) => {
                done();
                reject(e);
              };
              const done = () => {
                w.off('message', onMessage);
                w.off('error', onError);
              };
              const send = () => {
                if (nextRow >= rowEnd) {
                  done();
                  return resolve();
                }
                const start = nextRow;
                nextRow = Math.min(rowEnd, nextRow + block);
                const job: IdwJob = { index: tree.data as SharedArrayBuffer, n, values, nBands, grid, options, out, rowStart: start, rowEnd: nextRow, anyNaN, outRow0, outRows };
                w.postMessage(job);
              };
              w.on('message', onMessage);
              w.on('error', onError);
              send();
            }),
        ),
      );
    },
    close: async () => {
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}
