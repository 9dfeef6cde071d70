import { describe, expect, it } from 'vitest';
import { InputError, formatError, isInputError } from '../src';

describe('InputError', () => {
  it('names the file, then the field or byte offset, then what is wrong', () => {
    const e = new InputError('lines/l01.sgy', 'expected format 1, 2, 3, 5 or 8, found 4', { field: 'sample format (bytes 3225-3226)' });
    expect(e.message).toBe('lines/l01.sgy: sample format (bytes 3225-3226): expected format 1, 2, 3, 5 or 8, found 4');
    expect(isInputError(e)).toBe(true);
    expect(formatError(e)).toBe(`error: ${e.message}`);
    expect(new InputError('a.csv', 'not a number', { line: 7 }).message).toBe('a.csv: line 7: not a number');
    expect(new InputError('b.sgy', 'truncated', { offset: 3600 }).message).toBe('b.sgy: byte offset 3600: truncated');
    expect(formatError(new Error('boom'))).toBe('internal error: boom');
  });
  it('is one line whatever the detail quotes', () => {
    expect(new InputError('plan.geojson', 'expected valid JSON, found (Unexpected token "trace,x,y\n1,2")', { line: 1 }).message).toBe('plan.geojson: line 1: expected valid JSON, found (Unexpected token "trace,x,y 1,2")');
  });
});
