import { existsSync, readdirSync, readFileSync, statSync, truncateSync, writeFileSync } from 'node:fs';
import { open } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  BLOCK_BYTES,
  cardImages,
  emptyLine,
  encodeText,
  openSegy,
  openSegyWriter,
  readSegyLine,
  textLines,
  writeSegy,
  writeSegyLine,
} from '../src';
import { rng, tempDir } from './helpers';

let tmp: ReturnType<typeof tempDir>;
beforeAll(() => {
  tmp = tempDir();
});
afterAll(() => tmp.remove());

function line(nt: number, ns: number, seed = 1) {
  const r = rng(seed);
  const l = emptyLine('l', nt, ns, 0.1);
  for (let i = 0; i < l.data.length; i++) l.data[i] = (r() - 0.5) * 200;
  for (let t = 0; t < nt; t++) {
    l.x[t] = 1000.5 + 0.05 * t;
    l.y[t] = 2000.25 - 0.02 * t;
  }
  return l;
}

describe('reader', () => {
  it('reads ranges, headers and chunks consistently', async () => {
    const l = line(37, 33);
    const file = join(tmp.dir, 'a.sgy');
    await writeSegyLine(file, l, { littleEndian: true });
    const r = await openSegy(file);
    try {
      expect(r.info()).toMatchObject({ nTraces: 37, nSamples: 33, dtNs: 0.1, dtSource: 'extended', littleEndian: true, format: 5, dataOffset: 3600, traceBytes: 240 + 132 });
      const part = await r.readTraces(5, 3);
      expect(part).toEqual(l.data.subarray(5 * 33, 8 * 33));
      const out = new Float32Array(100 * 33).fill(7);
      expect(await r.readTraces(0, 37, out)).toBe(out);
      expect(out.subarray(0, 37 * 33)).toEqual(l.data);
      expect(out[37 * 33]).toBe(7);
      const h = await r.readTraceHeaders(30, 7);
      expect(Array.from(h.sequence)).toEqual([31, 32, 33, 34, 35, 36, 37]);
      expect(Array.from(h.cdpX)).toEqual(Array.from(l.x.subarray(30)).map((v) => Math.round(v * 1000) / 1000));
      expect(Array.from(h.coordUnits)).toEqual(Array(7).fill(1));
      // Overlapping reads on one reader (one scratch buffer) stay correct.
      const all = await Promise.all(Array.from({ length: 8 }, (_, k) => r.readTraces(k, 29)));
      all.forEach((a, k) => expect(a).toEqual(l.data.subarray(k * 33, (k + 29) * 33)));
      let count = 0;
      for await (const c of r.chunks(10)) {
        expect(c.data).toEqual(l.data.subarray(c.first * 33, (c.first + c.count) * 33));
        expect(c.headers.sequence[0]).toBe(c.first + 1);
        count += c.count;
      }
      expect(count).toBe(37);
      // Leaving early waits for the chunk read ahead; the reader stays usable.
      for await (const c of r.chunks(4)) {
        expect(c.first).toBe(0);
        break;
      }
      expect((await r.readTraces(36, 1))[0]).toBe(l.data[36 * 33]);
      await expect(r.readTraces(30, 8)).rejects.toThrow(RangeError);
      await expect(r.readTraces(-1, 1)).rejects.toThrow(RangeError);
    } finally {
      await r.close();
    }
    await r.close(); // idempotent
  });

  it('reads the same with synchronous calls (syncIo)', async () => {
    const l = line(41, 17, 5);
    const file = join(tmp.dir, 'sync.sgy');
    await writeSegyLine(file, l);
    const read = async (syncIo: boolean) => {
      const r = await openSegy(file, { syncIo });
      try {
        return { info: r.info(), data: await r.readTraces(0, 41), part: await r.readTraces(7, 5), headers: await r.readTraceHeaders(0, 41) };
      } finally {
        await r.close();
      }
    };
    const [a, s] = [await read(false), await read(true)];
    expect(s).toEqual(a);
    expect(s.data).toEqual(l.data);
  });

  it('surfaces a bad sample from chunks() at the chunk that holds it', async () => {
    const l = line(9, 8);
    l.data[6 * 8 + 2] = NaN;
    const file = join(tmp.dir, 'nan-chunks.sgy');
    // The writer refuses NaN, so write a clean file and put the NaN in by hand.
    await writeSegyLine(file, { ...l, data: l.data.map((v) => (Number.isNaN(v) ? 0 : v)) });
    const b = readFileSync(file);
    b.writeFloatBE(NaN, 3600 + 6 * (240 + 32) + 240 + 8);
    writeFileSync(file, b);
    const r = await openSegy(file, { name: 'n.sgy' });
    const firsts: number[] = [];
    await expect((async () => {
      for await (const c of r.chunks(3)) firsts.push(c.first);
    })()).rejects.toThrow('n.sgy: trace 7 of 9, sample 3 of 8: byte offset 5480: expected a finite sample value, found NaN');
    expect(firsts).toEqual([0, 3]);
    await r.close();
  });

  it('chooses the coordinates for readSegyLine', async () => {
    const file = join(tmp.dir, 'coords.sgy');
    const data = new Float32Array(3 * 4);
    await writeSegy(file, { nSamples: 4, dtNs: 0.2, traces: { data, sourceX: [1, 2, 3], sourceY: [4, 5, 6] } });
    const auto = await readSegyLine(file, { id: 'L7' });
    expect(auto.coordinateSource).toBe('source');
    expect(Array.from(auto.line.x)).toEqual([1, 2, 3]);
    expect(auto.line.id).toBe('L7');
    const cdp = await readSegyLine(file, { coordinates: 'cdp' });
    expect(cdp.coordinateSource).toBe('cdp');
    expect(Array.from(cdp.line.x)).toEqual([0, 0, 0]);
    expect(cdp.line.id).toBe('coords');
    const none = join(tmp.dir, 'none.sgy');
    await writeSegy(none, { nSamples: 4, dtNs: 0.2, traces: { data } });
    expect((await readSegyLine(none)).coordinateSource).toBe('none');
  });

  it('reads fixed and variable extended textual headers', async () => {
    const file = join(tmp.dir, 'ext.sgy');
    const l = line(4, 8);
    await writeSegyLine(file, l, { extendedTextHeaders: ['((SEG: Lamina ver 1.0))', '((SEG: EndText))'], textEncoding: 'ascii' });
    const r = await readSegyLine(file);
    expect(r.extendedTextHeaders.map((t) => t.trimEnd())).toEqual(['((SEG: Lamina ver 1.0))', '((SEG: EndText))']);
    expect(r.line.data).toEqual(l.data);
    // The same file with a count of -1: the reader scans for the EndText stanza.
    const bytes = readFileSync(file);
    bytes.writeInt16BE(-1, 3504);
    const variable = join(tmp.dir, 'ext-variable.sgy');
    writeFileSync(variable, bytes);
    const v = await readSegyLine(variable);
    expect(v.extendedTextHeaders.length).toBe(2);
    expect(v.line.data).toEqual(l.data);
  });

  it('skips rev 2 additional trace headers and data trailers', async () => {
    const l = line(5, 16);
    const file = join(tmp.dir, 'plain.sgy');
    await writeSegyLine(file, l);
    const b = readFileSync(file);
    const tb = 240 + 64;
    const out = Buffer.alloc(3600 + 5 * (tb + 240) + 3200, 0x20);
    b.copy(out, 0, 0, 3600);
    out.writeInt32BE(1, 3506); // one additional 240-byte header per trace
    out.writeInt32BE(1, 3528); // one 3200-byte data trailer record
    for (let t = 0; t < 5; t++) {
      const src = 3600 + t * tb;
      const dst = 3600 + t * (tb + 240);
      b.copy(out, dst, src, src + 240);
      out.fill(0, dst + 240, dst + 480);
      b.copy(out, dst + 480, src + 240, src + tb);
    }
    const ext = join(tmp.dir, 'extra.sgy');
    writeFileSync(ext, out);
    const r = await readSegyLine(ext);
    expect(r.info.additionalTraceHeaders).toBe(1);
    expect(r.info.traceBytes).toBe(tb + 240);
    expect(r.line.data).toEqual(l.data);
    expect(Array.from(r.headers.sequence)).toEqual([1, 2, 3, 4, 5]);
  });

  it('takes the interval from the file before the override, the override before an implausible one', async () => {
    const file = join(tmp.dir, 'dt.sgy');
    await writeSegyLine(file, { ...line(2, 4), dtNs: 0.25 });
    const r = await openSegy(file, { sampleIntervalNs: 0.5 });
    expect([r.dtNs, r.dtSource]).toEqual([0.25, 'extended']);
    await r.close();
    // Bytes 3217-3218 alone (rev 1 with a whole-microsecond interval is beyond radar: override wins).
    const rev1 = join(tmp.dir, 'dt1.sgy');
    await writeSegy(rev1, { nSamples: 4, dtNs: 4000, revision: 1, traces: { data: new Float32Array(8) } });
    const r1 = await openSegy(rev1, { sampleIntervalNs: 0.5 });
    expect([r1.dtNs, r1.dtSource, r1.revision.major, r1.binary.sampleIntervalUs]).toEqual([0.5, 'override', 1, 4]);
    await r1.close();
  });

  it('reads revision 1 written as a swapped 16-bit field', async () => {
    const file = join(tmp.dir, 'rev.sgy');
    await writeSegy(file, { nSamples: 4, dtNs: 1000, revision: 1, traces: { data: new Float32Array(8) } });
    const b = readFileSync(file);
    b[3500] = 0;
    b[3501] = 1;
    writeFileSync(file, b);
    const r = await openSegy(file, { sampleIntervalNs: 1 });
    expect(r.revision).toEqual({ major: 1, minor: 0 });
    await r.close();
  });

  it('decodes the textual header in either encoding', async () => {
    for (const enc of ['ebcdic', 'ascii'] as const) {
      const file = join(tmp.dir, `text-${enc}.sgy`);
      await writeSegyLine(file, line(1, 4), { textEncoding: enc, textHeader: ['CLIENT: INVENTED YARD', 'ANTENNA 400 MHZ'] });
      const r = await openSegy(file);
      expect(r.textEncoding).toBe(enc);
      expect(textLines(r.textHeader).slice(0, 3)).toEqual(['C01 CLIENT: INVENTED YARD', 'C02 ANTENNA 400 MHZ', 'C03']);
      await r.close();
    }
  });

  it('streams a sparse 4.4 GB file without reading it whole', async () => {
    const ns = 1024;
    const tb = 240 + 4 * ns;
    const nt = Math.ceil(4.4e9 / tb);
    const file = join(tmp.dir, 'big.sgy');
    await writeSegy(file, { nSamples: ns, dtNs: 0.1, traces: { data: new Float32Array(ns).fill(1) } });
    const fh = await open(file, 'r+');
    const count = Buffer.alloc(8);
    count.writeBigUInt64BE(BigInt(nt));
    await fh.write(count, 0, 8, 3512);
    await fh.close();
    truncateSync(file, 3600 + nt * tb);
    // Mark the last trace so a wrong position would show.
    const last = await open(file, 'r+');
    const mark = Buffer.alloc(4);
    mark.writeFloatBE(42.5);
    await last.write(mark, 0, 4, 3600 + (nt - 1) * tb + 240 + 4 * 7);
    await last.close();
    expect(statSync(file).size).toBeGreaterThan(2 ** 32);

    const before = process.memoryUsage();
    const r = await openSegy(file);
    try {
      expect(r.nTraces).toBe(nt);
      const tail = await r.readTraces(nt - 1, 1);
      expect(tail[7]).toBe(42.5);
      expect((await r.readTraces(0, 1))[0]).toBe(1);
      // A few chunks across byte 2^32.
      const from = Math.floor(2 ** 32 / tb) - 4000;
      for (let k = 0; k < 4; k++) {
        const c = await r.readChunk(from + k * 2000, 2000);
        expect(c.data.length).toBe(2000 * ns);
      }
      const h = await r.readTraceHeaders(nt - 10, 10);
      expect(h.sequence.length).toBe(10);
    } finally {
      await r.close();
    }
    const after = process.memoryUsage();
    // Bounded: the chunks (4 x 8 MB floats) and one 8 MB scratch, nowhere near the 4.4 GB file.
    expect(after.arrayBuffers - before.arrayBuffers).toBeLessThan(200 * 2 ** 20);
    expect(after.rss - before.rss).toBeLessThan(600 * 2 ** 20);
    expect(BLOCK_BYTES).toBeLessThanOrEqual(8 * 2 ** 20);
  });
});

