import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
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
  const tree = buildIndex(coords, searchFrame(options), true);
  const sharedValues = values.buffer instanceof SharedArrayBuffer && values.byteOffset === 0 && values.byteLength === values.buffer.byteLength
    ? values.buffer
    : (() => {
        const sab = new SharedArrayBuffer(values.byteLength);
        new Float32Array(sab).set(values);
        return sab;
      })();
  const out = new SharedArrayBuffer(cells * nBands * 4);
  const anyNaN = hasNaN(values);
  const block = Math.max(1, Math.ceil(grid.height / (threads * 8)));
  let nextRow = 0;
  const workers = Array.from({ length: Math.min(threads, Math.ceil(grid.height / block)) }, () => new Worker(new URL('./idw-worker-boot.mjs', import.meta.url)));
  try {
    await Promise.all(
      workers.map(
        (w) =>
          new Promise<void>((resolve, reject) => {
            const send = () => {
              if (nextRow >= grid.height) return resolve();
              const rowStart = nextRow;
              nextRow = Math.min(grid.height, nextRow + block);
              const job: IdwJob = { index: tree.data as SharedArrayBuffer, n, values: sharedValues, nBands, grid, options, out, rowStart, rowEnd: nextRow, anyNaN };
              w.postMessage(job);
            };
            w.on('message', (m: { ok: boolean; error?: string }) => (m.ok ? send() : reject(new Error(`gridding worker: ${m.error}`))));
            w.on('error', reject);
            send();
          }),
      ),
    );
  } finally {
    await Promise.all(workers.map((w) => w.terminate()));
  }
  return Array.from({ length: nBands }, (_, b) => new Float32Array(out, b * cells * 4, cells));
}
