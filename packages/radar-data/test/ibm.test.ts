import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { float32ToIbmWords, ibmToNumber, ibmWordsToFloat32, numberToIbm } from '../src';

// Known values from the IBM System/360 hexadecimal floating-point definition:
// value = (-1)^sign * 0.fraction(24 bits) * 16^(exponent - 64).
const KNOWN: [number, number][] = [
  [0x42640000, 100.0], // 0x64 / 256 * 16^2
  [0xc276a000, -118.625], // the classic worked example: 0x76A / 4096 * 16^2
  [0x41100000, 1.0],
  [0xc1100000, -1.0],
  [0x40800000, 0.5],
  [0x41200000, 2.0],
  [0x4019999a, 0x19999a / 2 ** 24], // 0.1 rounded to nearest: 0.10000002384185791
  [0x00100000, 16 ** -65], // smallest normalised
  [0x7fffffff, (1 - 16 ** -6) * 16 ** 63], // largest, about 7.237e75
  [0x00000000, 0],
];

describe('IBM float', () => {
  it('decodes known values', () => {
    for (const [bits, v] of KNOWN) expect(ibmToNumber(bits)).toBe(v);
  });

  it('encodes known values (round to nearest)', () => {
    expect(numberToIbm(100)).toBe(0x42640000);
    expect(numberToIbm(-118.625)).toBe(0xc276a000);
    expect(numberToIbm(1)).toBe(0x41100000);
    expect(numberToIbm(0.1)).toBe(0x4019999a);
    expect(numberToIbm(0)).toBe(0);
    expect(numberToIbm(16 ** -66)).toBe(0x00010000); // below normalised: kept unnormalised at exponent 0
    expect(numberToIbm(1e80)).toBe(0x7fffffff);
    expect(numberToIbm(-Infinity)).toBe(0xffffffff);
  });

  it('normalised IBM words within float32 range survive number -> IBM exactly', () => {
    // exponents 33..96 keep |v| inside float32's normal range (2^-126 .. 2^128)
    const word = fc.record({ sign: fc.boolean(), exp: fc.integer({ min: 34, max: 96 }), frac: fc.integer({ min: 0x100000, max: 0xffffff }) })
      .map(({ sign, exp, frac }) => ((sign ? 0x80000000 : 0) | (exp << 24) | frac) >>> 0);
    fc.assert(fc.property(word, (w) => {
      const v = ibmToNumber(w);
      expect(Math.fround(v)).toBe(v); // at most 24 significant bits: exact in float32
      expect(numberToIbm(v)).toBe(w);
      const out = new Float32Array(1);
      ibmWordsToFloat32(Uint32Array.of(w), out);
      expect(out[0]).toBe(v);
    }), { numRuns: 2000 });
  });

  it('float32 -> IBM -> float32 has relative error at most 2^-21', () => {
    fc.assert(fc.property(fc.float({ noNaN: true, noDefaultInfinity: true, min: Math.fround(-3e38), max: Math.fround(3e38) }), (f) => {
      const words = new Uint32Array(1);
      float32ToIbmWords([f], words);
      const back = ibmToNumber(words[0]!);
      expect(Math.abs(back - f)).toBeLessThanOrEqual(Math.abs(f) * 2 ** -21);
    }), { numRuns: 5000 });
  });
});
