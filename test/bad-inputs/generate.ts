/**
 * Writes the cross-package SEG-Y and review.json bad inputs under test/bad-inputs/: one folder per case
 * (site.json + l01.sgy, or a good site and a review.json to put in the output folder) and cases.json with
 * the exact message each must give. SEG-Y files are written by @lamina/radar-data's writer and damaged
 * byte by byte; offsets follow the SEG-Y rev 2.0 byte table (binary header 3221-3222 samples per trace,
 * 3225-3226 format code, 3269-3272 extended samples, 3513-3520 trace count; trace header 115-116 samples
 * in this trace). Messages are the readers' documented wording with offsets worked out by hand:
 * 10 traces of 100 IEEE samples are 640-byte traces after 3600 header bytes.
 * Regenerate from the repo root: node --import tsx test/bad-inputs/generate.ts
 * `<dir>` = the case folder relative to the repo root, `<out>` = the output folder given to process.
 */
import { mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { writeSegy } from '@lamina/radar-data';

const here = import.meta.dirname;
const NS = 100;
const NT = 10;
const TB = 240 + 4 * NS;
const E0 = 500000;
const N0 = 3900000;

export interface SegyCase {
  name: string;
  /** `segy`: site.json + damaged l01.sgy; `review`: a good site and out/review.json. */
  kind: 'segy' | 'review';
  error: string;
  /** Run through the CLI binary too (a representative subset). */
  cli?: 'info' | 'process';
}

const site = JSON.stringify({ name: 'bad-input case', crs: 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, lines: [{ file: 'l01.sgy' }] }, null, 2) + '\n';

async function base(dir: string): Promise<Uint8Array> {
  const file = join(dir, 'base.sgy');
  const data = Float32Array.from({ length: NS * NT }, (_, i) => Math.sin(i / 7) * 1000);
  const x = Float64Array.from({ length: NT }, (_, i) => E0 + i * 0.5);
  await writeSegy(file, { nSamples: NS, dtNs: 0.1, traces: { data, x, y: new Float64Array(NT).fill(N0) } });
  const b = new Uint8Array(readFileSync(file));
  rmSync(file);
  return b;
}

function patch(bytes: Uint8Array, f: (v: DataView) => void): Uint8Array {
  const copy = bytes.slice();
  f(new DataView(copy.buffer));
  return copy;
}

const f = '<dir>/l01.sgy';
const segy: { name: string; make: (b: Uint8Array) => Uint8Array; error: string; cli?: 'info' | 'process' }[] = [
  { name: 'segy-empty', make: () => new Uint8Array(0), error: `${f}: expected a SEG-Y file (at least 3600 bytes of headers), found an empty file`, cli: 'info' },
  { name: 'segy-short-headers', make: (b) => b.subarray(0, 1000), error: `${f}: expected at least 3600 bytes (3200-byte textual and 400-byte binary header), found 1000 bytes` },
  { name: 'segy-headers-only', make: (b) => b.subarray(0, 3600), error: `${f}: expected traces after the headers (from byte offset 3600), found none: the file ends there` },
  { name: 'segy-truncated-trace', make: (b) => b.subarray(0, 3600 + NT * TB - 100), error: `${f}: trace 10: byte offset 9360: truncated trace: expected 640 bytes per trace (240-byte header + 100 samples x 4 bytes), found 540 bytes after 9 whole traces`, cli: 'process' },
  { name: 'segy-cut-at-trace', make: (b) => b.subarray(0, 3600 + 9 * TB), error: `${f}: binary header bytes 3513-3520 (traceCount): expected 10 traces as the header says, found 9 in the file (5760 bytes of 640-byte traces)` },
  { name: 'segy-format-code', make: (b) => patch(b, (v) => v.setInt16(3224, 4)), error: `${f}: binary header bytes 3225-3226 (formatCode): expected sample format code 1 (IBM float), 2 (int32), 3 (int16), 5 (IEEE float) or 8 (int8), found 4`, cli: 'info' },
  { name: 'segy-zero-samples', make: (b) => patch(b, (v) => { v.setUint16(3220, 0); v.setInt32(3268, 0); }), error: `${f}: binary header bytes 3221-3222 (samplesPerTrace): expected the number of samples per trace, 1 to 1048576, found 0` },
  { name: 'segy-huge-samples', make: (b) => patch(b, (v) => v.setInt32(3268, 2000000)), error: `${f}: binary header bytes 3269-3272 (extSamplesPerTrace): expected the number of samples per trace, 1 to 1048576, found 2000000` },
  {
    name: 'segy-samples-do-not-fit',
    make: (b) => patch(b, (v) => { v.setUint16(3220, 60000); v.setInt32(3268, 60000); v.setUint16(3600 + 114, 0); }),
    error: `${f}: binary header bytes 3269-3272 (extSamplesPerTrace): expected a sample count whose traces fit the file: 60000 samples need 240240 bytes per trace, but only 6400 bytes follow the headers (truncated file or wrong sample count)`,
  },
  // trace 3, sample 5: 3600 + 2 * 640 + 240 + 4 * 4 = 5136
  { name: 'segy-nan-sample', make: (b) => patch(b, (v) => v.setFloat32(3600 + 2 * TB + 240 + 16, NaN)), error: `${f}: trace 3 of 10, sample 5 of 100: byte offset 5136: expected a finite sample value, found NaN`, cli: 'process' },
  { name: 'segy-inf-sample', make: (b) => patch(b, (v) => v.setFloat32(3600 + 240, -Infinity)), error: `${f}: trace 1 of 10, sample 1 of 100: byte offset 3840: expected a finite sample value, found -Infinity` },
  // trace 5 header bytes 115-116: 3600 + 4 * 640 + 114 = 6274
  { name: 'segy-mixed-length', make: (b) => patch(b, (v) => v.setUint16(3600 + 4 * TB + 114, 90)), error: `${f}: trace 5 of 10 bytes 115-116 (samples in this trace): byte offset 6274: expected 100 samples in every trace as the binary header says (bytes 3221-3222), found 90 (traces of mixed length are not supported)` },
];

const review: { name: string; review: unknown; error: string; cli?: 'process' }[] = [
  {
    name: 'review-other-site',
    review: { version: 1, site: { name: 'another yard', crs: 'EPSG:32617', extent: [-81, 35.2, -80.99, 35.21] }, decisions: [] },
    error: '<out>/review.json: site: belongs to another site: expected "bad-input good site" in EPSG:32617, found "another yard" in EPSG:32617',
    cli: 'process',
  },
];

async function main(): Promise<void> {
  for (const d of readdirSync(here)) if (d.startsWith('segy-') || d.startsWith('review-') || d === 'good-site') rmSync(join(here, d), { recursive: true, force: true });
  const b = await base(here);
  const cases: SegyCase[] = [];
  for (const c of segy) {
    const dir = join(here, c.name);
    mkdirSync(dir);
    writeFileSync(join(dir, 'site.json'), site);
    writeFileSync(join(dir, 'l01.sgy'), c.make(b));
    cases.push({ name: c.name, kind: 'segy', error: c.error, ...(c.cli ? { cli: c.cli } : {}) });
  }
  // A small good site for the review.json cases: two 12 m lines 1 m apart, a reflector under both.
  const good = join(here, 'good-site');
  mkdirSync(good);
  const nt = 121;
  const ns = 160;
  for (let k = 0; k < 2; k++) {
    const data = new Float32Array(nt * ns);
    for (let t = 0; t < nt; t++) {
      const dx = t * 0.1 - 6;
      const tt = 4 + (2 * Math.sqrt(0.6 * 0.6 + dx * dx)) / 0.1;
      for (let s = 0; s < ns; s++) {
        const a = (Math.PI * 0.4 * (s * 0.1 - 4)) ** 2;
        const r = (Math.PI * 0.4 * (s * 0.1 - tt)) ** 2;
        data[t * ns + s] = 5000 * (1 - 2 * a) * Math.exp(-a) + 800 * (1 - 2 * r) * Math.exp(-r) + Math.sin(t * 7.1 + s * 3.3) * 20;
      }
    }
    const x = Float64Array.from({ length: nt }, (_, t) => E0 + t * 0.1);
    await writeSegy(join(good, `l0${k + 1}.sgy`), { nSamples: ns, dtNs: 0.1, traces: { data, x, y: new Float64Array(nt).fill(N0 + k) } });
  }
  writeFileSync(join(good, 'site.json'), JSON.stringify({ name: 'bad-input good site', crs: 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, lines: [{ file: 'l01.sgy' }, { file: 'l02.sgy' }] }, null, 2) + '\n');
  for (const c of review) {
    const dir = join(here, c.name);
    mkdirSync(dir);
    writeFileSync(join(dir, 'review.json'), JSON.stringify(c.review, null, 2) + '\n');
    cases.push({ name: c.name, kind: 'review', error: c.error, ...(c.cli ? { cli: c.cli } : {}) });
  }
  writeFileSync(join(here, 'cases.json'), JSON.stringify({ about: 'Cross-package bad inputs; see generate.ts. <dir> = case folder, <out> = output folder, both as shown (relative to the repo root).', cases }, null, 1) + '\n');
}

await main();