describe('writer', () => {
  it('streams chunks through openSegyWriter and renames into place only on close', async () => {
    const file = join(tmp.dir, 'stream.sgy');
    const l = line(25, 12);
    const w = await openSegyWriter(file, { nSamples: 12, dtNs: 0.1 });
    for (let t = 0; t < 25; t += 10) {
      const n = Math.min(10, 25 - t);
      await w.write({ data: l.data.subarray(t * 12, (t + n) * 12), x: l.x.subarray(t, t + n), y: l.y.subarray(t, t + n) });
      expect(existsSync(file)).toBe(false);
    }
    expect(w.nTraces).toBe(25);
    expect(await w.close()).toEqual({ path: file, nTraces: 25, bytes: 3600 + 25 * (240 + 48) });
    const back = await readSegyLine(file);
    expect(back.line.data).toEqual(l.data);
    expect(readdirSync(tmp.dir).filter((f) => f.includes('.partial-'))).toEqual([]);
  });

  it('refuses what the revision cannot hold and leaves no file on error', async () => {
    const file = join(tmp.dir, 'refused.sgy');
    const data = new Float32Array(8);
    await expect(writeSegy(file, { nSamples: 4, dtNs: 0.1, revision: 1, traces: { data } })).rejects.toThrow(
      'SEG-Y rev 1 cannot store a sample interval of 0.1 ns (not whole microseconds); write rev 2',
    );
    await expect(writeSegy(file, { nSamples: 4, dtNs: 1000, revision: 1, littleEndian: true, traces: { data } })).rejects.toThrow(
      'SEG-Y rev 1 cannot store little-endian byte order; write rev 2',
    );
    const nan = Float32Array.of(0, 1, NaN, 3);
    await expect(writeSegy(file, { nSamples: 4, dtNs: 0.1, traces: [{ data }, { data: nan }] })).rejects.toThrow('trace 3 sample 3 is NaN');
    await expect(writeSegy(file, { nSamples: 3, dtNs: 0.1, traces: { data } })).rejects.toThrow('not a whole number of 3-sample traces');
    await expect(writeSegy(file, { nSamples: 4, dtNs: 0.1, traces: { data, x: [1] } })).rejects.toThrow('x holds 1 values for 2 traces');
    expect(existsSync(file)).toBe(false);
    expect(readdirSync(tmp.dir).filter((f) => f.includes('.partial-'))).toEqual([]);
  });

  it('defaults: rev 1 for whole microseconds, rev 2 otherwise; a custom 3200-character text', async () => {
    const file = join(tmp.dir, 'defaults.sgy');
    const text = cardImages(['MY OWN HEADER']);
    await writeSegy(file, { nSamples: 4, dtNs: 1000, textHeader: text, traces: { data: new Float32Array(4) } });
    const b = readFileSync(file);
    expect([b[3500], b[3501]]).toEqual([1, 0]);
    expect(Buffer.from(encodeText(text, 'ebcdic')).equals(b.subarray(0, 3200))).toBe(true);
    await writeSegy(file, { nSamples: 4, dtNs: 0.5, traces: { data: new Float32Array(4) } });
    expect(readFileSync(file)[3500]).toBe(2);
  });

  it('keeps millimetres under scalar -1000 and coarsens only when int32 overflows', async () => {
    const file = join(tmp.dir, 'scalar.sgy');
    const x = [0.001, -2147483.647, 3e6 + 0.01, 3e8 + 20];
    await writeSegy(file, { nSamples: 2, dtNs: 0.1, traces: { data: new Float32Array(8), x, y: [0, 0, 0, 0] } });
    const r = await readSegyLine(file);
    expect(Array.from(r.headers.coordScalar)).toEqual([-1000, -1000, -100, 1]);
    expect(Array.from(r.line.x)).toEqual([0.001, -2147483.647, 3e6 + 0.01, 3e8 + 20]);
  });
});
