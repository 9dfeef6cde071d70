import { featureId, type Feature } from './data';

/** One anomaly as the review queue lists it. */
export interface QueueItem {
  id: string;
  /** `class` of anomalies.geojson (utility, structure, clutter, above-ground, layer). */
  cls: string;
  origin: string;
  /** Review decision; 'undecided' when none was saved. */
  decision: string;
  topM: number;
  bottomM: number;
  /** Strength above the slice's noise, dB (`strengthDb`); NaN when absent. */
  strengthDb: number;
  confidence: number;
}

export interface QueueFilter {
  cls?: string;
  origin?: string;
  decision?: string;
  /** Depth range the anomaly must meet, m. */
  minDepthM?: number;
  maxDepthM?: number;
  minStrengthDb?: number;
}

export type QueueSort = 'id' | 'depth' | 'strength' | 'confidence';

/** The queue's rows from the anomalies and the saved decisions, in file order. */
export function queueItems(features: Feature[], decisions: { anomalyId: string; decision?: string }[]): QueueItem[] {
  const byId = new Map(decisions.map((d) => [d.anomalyId, d.decision ?? 'undecided']));
  return features.map((f) => {
    const p = f.properties ?? {};
    const id = featureId(f);
    return {
      id,
      cls: String(p.class ?? 'unclassified'),
      origin: String(p.origin ?? 'unknown'),
      decision: byId.get(id) ?? 'undecided',
      topM: Number(p.depthTopM),
      bottomM: Number(p.depthBottomM),
      strengthDb: Number(p.strengthDb ?? Number.NaN),
      confidence: Number(p.confidence ?? Number.NaN),
    };
  });
}

/** Rows passing `filter`, sorted (ties by id, so the order is stable). */
export function filterQueue(items: QueueItem[], filter: QueueFilter, sort: QueueSort = 'id'): QueueItem[] {
  const out = items.filter(
    (q) =>
      (!filter.cls || q.cls === filter.cls) &&
      (!filter.origin || q.origin === filter.origin) &&
      (!filter.decision || q.decision === filter.decision) &&
      (filter.minDepthM === undefined || q.bottomM >= filter.minDepthM) &&
      (filter.maxDepthM === undefined || q.topM <= filter.maxDepthM) &&
      (filter.minStrengthDb === undefined || q.strengthDb >= filter.minStrengthDb),
  );
  const key: Record<QueueSort, (q: QueueItem) => number> = {
    id: () => 0,
    depth: (q) => q.topM,
    // strongest and most confident first
    strength: (q) => -(Number.isFinite(q.strengthDb) ? q.strengthDb : -Infinity),
    confidence: (q) => -(Number.isFinite(q.confidence) ? q.confidence : -Infinity),
  };
  const k = key[sort];
  return out.sort((a, b) => k(a) - k(b) || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
}

/** Reviewed (accepted or rejected) and left (undecided) among `items`. */
export function queueCounts(items: QueueItem[]): { total: number; reviewed: number; left: number; accepted: number; rejected: number } {
  let accepted = 0;
  let rejected = 0;
  for (const q of items) {
    if (q.decision === 'accept') accepted++;
    else if (q.decision === 'reject') rejected++;
  }
  return { total: items.length, reviewed: accepted + rejected, left: items.length - accepted - rejected, accepted, rejected };
}

/** Index of the row after (step 1) or before (step -1) `id`, wrapping; 0 when `id` is not listed. */
export function stepIndex(rows: QueueItem[], id: string | null, step: 1 | -1): number {
  if (!rows.length) return -1;
  const i = id === null ? -1 : rows.findIndex((q) => q.id === id);
  if (i < 0) return step === 1 ? 0 : rows.length - 1;
  return (i + step + rows.length) % rows.length;
}
