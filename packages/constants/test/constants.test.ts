import { describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '../src';

describe('C_M_PER_NS', () => {
  it('is c = 299 792 458 m/s (SI definition, exact) to four figures, in m/ns', () => {
    expect(C_M_PER_NS).toBeCloseTo(299_792_458 * 1e-9, 4);
  });
});
