import { describe, expect, it } from 'vitest';
import { mkdtemp, writeFile, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { emptyReview, matchDecisions, readReview, upsertDecision, writeReview, type Decision } from '../src';

const site = { name: 'yard', crs: 'EPSG:32617', extent: [-81.0, 35.0, -80.999, 35.001] as [number, number, number, number] };
const d = (id: string, lon: number, lat: number, top = 0.5, bottom = 0.8): Decision => ({
  anomalyId: id,
  anchor: { lon, lat, depthTopM: top, depthBottomM: bottom },
  decision: 'reject',
  updatedAt: '2026-12-01T00:00:00.000Z',
});

describe('review.json', () => {
  it('round-trips through an atomic write and upserts by anomaly id', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'review-'));
    const path = join(dir, 'review.json');
    let r = upsertDecision(emptyReview(site), d('a1', -80.9995, 35.0005));
    r = upsertDecision(r, { ...d('a1', -80.9995, 35.0005), decision: 'accept', utilityType: 'water' });
    await writeReview(path, r);
    const back = await readReview(path, site);
    expect(back.decisions).toHaveLength(1);
    expect(back.decisions[0]!.decision).toBe('accept');
  });

  it('refuses a review.json of another site, naming the field', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'review-'));
    const path = join(dir, 'review.json');
    await writeFile(path, JSON.stringify({ ...emptyReview({ ...site, name: 'other' }) }));
    await expect(readReview(path, site)).rejects.toThrow(/review\.json: site: belongs to another site: expected "yard"/);
  });

  it('names the JSON path of an invalid decision', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'review-'));
    const path = join(dir, 'review.json');
    const bad = { ...emptyReview(site), decisions: [{ ...d('a', -81, 35), decision: 'maybe' }] };
    await writeFile(path, JSON.stringify(bad));
    await expect(readReview(path, site)).rejects.toThrow(/decisions\[0\]\.decision/);
    expect(await readFile(path, 'utf8')).toContain('maybe');
  });

  it('re-keys decisions to renumbered anomalies by geometry and keeps the unmatched', () => {
    // 1e-5 degree of latitude is about 1.1 m (WGS84 meridian arc, ~110.6 km per degree).
    const decisions = [d('a1', -80.9995, 35.0005), d('a2', -80.9990, 35.0009)];
    const anomalies = [
      { id: 'b7', lon: -80.9995, lat: 35.000502, depthTopM: 0.6, depthBottomM: 0.9 },
      { id: 'b8', lon: -80.9990, lat: 35.00093, depthTopM: 0.6, depthBottomM: 0.9 },
    ];
    const { matched, unmatched } = matchDecisions(decisions, anomalies, { toleranceM: 0.5 });
    expect(matched.map((m) => m.anomalyId)).toEqual(['b7']);
    expect(unmatched.map((m) => m.anomalyId)).toEqual(['a2']);
  });
});
