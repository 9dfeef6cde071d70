import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isInputError } from '@lamina/errors';
import { checkSiteJson, parsePlan, parsePositionsCsv, positionsFromFixes, resolveCrs } from '../src';

// Property tests (issue 7): random and mutated inputs give a result or an InputError, never a crash.
const onlyInputErrors = (fn: () => unknown): void => {
  try {
    fn();
  } catch (e) {
    if (!isInputError(e)) throw e;
  }
};
const crs = resolveCrs('EPSG:32617');
const goodSite = { name: 'x', crs: 'EPSG:32617', antenna: { frequencyMHz: 400, separationM: 0.16 }, lines: [{ file: 'a.sgy', start: [0, 0], end: [1, 1] }] };
const goodPlan = {
  type: 'FeatureCollection',
  features: [
    { type: 'Feature', properties: { kind: 'building' }, geometry: { type: 'Polygon', coordinates: [[[-81, 35], [-80.999, 35], [-80.999, 35.001], [-81, 35]]] } },
    { type: 'Feature', properties: { kind: 'fence', postSpacingM: 2 }, geometry: { type: 'LineString', coordinates: [[-81, 35], [-80.999, 35]] } },
  ],
};

/** Replace the value at a random path of `doc` with `v`. */
function mutate(doc: unknown, pick: number[], v: unknown): unknown {
  const copy = structuredClone(doc) as Record<string, unknown>;
  let node: unknown = copy;
  for (let d = 0; d < pick.length; d++) {
    if (node === null || typeof node !== 'object') break;
    const keys = Object.keys(node);
    if (!keys.length) break;
    const k = keys[(pick[d] as number) % keys.length] as string;
    if (d === pick.length - 1 || typeof (node as Record<string, unknown>)[k] !== 'object') {
      (node as Record<string, unknown>)[k] = v;
      break;
    }
    node = (node as Record<string, unknown>)[k];
  }
  return copy;
}

describe('parsers under random input', () => {
  it('site.json: any JSON value', () => {
    fc.assert(fc.property(fc.jsonValue(), (v) => void checkSiteJson(v)), { numRuns: 300 });
  });
  it('site.json: mutated valid manifests', () => {
    fc.assert(
      fc.property(fc.array(fc.nat(), { minLength: 1, maxLength: 5 }), fc.jsonValue(), (pick, v) => {
        const r = checkSiteJson(mutate(goodSite, pick, v));
        expect(r.value !== undefined || r.problems.length > 0).toBe(true);
      }),
      { numRuns: 400 },
    );
  });
  it('plan.geojson: any JSON value and mutated valid plans', () => {
    fc.assert(fc.property(fc.jsonValue(), (v) => onlyInputErrors(() => parsePlan(v, 'p', { crs }))), { numRuns: 300 });
    fc.assert(
      fc.property(fc.array(fc.nat(), { minLength: 1, maxLength: 7 }), fc.jsonValue(), (pick, v) => onlyInputErrors(() => parsePlan(mutate(goodPlan, pick, v), 'p', { crs }))),
      { numRuns: 400 },
    );
  });
  it('positions CSV: random text', () => {
    const cell = fc.oneof(fc.integer({ min: -5, max: 30 }).map(String), fc.double().map(String), fc.string({ maxLength: 4 }));
    const row = fc.tuple(fc.array(cell, { maxLength: 4 }), fc.constantFrom(',', ';', '\t')).map(([c, sep]) => c.join(sep));
    fc.assert(
      fc.property(fc.array(row, { maxLength: 12 }), (rows) => onlyInputErrors(() => positionsFromFixes(parsePositionsCsv(rows.join('\n'), 'p.csv'), 20, 'p.csv'))),
      { numRuns: 400 },
    );
  });
});
