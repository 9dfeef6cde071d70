// Worker-thread task module: grids one block of rows into shared memory. Started by idw-parallel.ts.
import { serveTasks } from '@lamina/runtime-files';
import KDBush from 'kdbush';
import { idwRows, type IdwOptions } from './idw';
import type { SliceGrid } from './stack';

/** One job: rows [rowStart, rowEnd) of a grid whose index, values and output live in shared memory. */
export interface IdwJob {
  index: SharedArrayBuffer;
  n: number;
  values: SharedArrayBuffer;
  nBands: number;
  grid: SliceGrid;
  options: IdwOptions;
  out: SharedArrayBuffer;
  rowStart: number;
  rowEnd: number;
  anyNaN: boolean;
  /** `out` holds rows [outRow0, outRow0 + outRows) of the grid. */
  outRow0: number;
  outRows: number;
}

await serveTasks<IdwJob, null>((job) => {
  const tree = KDBush.from(job.index);
  const values = new Float32Array(job.values);
  const cells = job.grid.width * job.outRows;
  const out = Array.from({ length: job.nBands }, (_, b) => new Float32Array(job.out, b * cells * 4, cells));
  idwRows(tree, job.n, values, job.nBands, job.grid, job.options, job.rowStart, job.rowEnd, out, job.anyNaN, job.outRow0);
  return { result: null };
});
