// Property-based checks (fast-check): random and mutated files never crash the reader with anything but
// an InputError, never hang, and never size a buffer from a header without checking it against the file.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isInputError } from '@lamina/errors';
import { MAX_SAMPLES, ibmToNumber, numberToIbm, openSegy, readSegyLine, writeSegy, type SampleFormat } from '../src';
import { tempDir } from './helpers';

let tmp: ReturnType<typeof tempDir>;
beforeAll(() => {
  tmp = tempDir();
});
afterAll(() => tmp.remove());

let n = 0;
/** Open and read everything; returns 'ok' or 'input-error'; anything else fails the property. */
async function readAll(bytes: Uint8Array): Promise<'ok' | 'input-error'> {
  const file = join(tmp.dir, `f${n++ % 8}.sgy`);
  writeFileSync(file, bytes);
  const started = Date.now();
  try {
    const r = await openSegy(file, n % 2 ? { sampleIntervalNs: 0.1 } : {});
    try {
      // Allocation bound: every buffer is sized from nSamples/nTraces, which open checked against the size.
      expect(r.nSamples).toBeLessThanOrEqual(MAX_SAMPLES);
      expect(r.dataOffset + r.nTraces * r.traceBytes).toBeLessThanOrEqual(bytes.length);
      expect(r.nTraces * r.nSamples).toBeLessThanOrEqual(bytes.length);
      const data = await r.readTraces(0, r.nTraces);
      expect(data.length).toBe(r.nTraces * r.nSamples);
      await r.readTraceHeaders(0, r.nTraces);
      let seen = 0;
      for await (const c of r.chunks(3)) seen += c.count;
      expect(seen).toBe(r.nTraces);
    } finally {
      await r.close();
    }
    return 'ok';
  } catch (e) {
    if (isInputError(e)) return 'input-error';
    throw e;
  } finally {
    expect(Date.now() - started).toBeLessThan(5000);
  }
}

const spec = fc.record({
  format: fc.constantFrom<SampleFormat>(1, 2, 3, 5, 8),
  littleEndian: fc.boolean(),
  nSamples: fc.oneof(fc.integer({ min: 1, max: 40 }), fc.integer({ min: 4000, max: 6000 })),
  nTraces: fc.integer({ min: 1, max: 12 }),
  dtNs: fc.constantFrom(0.05, 0.1, 0.125, 0.4, 1000),
  ext: fc.integer({ min: 0, max: 2 }),
  seed: fc.integer(),
});

type Spec = typeof spec extends fc.Arbitrary<infer T> ? T : never;

async function validFile(s: Spec): Promise<{ bytes: Uint8Array; data: Float32Array; x: number[] }> {
  const data = new Float32Array(s.nSamples * s.nTraces);
  let a = s.seed >>> 0;
  for (let i = 0; i < data.length; i++) {
    a = (Math.imul(a, 1664525) + 1013904223) >>> 0;
    data[i] = ((a / 2 ** 32) - 0.5) * (s.format === 8 ? 250 : s.format === 3 ? 6e4 : 1e6);
  }
  const x = Array.from({ length: s.nTraces }, (_, i) => 500000 + i * 0.123);
  const file = join(tmp.dir, 'valid.sgy');
  await writeSegy(file, {
    nSamples: s.nSamples, dtNs: s.dtNs, format: s.format, littleEndian: s.littleEndian,
    extendedTextHeaders: Array.from({ length: s.ext }, () => '((SEG: nothing))'),
    traces: { data, x, y: x },
  });
  return { bytes: new Uint8Array(readFileSync(file)), data, x };
}

describe('reader under random input', () => {
  it('random bytes give a result or an InputError', async () => {
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ minLength: 0, maxLength: 9000 }), async (bytes) => {
        expect(['ok', 'input-error']).toContain(await readAll(bytes));
      }),
      { numRuns: 150 },
    );
  });

  it('mutated and truncated valid files give a result or an InputError', async () => {
    const mutation = fc.record({
      where: fc.constantFrom('binary', 'trace-header', 'anywhere'),
      at: fc.nat(),
      value: fc.oneof(fc.integer({ min: 0, max: 255 }), fc.constantFrom(0, 0xff, 0x7f, 0x80)),
    });
    await fc.assert(
      fc.asyncProperty(spec, fc.array(mutation, { maxLength: 6 }), fc.option(fc.nat()), async (s, muts, cut) => {
        const { bytes } = await validFile(s);
        const b = bytes.slice();
        const tb = 240 + s.nSamples * ({ 1: 4, 2: 4, 3: 2, 5: 4, 8: 1 } as const)[s.format];
        for (const m of muts) {
          const i = m.where === 'binary' ? 3200 + (m.at % 400)
            : m.where === 'trace-header' ? 3600 + 3200 * s.ext + (m.at % s.nTraces) * tb + (m.at % 240)
            : m.at % b.length;
          b[i] = m.value;
        }
        const out = cut === null ? b : b.subarray(0, cut % (b.length + 1));
        expect(['ok', 'input-error']).toContain(await readAll(out));
      }),
      { numRuns: 250 },
    );
  });

  it('writer -> reader round trip for random specs', async () => {
    await fc.assert(
      fc.asyncProperty(spec, async (s) => {
        const { bytes, data, x } = await validFile(s);
        const file = join(tmp.dir, 'rt.sgy');
        writeFileSync(file, bytes);
        const r = await readSegyLine(file, { sampleIntervalNs: 0.2 });
        expect(r.info).toMatchObject({ format: s.format, littleEndian: s.littleEndian, nSamples: s.nSamples, nTraces: s.nTraces });
        expect(r.info.dtNs).toBe(s.dtNs <= 10 ? s.dtNs : 0.2);
        expect(r.extendedTextHeaders.length).toBe(s.ext);
        for (let i = 0; i < data.length; i++) {
          const v = data[i]!;
          const rounded = Math.round(Math.abs(v)) * Math.sign(v) || 0;
          const want = s.format === 5 ? v
            : s.format === 1 ? Math.fround(ibmToNumber(numberToIbm(v)))
            : s.format === 2 ? Math.fround(rounded)
            : s.format === 3 ? Math.max(-32768, Math.min(32767, rounded))
            : Math.max(-128, Math.min(127, rounded));
          if (!Object.is(r.line.data[i], want)) expect(r.line.data[i], `sample ${i}`).toBe(want);
        }
        // UTM-size x under scalar -1000 fits int32 up to 2147483.647: millimetres kept.
        for (let t = 0; t < s.nTraces; t++) expect(Math.abs(r.line.x[t]! - x[t]!)).toBeLessThanOrEqual(0.0005 + 1e-9);
      }),
      { numRuns: 120 },
    );
  });
});
