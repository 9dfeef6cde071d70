import { sharedCells } from '@lamina/anomalies';
import { combine, WEIGHTS, type Evidence } from './evidence';
import type { ScreenedAnomaly } from './screened';

/**
 * Pieces of a buried object flagged for lying on a locus. A buried pipe's response breaks into blobs in
 * a slice, and the blobs that fall on some feature's locus band pass the move-out test: pieces of the
 * pipe at the pipe's own depth flagged above-ground (80 of the 101 real anomalies flagged on three
 * populations of the field bench's random scenes, odd seeds 1-143, 2026-12-04). An above-ground anomaly
 * that spans at most `maxSlices` slices (one pulse: a piece, not a ring followed through depth), with at
 * least `minInside` of its cells inside the plan footprint of one subsurface anomaly that reaches its
 * slices (the same slices, or the next one up or down) and is no layer (`isLayer`), keeps its position and
 * depth with that object: it gets the `continuity` item of a stationary object (as a pipe carried through
 * an above-ground field, bridges.ts) and is weighed again. Where an air wave does cross a buried object,
 * the piece at the crossing holds both and goes with the object. Returns how many anomalies were taken back.
 */
export function piecesOfBuried(screened: ScreenedAnomaly[], isLayer: (a: ScreenedAnomaly) => boolean, options: { maxSlices?: number; minInside?: number } = {}): number {
  const maxSlices = options.maxSlices ?? 2;
  const minInside = options.minInside ?? 0.5;
  // objects only: a laterally extensive reflector (a layer, the near-surface zone's residue) holds anything
  const buried = screened.filter((s) => s.verdict.origin === 'subsurface' && !isLayer(s));
  let n = 0;
  for (let i = 0; i < screened.length; i++) {
    const s = screened[i]!;
    if (s.verdict.origin !== 'above-ground') continue;
    const slices = [...new Set(s.anomaly.members.map((m) => m.slice))];
    if (slices.length > maxSlices) continue;
    const lo = Math.min(...slices) - 1, hi = Math.max(...slices) + 1;
    let host: { b: ScreenedAnomaly; share: number } | undefined;
    for (const b of buried) {
      if (!b.anomaly.members.some((m) => m.slice >= lo && m.slice <= hi)) continue;
      const share = sharedCells(s.anomaly.cells, b.anomaly.cells) / s.anomaly.cells.length;
      if (share >= minInside && (!host || share > host.share)) host = { b, share };
    }
    if (!host) continue;
    const item: Evidence = {
      test: 'continuity',
      featureId: null,
      measured: host.share,
      expected: minInside,
      tolerance: 0,
      units: 'share of cells',
      passed: true,
      weight: WEIGHTS.continuity,
      detail: `${(100 * host.share).toFixed(0)} % of its cells lie in the plan footprint of a subsurface anomaly at its depth (${host.b.anomaly.depthTopM.toFixed(2)}-${host.b.anomaly.depthBottomM.toFixed(2)} m, ${host.b.anomaly.shape.lengthM.toFixed(1)} m long): a piece of that object, where it keeps its position and depth`,
    };
    const evidence = [...s.evidence, item];
    screened[i] = { ...s, evidence, verdict: combine(evidence) };
    n++;
  }
  return n;
}
