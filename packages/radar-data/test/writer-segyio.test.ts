// Files our writer produces, read by Debian's python3-segyio (rev 1 view: samples, headers, text) and by
// raw struct reads for the rev 2 fields (test/data/segyio_dump.py names the SEG-Y_r2.0 byte table).
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { numberToIbm, ibmToNumber, readSegyLine, writeSegy, type SampleFormat } from '../src';
import { DATA, python, rng, tempDir } from './helpers';

interface Dump {
  format: number;
  tracecount: number;
  nSamples: number;
  bin: Record<string, number>;
  samples: number[];
  text: string[];
  headers: Record<string, number[]>;
  raw: {
    extSamples: number;
    extIntervalUs: number;
    byteOrderConstantBE: number;
    revisionMajor: number;
    revisionMinor: number;
    fixedLength: number;
    extTextCount: number;
    traceCount: number;
    firstTraceOffset: number;
    textFirstByte: number;
  };
}

/** One python run for every file (numpy and segyio take about a second to import). */
function dumpAll(files: { file: string; littleEndian: boolean }[]): Dump[] {
  const args = files.flatMap((f) => [f.file, f.littleEndian ? 'little' : 'big']);
  return JSON.parse(python([join(DATA, 'segyio_dump.py'), ...args])) as Dump[];
}

/** What each format stores for a float sample (the writer's documented conversion). */
function stored(format: SampleFormat, v: number): number {
  const round = (lo: number, hi: number) => Math.min(hi, Math.max(lo, v < 0 ? -Math.round(-v) : Math.round(v))) || 0;
  switch (format) {
    case 5:
      return Math.fround(v);
    case 1:
      return Math.fround(ibmToNumber(numberToIbm(v)));
    case 2:
      return round(-2147483648, 2147483647);
    case 3:
      return round(-32768, 32767);
    case 8:
      return round(-128, 127);
  }
}

let tmp: ReturnType<typeof tempDir>;
beforeAll(() => {
  tmp = tempDir();
});
afterAll(() => tmp.remove());

interface Case {
  format: SampleFormat;
  littleEndian: boolean;
  revision: 1 | 2;
  textEncoding: 'ebcdic' | 'ascii';
  dtNs: number;
  ext: number;
  utm: boolean;
}

const cases: Case[] = [];
for (const format of [1, 2, 3, 5, 8] as const) {
  for (const littleEndian of [false, true]) {
    cases.push({ format, littleEndian, revision: 2, textEncoding: littleEndian ? 'ascii' : 'ebcdic', dtNs: 0.1, ext: format === 5 ? 2 : 0, utm: format % 2 === 1 });
  }
  cases.push({ format, littleEndian: false, revision: 1, textEncoding: 'ebcdic', dtNs: 2000, ext: format === 3 ? 1 : 0, utm: false });
}

interface Written {
  file: string;
  data: Float32Array;
  x: number[];
  y: number[];
  elevation: number[];
  ext: string[];
  nt: number;
  ns: number;
}

async function writeCase(c: Case): Promise<Written> {
  const nt = 9;
  const ns = 64;
  const r = rng(c.format * 10 + (c.littleEndian ? 1 : 0) + c.revision * 100);
  const scale = c.format === 8 ? 100 : c.format === 3 ? 20000 : c.format === 2 ? 3e9 : 1e4;
  const data = Float32Array.from({ length: nt * ns }, () => (r() - 0.5) * 2 * scale);
  const x = Array.from({ length: nt }, (_, i) => (c.utm ? 612345.678 : 12.345) + i * 0.051);
  const y = Array.from({ length: nt }, (_, i) => (c.utm ? 4412345.678 : -3.21) + i * 0.037);
  const elevation = Array.from({ length: nt }, (_, i) => 101.25 + i * 0.01);
  const ext = Array.from({ length: c.ext }, (_, k) => `C01 EXTENDED HEADER ${k + 1}`);
  const file = join(tmp.dir, `w${c.format}${c.littleEndian ? 'le' : 'be'}${c.revision}.sgy`);
  const text = ['LAMINA WRITER TEST', `FORMAT ${c.format}`];
  await writeSegy(file, {
    nSamples: ns, dtNs: c.dtNs, format: c.format, littleEndian: c.littleEndian, revision: c.revision,
    textEncoding: c.textEncoding, textHeader: text, extendedTextHeaders: ext, coordinateUnits: 1,
    binary: { jobId: 77, lineNumber: 3 },
    traces: [
      { data: data.subarray(0, 4 * ns), x: x.slice(0, 4), y: y.slice(0, 4), elevation: elevation.slice(0, 4) },
      { data: data.subarray(4 * ns), x: x.slice(4), y: y.slice(4), elevation: elevation.slice(4) },
    ],
  });
  return { file, data, x, y, elevation, ext, nt, ns };
}

const written = new Map<Case, Written>();
const dumps = new Map<Case, Dump>();
beforeAll(async () => {
  for (const c of cases) written.set(c, await writeCase(c));
  const all = dumpAll(cases.map((c) => ({ file: written.get(c)!.file, littleEndian: c.littleEndian })));
  cases.forEach((c, i) => dumps.set(c, all[i]!));
});

