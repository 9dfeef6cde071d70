// Child process of slices.bench.ts: streams `nLines` synthetic lines (4000 traces, 256 samples) over one
// fixed 125 m x 125 m area into a SliceBuilder (per-trace slice values spilled to disk), grids them onto
// the same 1000 x 1000 grid of 0.125 m cells with 40 slices in row bands, and prints one JSON line:
// positions, row bands, seconds and this process's peak RSS (getrusage). More lines, same grid: the
// peak should stay near the output grid (1000 x 1000 x 40 x 4 B = 153 MiB) plus a constant.
//   node --import tsx bench/slices-memory.ts <nLines>
import { availableParallelism } from 'node:os';
import { sliceWindows, SliceBuilder } from '../packages/slices/src';
import { constantModel } from '../packages/velocity/src';
import { mulberry32 } from '../packages/random/src/index';

const nLines = Number(process.argv[2] ?? 250);
const SIDE = 125;
const N_TRACES = 4000;
const NS = 256;
const DT = 0.2;
const spacing = SIDE / nLines;
const windows = sliceWindows(0, 1.8, { thicknessM: 0.045 }).slice(0, 40);
const r = mulberry32(99);
const t0 = performance.now();
const b = new SliceBuilder({ windows, model: constantModel(0.1), separationM: 0.1 });
try {
  for (let j = 0; j < nLines; j++) {
    const x = new Float64Array(N_TRACES);
    const y = new Float64Array(N_TRACES);
    const data = new Float32Array(N_TRACES * NS);
    for (let t = 0; t < N_TRACES; t++) {
      x[t] = (t * SIDE) / N_TRACES + 0.003 * (r() - 0.5);
      y[t] = (j + 0.5) * spacing + 0.02 * (r() - 0.5);
      for (let s = 0; s < NS; s++) data[t * NS + s] = 0.05 * r();
      const s0 = 40 + ((t * 7 + j * 13) % 150);
      for (let s = s0; s < Math.min(NS, s0 + 8); s++) data[t * NS + s] = data[t * NS + s]! + 0.3;
    }
    b.add({ id: `L${j}`, nTraces: N_TRACES, nSamples: NS, dtNs: DT, timeZeroNs: 2, data, x, y });
  }
  const tAdd = (performance.now() - t0) / 1000;
  const stack = await b.gridAsync({ crs: 'EPSG:32617', cellSizeM: 0.125, radiusM: 0.5, radiusAcrossM: 0.5, bounds: [0, 0, SIDE, SIDE], threads: availableParallelism() });
  console.log(JSON.stringify({
    lines: nLines,
    positions: b.traceCount,
    grid: `${stack.grid.width} x ${stack.grid.height} x ${stack.slices.length}`,
    gridMiB: (stack.grid.width * stack.grid.height * stack.slices.length * 4) / 2 ** 20,
    rowBands: stack.gridding?.rowBands ?? 1,
    streamS: tAdd,
    gridS: (performance.now() - t0) / 1000 - tAdd,
    peakRssMiB: process.resourceUsage().maxRSS / 1024,
  }));
} finally {
  b.dispose();
}
