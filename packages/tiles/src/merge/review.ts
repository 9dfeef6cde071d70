/** review.json of a merge: the tiles' decisions (and those of an earlier merge into the same folder) under the merged ids. */
import { join } from 'node:path';
import type { Decision, Review, SiteIdentity } from '@lamina/contracts';
import { matchDecisions, readReview, writeReview } from '@lamina/targets';
import { shownPath } from '@lamina/site';
import type { AnomalyMerge } from './anomalies';
import type { MergeInputs } from './inputs';

export interface ReviewMerge {
  decisions: number;
  /** Decisions that matched no merged anomaly (kept in review.json, not applied, as `process` keeps them). */
  unmatched: number;
}

/**
 * A decision on an anomaly the merge kept takes its merged id; one on an anomaly left to the neighbour
 * (it lay in the overlap) is matched by place and depth (`matchDecisions`); when two decisions land on one
 * anomaly (a joined object reviewed in both tiles, or again in the merged folder), the later one counts.
 */
export async function mergeReview(inputs: MergeInputs, anomalies: AnomalyMerge, identity: SiteIdentity, previous: string, to: string): Promise<ReviewMerge> {
  const byId = new Map(anomalies.anchored.map((a) => [a.id, a]));
  const chosen = new Map<string, Decision>();
  const unmatched: Decision[] = [];
  const take = (d: Decision) => {
    const had = chosen.get(d.anomalyId);
    if (!had || had.updatedAt <= d.updatedAt) chosen.set(d.anomalyId, d);
  };
  const place = (ds: Decision[]) => {
    const m = matchDecisions(ds, anomalies.anchored);
    m.matched.forEach(take);
    unmatched.push(...m.unmatched);
  };
  for (const t of inputs.tiles) {
    const review = await readReview(shownPath(join(t.outDir, 'review.json')), t.run.identity);
    const away: Decision[] = [];
    for (const d of review.decisions) {
      const id = anomalies.ids.get(`${t.entry.id}/${d.anomalyId}`);
      const a = id === undefined ? undefined : byId.get(id);
      if (!a) away.push({ ...d, anomalyId: `${t.entry.id}/${d.anomalyId}` });
      else take({ ...d, anomalyId: a.id, anchor: { lon: a.lon, lat: a.lat, depthTopM: a.depthTopM, depthBottomM: a.depthBottomM } });
    }
    place(away);
  }
  // decisions saved in the merged folder itself (the viewer on a merge), as `process` carries them over
  place((await readReview(shownPath(previous), identity)).decisions);
  const review: Review = { version: 1, site: identity, decisions: [...chosen.values(), ...unmatched] };
  await writeReview(to, review);
  return { decisions: review.decisions.length, unmatched: unmatched.length };
}
