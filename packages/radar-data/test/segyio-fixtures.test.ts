// Files written by Debian's python3-segyio (test/data/make_segyio_fixtures.py) read back by our reader:
// samples must equal what segyio itself reads back, exactly, in every format and both byte orders.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openSegy, readSegyLine, textLines } from '../src';
import { DATA, python, tempDir } from './helpers';

interface Entry {
  file: string;
  format: number;
  endian: 'big' | 'little';
  variant: 'plain' | 'rev2';
  nTraces: number;
  nSamples: number;
  samples: number[];
  text0: string;
  ext: string[];
  dtUs: number | null;
  headers: Record<string, number[]>;
}

let tmp: ReturnType<typeof tempDir>;
let entries: Entry[] = [];

beforeAll(() => {
  tmp = tempDir();
  const manifest = python([join(DATA, 'make_segyio_fixtures.py'), tmp.dir]).trim();
  entries = (JSON.parse(readFileSync(manifest, 'utf8')) as { files: Entry[] }).files;
});
afterAll(() => tmp.remove());

describe('segyio-written files', () => {
  it('covers every format and both byte orders', () => {
    const seen = new Set(entries.map((e) => `${e.format}/${e.endian}/${e.variant}`));
    expect(seen.size).toBe(20);
  });

  it('read back sample-exact with the same headers', async () => {
    for (const e of entries) {
      // The plain files carry no usable interval (segyio writes whole microseconds): the override applies.
      const { line, headers, info, textHeader, extendedTextHeaders } = await readSegyLine(join(tmp.dir, e.file), {
        sampleIntervalNs: 0.4,
      });
      const what = e.file;
      expect(info.format, what).toBe(e.format);
      expect(info.littleEndian, what).toBe(e.endian === 'little');
      expect(info.nTraces, what).toBe(e.nTraces);
      expect(info.nSamples, what).toBe(e.nSamples);
      if (e.variant === 'rev2') {
        expect(info.revision, what).toEqual({ major: 2, minor: 0 });
        expect(info.dtSource, what).toBe('extended');
        expect(info.dtNs, what).toBeCloseTo(e.dtUs! * 1000, 12);
        expect(info.textEncoding, what).toBe('ascii');
      } else {
        expect(info.revision.major, what).toBe(0);
        expect(info.dtSource, what).toBe('override');
        expect(info.dtNs, what).toBe(0.4);
        expect(info.textEncoding, what).toBe('ebcdic');
      }
      expect(textHeader.trimEnd(), what).toBe(e.text0.trimEnd());
      expect(textLines(textHeader)[0], what).toMatch(/^C01 /);
      expect(extendedTextHeaders.map((t) => t.trimEnd()), what).toEqual(e.ext.map((t) => t.trimEnd()));
      // float32 of segyio's value (segyio returns int32 for format 2; we return float32 like every format)
      const expected = Float32Array.from(e.samples);
      expect(line.data.length, what).toBe(expected.length);
      let mismatch = -1;
      for (let i = 0; i < expected.length && mismatch < 0; i++) if (!Object.is(line.data[i], expected[i])) mismatch = i;
      expect(mismatch, `${what}: first differing sample`).toBe(-1);
      for (const [k, v] of Object.entries(e.headers)) {
        expect(Array.from(headers[k as keyof typeof headers]), `${what} ${k}`).toEqual(v);
      }
    }
  });

  it('streams the same samples in chunks of any size', async () => {
    const e = entries.find((x) => x.format === 1 && x.endian === 'little' && x.variant === 'rev2')!;
    const r = await openSegy(join(tmp.dir, e.file));
    try {
      for (const per of [1, 2, 3, 7, 100]) {
        const got: number[] = [];
        for await (const c of r.chunks(per)) got.push(...c.data);
        expect(Float32Array.from(got)).toEqual(Float32Array.from(e.samples));
      }
    } finally {
      await r.close();
    }
  });
});
