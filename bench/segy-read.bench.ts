// SEG-Y read throughput (MB/s of file, traces/s) of @lamina/radar-data's streaming reader, side by side
// with a plain sequential read of the same file (same 8 MB positional reads, no decoding) and, when
// Debian's python3-segyio is there, segyio reading all traces of the same file. The ratio to the plain
// read is the figure. Seeded files in the temp folder, page cache warmed by one untimed pass of each.
// Usage: pnpm bench segy-read   (env LAMINA_BENCH_SEGY_MB=256, LAMINA_BENCH_RUNS=3)
import { spawnSync } from 'node:child_process';
import { rmSync } from 'node:fs';
import { open } from 'node:fs/promises';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { BLOCK_BYTES, openSegy, openSegyWriter, type SampleFormat } from '../packages/radar-data/src/index';
import { mulberry32 } from '../packages/random/src/index';

const MB = 2 ** 20;
const TARGET_MB = Number(process.env.LAMINA_BENCH_SEGY_MB ?? 256);
const RUNS = Number(process.env.LAMINA_BENCH_RUNS ?? 3);
const NS = 1024;
const DT = 0.1;


async function makeFile(path: string, format: SampleFormat, littleEndian: boolean): Promise<{ bytes: number; traces: number }> {
  const bps = format === 3 ? 2 : 4;
  const traces = Math.floor((TARGET_MB * MB) / (240 + NS * bps));
  const rnd = mulberry32(20261201 + format);
  const w = await openSegyWriter(path, { nSamples: NS, dtNs: DT, format, littleEndian });
  const per = 2000;
  for (let t = 0; t < traces; t += per) {
    const n = Math.min(per, traces - t);
    const data = new Float32Array(n * NS);
    for (let i = 0; i < data.length; i++) data[i] = (rnd() - 0.5) * 20000;
    const x = Float64Array.from({ length: n }, (_, k) => 500000 + (t + k) * 0.025);
    await w.write({ data, x, y: x });
  }
  const r = await w.close();
  return { bytes: r.bytes, traces };
}

async function plainRead(path: string): Promise<number> {
  const fh = await open(path, 'r');
  const buf = new Uint8Array(BLOCK_BYTES);
  let total = 0;
  let sum = 0;
  try {
    for (;;) {
      const { bytesRead } = await fh.read(buf, 0, buf.length, total);
      if (bytesRead === 0) break;
      sum += buf[bytesRead - 1]!;
      total += bytesRead;
    }
  } finally {
    await fh.close();
  }
  return total + (sum & 0);
}

async function segyRead(path: string): Promise<number> {
  const r = await openSegy(path);
  let sum = 0;
  try {
    for await (const c of r.chunks()) sum += c.data[c.data.length - 1]! + c.headers.cdpX[0]!;
  } finally {
    await r.close();
  }
  return sum;
}

function stats(xs: number[]): { min: number; max: number; mean: number; std: number } {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  const std = Math.sqrt(xs.reduce((a, b) => a + (b - mean) ** 2, 0) / xs.length);
  return { min: Math.min(...xs), max: Math.max(...xs), mean, std };
}

async function time(f: () => Promise<unknown>): Promise<number[]> {
  await f(); // warm-up: page cache and JIT
  const out: number[] = [];
  for (let i = 0; i < RUNS; i++) {
    const t0 = performance.now();
    await f();
    out.push((performance.now() - t0) / 1000);
  }
  return out;
}

const SEGYIO = `
import sys, time, segyio
path, endian, runs = sys.argv[1], sys.argv[2], int(sys.argv[3])
def once():
    with segyio.open(path, ignore_geometry=True, endian=endian) as f:
        a = f.trace.raw[:]
        return float(a[-1][-1])
once()
ts = []
for _ in range(runs):
    t0 = time.perf_counter(); once(); ts.append(time.perf_counter() - t0)
print(' '.join(str(t) for t in ts))
`;

function segyioTimes(path: string, littleEndian: boolean): number[] | null {
  const p = spawnSync('/usr/bin/python3', ['-c', SEGYIO, path, littleEndian ? 'little' : 'big', String(RUNS)], { encoding: 'utf8' });
  if (p.status !== 0) return null;
  return p.stdout.trim().split(/\s+/).map(Number);
}

const cases: { format: SampleFormat; littleEndian: boolean; name: string }[] = [
  { format: 5, littleEndian: false, name: 'format 5 (IEEE float), big-endian' },
  { format: 5, littleEndian: true, name: 'format 5 (IEEE float), little-endian' },
  { format: 1, littleEndian: false, name: 'format 1 (IBM float), big-endian' },
  { format: 3, littleEndian: false, name: 'format 3 (int16), big-endian' },
];

console.log(`load average ${loadavg().map((v) => v.toFixed(1)).join(' ')} on ${availableParallelism()} cores (other work skews every figure)`);
console.log(`SEG-Y read: ~${TARGET_MB} MB files, ${NS} samples/trace, ${RUNS} timed runs after one warm-up; MB = 2^20 bytes of file`);
for (const c of cases) {
  const path = join(tmpdir(), `lamina-bench-segy-f${c.format}-${c.littleEndian ? 'le' : 'be'}.sgy`);
  try {
    const { bytes, traces } = await makeFile(path, c.format, c.littleEndian);
    const mb = bytes / MB;
    const plain = stats((await time(() => plainRead(path))).map((s) => mb / s));
    const segyTimes = await time(() => segyRead(path));
    const segy = stats(segyTimes.map((s) => mb / s));
    const tps = traces / stats(segyTimes).mean;
    const fmt = (s: { min: number; max: number; mean: number; std: number }) =>
      `${s.mean.toFixed(0)} +- ${s.std.toFixed(0)} MB/s (min ${s.min.toFixed(0)}, best ${s.max.toFixed(0)})`;
    console.log(`\n${c.name}: ${mb.toFixed(0)} MB, ${traces} traces`);
    console.log(`  plain sequential read  ${fmt(plain)}`);
    console.log(`  lamina openSegy.chunks ${fmt(segy)}, ${(tps / 1000).toFixed(0)} k traces/s`);
    console.log(`  ratio lamina / plain   ${(segy.mean / plain.mean).toFixed(2)} (best runs ${(segy.max / plain.max).toFixed(2)})`);
    const ref = segyioTimes(path, c.littleEndian);
    if (ref) {
      const s = stats(ref.map((t) => mb / t));
      console.log(`  segyio trace.raw[:]    ${fmt(s)}; ratio lamina / segyio ${(segy.mean / s.mean).toFixed(2)} (best runs ${(segy.max / s.max).toFixed(2)})`);
    }
  } finally {
    rmSync(path, { force: true });
  }
}
