// Bad input: each gives one InputError naming the file and the header field or byte offset, with the
// exact message. Files are made by our writer and then damaged byte by byte.
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isInputError } from '@lamina/errors';
import { openSegy, writeSegy, type SampleFormat, type SegyOpenOptions } from '../src';
import { tempDir } from './helpers';

let tmp: ReturnType<typeof tempDir>;
const NS = 100;
const NT = 10;
const TB = 240 + 4 * NS; // 640

async function base(options: { revision?: 1 | 2; dtNs?: number; format?: SampleFormat } = {}): Promise<Uint8Array> {
  const file = join(tmp.dir, `base-${options.revision ?? 2}-${options.format ?? 5}-${options.dtNs ?? 0.1}.sgy`);
  const data = Float32Array.from({ length: NS * NT }, (_, i) => Math.sin(i / 7));
  await writeSegy(file, { nSamples: NS, dtNs: options.dtNs ?? 0.1, revision: options.revision, format: options.format, traces: { data } });
  return new Uint8Array(readFileSync(file));
}

let n = 0;
/**
 * Write `bytes` as a file and return the message `openSegy` + reading every trace throws (the same with
 * synchronous reads, `syncIo`).
 */
async function failure(bytes: Uint8Array, options: SegyOpenOptions = {}): Promise<string> {
  const file = join(tmp.dir, `bad-${n++}.sgy`);
  writeFileSync(file, bytes);
  const message = await failureOf(file, options);
  expect(await failureOf(file, { ...options, syncIo: true })).toBe(message);
  return message;
}

async function failureOf(file: string, options: SegyOpenOptions): Promise<string> {
  try {
    const r = await openSegy(file, { name: 'l01.sgy', ...options });
    try {
      await r.readTraces(0, r.nTraces);
      await r.readTraceHeaders(0, r.nTraces);
    } finally {
      await r.close();
    }
  } catch (e) {
    expect(isInputError(e), String(e)).toBe(true);
    return (e as Error).message;
  }
  throw new Error('expected an InputError, the file was read');
}

function patch(bytes: Uint8Array, f: (v: DataView) => void): Uint8Array {
  const copy = bytes.slice();
  f(new DataView(copy.buffer));
  return copy;
}

beforeAll(() => {
  tmp = tempDir();
});
afterAll(() => tmp.remove());

