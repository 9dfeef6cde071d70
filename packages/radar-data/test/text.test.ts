import { describe, expect, it } from 'vitest';
import { cardImages, decodeText, detectTextEncoding, encodeText, textLines } from '../src';
import { pythonJson } from './helpers';

describe('textual header', () => {
  it('EBCDIC table equals Python\'s cp037 codec (IBM code page 037)', () => {
    const all = String.fromCharCode(...Array.from({ length: 256 }, (_, i) => i));
    const ref = pythonJson<number[]>("import json; print(json.dumps(list(''.join(chr(i) for i in range(256)).encode('cp037'))))");
    expect(Array.from(encodeText(all, 'ebcdic', 256))).toEqual(ref);
    // decode maps control characters to spaces; printable ones must come back
    const printable = ref.map((b, i) => (i >= 0x20 && i < 0x7f) || i >= 0xa0 ? b : -1).filter((b) => b >= 0);
    const text = decodeText(Uint8Array.from(printable), 'ebcdic');
    expect(text).toBe(String.fromCharCode(...Array.from({ length: 256 }, (_, i) => i).filter((i) => (i >= 0x20 && i < 0x7f) || i >= 0xa0)));
  });

  it('detects the encoding', () => {
    const text = cardImages(['CLIENT LAMINA', 'LINE 1  400 MHZ', 'SEG-Y_REV2.0']);
    expect(detectTextEncoding(encodeText(text, 'ebcdic'))).toBe('ebcdic');
    expect(detectTextEncoding(encodeText(text, 'ascii'))).toBe('ascii');
    expect(detectTextEncoding(new Uint8Array(3200))).toBe('ascii');
    expect(detectTextEncoding(new Uint8Array(3200).fill(0x40))).toBe('ebcdic');
    expect(decodeText(encodeText(text, 'ebcdic'), 'ebcdic')).toBe(text);
  });

  it('builds 40 card images of 80 characters', () => {
    const text = cardImages(['HELLO', 'C02 ALREADY PREFIXED', 'x'.repeat(100)]);
    expect(text.length).toBe(3200);
    const lines = textLines(text);
    expect(lines.length).toBe(40);
    expect(lines[0]).toBe('C01 HELLO');
    expect(lines[1]).toBe('C02 ALREADY PREFIXED');
    expect(lines[2]).toBe(`C03 ${'x'.repeat(76)}`);
    expect(lines[39]).toBe('C40');
    expect(() => cardImages(Array(41).fill(''))).toThrow(RangeError);
  });
});
