import type { AnomalyProperties, Evidence, TestName } from '@lamina/contracts';

type AnomalyOrigin = AnomalyProperties['origin'];

// One piece of screening evidence (a row of the viewer's evidence table) is a contract of
// anomalies.geojson: its type and the test names live in @lamina/contracts.
export type { Evidence, TestName };

/**
 * Log-odds weights of the evidence. They express how strongly each observation separates an
 * air-wave reflection from a buried target by the physics, not a fit to any site:
 * - prior -1 (P = 0.27): an anomaly is a candidate target unless evidence says air;
 * - move-out: 2 (2f - 1) for the fraction f of members on the best feature's locus, each member on it
 *   weighing ln(w) less where its band is w times wider than a standing object's (an overhead object's
 *   band near its onset: a buried object lies in it w times as often by chance; `moveOutWeight`);
 * - slope dr/dz matching c/v: +2; a stationary anomaly where move-out was measurable: -3;
 * - edge alignment +1, post spacing +1, air hyperbola +2 when a plan feature stands at c t0 / 2 from
 *   its apex (+0.75 when none does: alone it leaves a candidate a target), soil hyperbola -1 (-3 with
 *   the screening's `soilApexSplit` when the apexes of soil-velocity fits on several lines lie on the
 *   anomaly: no air wave draws a hyperbola at soil velocity, so that is as strong as a failed slope),
 *   unsurveyed obstruction +2.5 (needs move-out at the air rate over at least three slices; counted only
 *   with the screening's `countUnsurveyed`, off by default),
 *   energy on the locus before background removal +0.5;
 * - continuity -3: a linear object that keeps its position and depth on both sides of an above-ground
 *   field and through it (bridges.ts) is as stationary as a failed slope says; so is a piece lying in a
 *   buried object's footprint at that object's depth (inside-buried.ts).
 */
export const WEIGHTS = {
  prior: -1,
  moveOut: 2,
  slopePass: 2,
  slopeFail: -3,
  edge: 1,
  postSpacing: 1,
  airHyperbola: 2,
  airHyperbolaUnexplained: 0.75,
  soilHyperbola: -1,
  soilApexes: -3,
  unsurveyed: 2.5,
  beforeBackground: 0.5,
  continuity: -3,
} as const;

export interface Verdict {
  /** An anomaly is one or the other (anomalies.geojson `origin`); `implausible` is for velocity fits only. */
  origin: AnomalyOrigin;
  /** Probability of the assigned origin, in [0.5, 1]. */
  confidence: number;
  /** Probability of above-ground, in (0, 1). */
  pAboveGround: number;
  logOdds: number;
}

/** Naive-Bayes combination: log-odds = prior + sum of item weights; P = logistic(log-odds). */
export function combine(evidence: Evidence[]): Verdict {
  let l = WEIGHTS.prior;
  for (const e of evidence) l += e.weight;
  const p = 1 / (1 + Math.exp(-l));
  const origin: AnomalyOrigin = p >= 0.5 ? 'above-ground' : 'subsurface';
  return { origin, pAboveGround: p, confidence: origin === 'above-ground' ? p : 1 - p, logOdds: l };
}
