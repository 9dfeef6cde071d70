import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CAUTION, CAUTIONS } from '../src';

const words = (s: string) => s.replace(/\s+/g, ' ').trim();

describe('the cautions text', () => {
  it("README.md's Cautions section repeats CAUTIONS word for word, in order", () => {
    const readme = readFileSync(new URL('../../../README.md', import.meta.url), 'utf8');
    const section = readme.slice(readme.indexOf('## Cautions'), readme.indexOf('\n## ', readme.indexOf('## Cautions') + 1));
    const bullets = section.split(/\n- /).slice(1).map(words);
    expect(bullets.slice(0, CAUTIONS.length)).toEqual(CAUTIONS.map(words));
  });
  it('says what the trade requires: not a locate, one-call centre, potholing, depth uncertainty, local codes (common practice, no source)', () => {
    for (const text of [CAUTIONS.join(' '), CAUTION]) {
      expect(text).toMatch(/not a locate/);
      expect(text).toMatch(/one-call/);
      expect(text).toMatch(/pothol/);
      expect(text).toMatch(/uncertain/);
      expect(text).toMatch(/local codes/);
    }
  });
});