describe('bad SEG-Y input', () => {
  it('empty file', async () => {
    expect(await failure(new Uint8Array(0))).toBe('l01.sgy: expected a SEG-Y file (at least 3600 bytes of headers), found an empty file');
  });

  it('file shorter than the headers', async () => {
    expect(await failure((await base()).subarray(0, 1000))).toBe(
      'l01.sgy: expected at least 3600 bytes (3200-byte textual and 400-byte binary header), found 1000 bytes',
    );
  });

  it('headers and no traces', async () => {
    expect(await failure((await base()).subarray(0, 3600))).toBe(
      'l01.sgy: expected traces after the headers (from byte offset 3600), found none: the file ends there',
    );
  });

  it('missing file and a directory', async () => {
    await expect(openSegy(join(tmp.dir, 'nope.sgy'), { name: 'l01.sgy' })).rejects.toThrow('l01.sgy: expected a readable SEG-Y file, found no such file');
    const dir = join(tmp.dir, 'adir.sgy');
    mkdirSync(dir);
    await expect(openSegy(dir, { name: 'l01.sgy' })).rejects.toThrow('l01.sgy: expected a SEG-Y file, found a directory or device');
    await expect(openSegy(join(tmp.dir, 'nope.sgy'), { name: 'l01.sgy', syncIo: true })).rejects.toThrow('l01.sgy: expected a readable SEG-Y file, found no such file');
    await expect(openSegy(dir, { name: 'l01.sgy', syncIo: true })).rejects.toThrow('l01.sgy: expected a SEG-Y file, found a directory or device');
  });

  it('unknown format code', async () => {
    const b = patch(await base(), (v) => v.setInt16(3224, 4));
    expect(await failure(b)).toBe(
      'l01.sgy: binary header bytes 3225-3226 (formatCode): expected sample format code 1 (IBM float), 2 (int32), 3 (int16), 5 (IEEE float) or 8 (int8), found 4',
    );
    const r1 = patch(await base({ revision: 1, dtNs: 1000 }), (v) => v.setInt16(3224, 700));
    expect(await failure(r1)).toBe(
      'l01.sgy: binary header bytes 3225-3226 (formatCode): expected sample format code 1 (IBM float), 2 (int32), 3 (int16), 5 (IEEE float) or 8 (int8), found 700',
    );
  });

  it('zero samples per trace', async () => {
    const b = patch(await base(), (v) => {
      v.setUint16(3220, 0);
      v.setInt32(3268, 0);
    });
    expect(await failure(b)).toBe('l01.sgy: binary header bytes 3221-3222 (samplesPerTrace): expected the number of samples per trace, 1 to 1048576, found 0');
  });

  it('huge sample counts', async () => {
    const big = patch(await base(), (v) => v.setInt32(3268, 2000000));
    expect(await failure(big)).toBe('l01.sgy: binary header bytes 3269-3272 (extSamplesPerTrace): expected the number of samples per trace, 1 to 1048576, found 2000000');
    const noFit = patch(await base(), (v) => {
      v.setUint16(3220, 60000);
      v.setInt32(3268, 60000);
      v.setUint16(3600 + 114, 0);
    });
    expect(await failure(noFit)).toBe(
      'l01.sgy: binary header bytes 3269-3272 (extSamplesPerTrace): expected a sample count whose traces fit the file: 60000 samples need 240240 bytes per trace, but only 6400 bytes follow the headers (truncated file or wrong sample count)',
    );
  });

  it('truncated trace', async () => {
    const b = (await base()).subarray(0, 3600 + NT * TB - 100);
    expect(await failure(b)).toBe(
      'l01.sgy: trace 10: byte offset 9360: truncated trace: expected 640 bytes per trace (240-byte header + 100 samples x 4 bytes), found 540 bytes after 9 whole traces',
    );
  });

  it('file cut at a trace boundary (rev 2 trace count)', async () => {
    const b = (await base()).subarray(0, 3600 + 9 * TB);
    expect(await failure(b)).toBe(
      'l01.sgy: binary header bytes 3513-3520 (traceCount): expected 10 traces as the header says, found 9 in the file (5760 bytes of 640-byte traces)',
    );
  });

  it('NaN and Inf samples name the trace and sample', async () => {
    const at = 3600 + 2 * TB + 240 + 4 * 4; // trace 3, sample 5
    expect(await failure(patch(await base(), (v) => v.setFloat32(at, NaN)))).toBe(
      'l01.sgy: trace 3 of 10, sample 5 of 100: byte offset 5136: expected a finite sample value, found NaN',
    );
    expect(await failure(patch(await base(), (v) => v.setFloat32(3600 + 240, -Infinity)))).toBe(
      'l01.sgy: trace 1 of 10, sample 1 of 100: byte offset 3840: expected a finite sample value, found -Infinity',
    );
    // IBM has no NaN, but its range exceeds float32's: 0x7fffffff is (1 - 16^-6) * 16^63.
    const ibm = patch(await base({ format: 1 }), (v) => v.setUint32(3600 + 9 * TB + 240 + 4 * 99, 0x7fffffff));
    expect(await failure(ibm)).toBe(
      `l01.sgy: trace 10 of 10, sample 100 of 100: byte offset 9996: expected a finite sample value, found ${(1 - 16 ** -6) * 16 ** 63} (an IBM float beyond the float32 range)`,
    );
  });

  it('traces of mixed length', async () => {
    const first = patch(await base(), (v) => v.setUint16(3600 + 114, 90));
    expect(await failure(first)).toBe(
      'l01.sgy: trace 1 of 10 bytes 115-116 (samples in this trace): byte offset 3714: expected 100 samples in every trace as the binary header says (bytes 3221-3222), found 90 (traces of mixed length are not supported)',
    );
    const middle = patch(await base(), (v) => v.setUint16(3600 + 4 * TB + 114, 90));
    expect(await failure(middle)).toBe(
      'l01.sgy: trace 5 of 10 bytes 115-116 (samples in this trace): byte offset 6274: expected 100 samples in every trace as the binary header says (bytes 3221-3222), found 90 (traces of mixed length are not supported)',
    );
    // A file really written with a shorter trace 4: the sizes do not add up, the walk finds trace 4.
    const b = await base();
    const short = new Uint8Array(b.length - 40);
    short.set(b.subarray(0, 3600 + 3 * TB + 240 + 4 * 90));
    short.set(b.subarray(3600 + 4 * TB), 3600 + 3 * TB + 240 + 4 * 90);
    new DataView(short.buffer).setUint16(3600 + 3 * TB + 114, 90);
    expect(await failure(short)).toBe(
      'l01.sgy: trace 4 of 10 bytes 115-116 (samples in this trace): byte offset 5634: expected 100 samples in every trace as the binary header says (bytes 3221-3222), found 90 (traces of mixed length are not supported)',
    );
  });

  it('extended textual headers beyond the end of the file', async () => {
    const b = patch(await base(), (v) => v.setInt16(3504, 5));
    expect(await failure(b)).toBe(
      'l01.sgy: binary header bytes 3505-3506 (extendedTextHeaders): expected at least 19600 bytes (3600 + 5 extended textual headers of 3200), found 10000 bytes',
    );
    const neg = patch(await base(), (v) => v.setInt16(3504, -2));
    expect(await failure(neg)).toBe(
      'l01.sgy: binary header bytes 3505-3506 (extendedTextHeaders): expected -1 (variable) or 0 to 10000 extended textual headers, found -2',
    );
    const variable = patch(await base(), (v) => v.setInt16(3504, -1));
    expect(await failure(variable)).toBe(
      'l01.sgy: binary header bytes 3505-3506 (extendedTextHeaders): expected a final extended textual header "((SEG: EndText))" (a count of -1 means variable), found none in 2 records',
    );
  });

  it('byte-order constant', async () => {
    const bad = patch(await base(), (v) => v.setUint32(3296, 0x12345678));
    expect(await failure(bad)).toBe(
      'l01.sgy: binary header bytes 3297-3300 (byteOrderConstant): expected 0x01020304 (big-endian) or 0x04030201 (little-endian) in a rev 2 file, found 0x12345678',
    );
    const pairs = patch(await base(), (v) => v.setUint32(3296, 0x02010403));
    expect(await failure(pairs)).toBe(
      'l01.sgy: binary header bytes 3297-3300 (byteOrderConstant): expected 0x01020304 (big-endian) or 0x04030201 (little-endian), found 0x02010403 (pairwise byte-swapped, not supported)',
    );
  });

  it('sample interval missing or implausible for radar', async () => {
    const none = patch(await base(), (v) => {
      v.setFloat64(3272, 0);
      v.setUint16(3216, 0);
    });
    expect(await failure(none)).toBe(
      'l01.sgy: binary header bytes 3217-3218 (sampleIntervalUs): expected a sample interval, found none (bytes 3217-3218 are 0 and so is the rev 2 interval, bytes 3273-3280); set "sampleIntervalNs" in site.json',
    );
    // A seismic interval (1 ms) in a rev 1 file.
    const seismic = await base({ revision: 1, dtNs: 1e6 });
    expect(await failure(seismic)).toBe(
      'l01.sgy: binary header bytes 3217-3218 (sampleIntervalUs): expected a radar sample interval of 0.001 to 10 ns, found 1000 us (1000000 ns); set "sampleIntervalNs" in site.json',
    );
    const slow = patch(await base(), (v) => v.setFloat64(3272, 0.05));
    expect(await failure(slow)).toBe(
      'l01.sgy: binary header bytes 3273-3280 (extSampleIntervalUs): expected a radar sample interval of 0.001 to 10 ns, found 0.05 us (50 ns); set "sampleIntervalNs" in site.json',
    );
    expect(await failure(seismic, { sampleIntervalNs: 0 })).toBe(
      'l01.sgy: sampleIntervalNs (override): expected a radar sample interval of 0.001 to 10 ns, found 0',
    );
    expect(await failure(seismic, { sampleIntervalNs: 50 })).toBe(
      'l01.sgy: sampleIntervalNs (override): expected a radar sample interval of 0.001 to 10 ns, found 50',
    );
  });

  it('additional trace headers and trailer fields out of range', async () => {
    const extra = patch(await base(), (v) => v.setInt32(3506, 101));
    expect(await failure(extra)).toBe(
      'l01.sgy: binary header bytes 3507-3510 (maxAdditionalTraceHeaders): expected 0 to 100 additional trace headers, found 101',
    );
    const trailer = patch(await base(), (v) => v.setInt32(3528, 1));
    expect(await failure(trailer)).toBe(
      'l01.sgy: binary header bytes 3513-3520 (traceCount): expected 10 traces as the header says, found 5 in the file (3200 bytes of 640-byte traces)',
    );
    const badTrailer = patch(await base(), (v) => v.setInt32(3528, -5));
    expect(await failure(badTrailer)).toBe(
      'l01.sgy: binary header bytes 3529-3532 (trailerRecords): expected 0 or more data trailer records (or -1 with a trace count in bytes 3513-3520), found -5',
    );
    const offset = patch(await base(), (v) => v.setBigUint64(3520, 20000n));
    expect(await failure(offset)).toBe(
      'l01.sgy: binary header bytes 3521-3528 (firstTraceOffset): expected the first trace at byte 3600 to 10000 (after the headers, within the file), found 20000',
    );
  });
});