describe('writer output read by segyio', () => {
  it.each(cases)('format $format, little-endian $littleEndian, rev $revision', async (c) => {
    const { file, data, x, y, elevation, ext, nt, ns } = written.get(c)!;
    const d = dumps.get(c)!;

    expect(d.format).toBe(c.format);
    expect(d.tracecount).toBe(nt);
    expect(d.nSamples).toBe(ns);
    expect(d.bin.Samples).toBe(ns);
    expect(d.bin.JobID).toBe(77);
    expect(d.bin.LineNumber).toBe(3);
    expect(d.bin.ExtendedHeaders).toBe(c.ext);
    expect(d.bin.Interval).toBe(Math.round(c.dtNs / 1000));

    const expected = Array.from(data, (v) => stored(c.format, v));
    expect(d.samples).toEqual(expected);
    if (c.format === 1) {
      // IBM keeps 21-24 significant bits: relative error at most 2^-21 after rounding to nearest
      // (IBM System/360 hexadecimal floating point: 24-bit fraction, base-16 exponent).
      for (let i = 0; i < data.length; i++) expect(Math.abs(d.samples[i]! - data[i]!)).toBeLessThanOrEqual(Math.abs(data[i]!) * 2 ** -21);
    }

    const h = d.headers;
    const scalar = c.utm ? -100 : -1000; // finest that holds the coordinates in int32 (mm unless UTM northings)
    expect(h.SourceGroupScalar).toEqual(Array(nt).fill(scalar));
    expect(h.SourceX).toEqual(x.map((v) => Math.round(v * -scalar)));
    expect(h.SourceY).toEqual(y.map((v) => Math.round(v * -scalar)));
    expect(h.GroupX).toEqual(h.SourceX);
    expect(h.CDP_X).toEqual(h.SourceX);
    expect(h.CDP_Y).toEqual(h.SourceY);
    expect(h.CoordinateUnits).toEqual(Array(nt).fill(1));
    expect(h.TRACE_SAMPLE_COUNT).toEqual(Array(nt).fill(ns));
    expect(h.TRACE_SEQUENCE_LINE).toEqual(Array.from({ length: nt }, (_, i) => i + 1));
    expect(h.TRACE_SEQUENCE_FILE).toEqual(Array.from({ length: nt }, (_, i) => i + 1));
    expect(h.ElevationScalar).toEqual(Array(nt).fill(-100));
    expect(h.SourceSurfaceElevation).toEqual(elevation.map((v) => Math.round(v * 100)));

    // Textual headers: segyio decodes as EBCDIC; raw first byte tells the encoding ('C' = 0xC3 / 0x43).
    expect(d.raw.textFirstByte).toBe(c.textEncoding === 'ebcdic' ? 0xc3 : 0x43);
    if (c.textEncoding === 'ebcdic') {
      expect(d.text[0]!.slice(0, 80).trimEnd()).toBe('C01 LAMINA WRITER TEST');
      expect(d.text[0]!.slice(80, 160).trimEnd()).toBe(`C02 FORMAT ${c.format}`);
      expect(d.text.slice(1).map((t) => t.trimEnd())).toEqual(ext);
    }

    // Rev 2 fields by struct, SEG-Y_r2.0 Table 2.
    expect(d.raw.revisionMajor).toBe(c.revision);
    expect(d.raw.revisionMinor).toBe(0);
    expect(d.raw.fixedLength).toBe(1);
    expect(d.raw.extTextCount).toBe(c.ext);
    if (c.revision === 2) {
      expect(d.raw.extIntervalUs).toBe(c.dtNs / 1000);
      expect(d.raw.extSamples).toBe(ns);
      expect(d.raw.byteOrderConstantBE).toBe(c.littleEndian ? 0x04030201 : 0x01020304);
      expect(d.raw.traceCount).toBe(nt);
      expect(d.raw.firstTraceOffset).toBe(3600 + 3200 * c.ext);
    } else {
      expect(d.raw.extIntervalUs).toBe(0);
      expect(d.raw.byteOrderConstantBE).toBe(0);
    }

    // And our reader agrees with segyio on every sample (as float32: int32 beyond 2^24 rounds).
    const back = await readSegyLine(file, { sampleIntervalNs: 0.5 });
    expect(Array.from(back.line.data)).toEqual(d.samples.map(Math.fround));
    expect(back.info.revision).toEqual({ major: c.revision, minor: 0 });
    expect(back.info.textEncoding).toBe(c.textEncoding);
    expect(back.info.dtNs).toBe(c.revision === 2 ? 0.1 : 0.5);
    for (let i = 0; i < nt; i++) {
      expect(Math.abs(back.line.x[i]! - x[i]!)).toBeLessThanOrEqual(0.5 / -scalar + 1e-9);
      expect(Math.abs(back.headers.elevation[i]! - elevation[i]!)).toBeLessThanOrEqual(0.005 + 1e-9);
    }
  });
});
