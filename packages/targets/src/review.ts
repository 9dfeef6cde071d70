import { readFile } from 'node:fs/promises';
import { InputError } from '@lamina/errors';
import { writeFileAtomic } from '@lamina/atomic';
import { checkContract, decisionSchema, reviewSchema, siteIdentitySchema, type Decision, type Review, type SiteIdentity } from '@lamina/contracts';

// review.json's schema lives in @lamina/contracts (the viewer's server writes it too).
export { decisionSchema, siteIdentitySchema, reviewSchema, type Decision, type SiteIdentity, type Review };

export function emptyReview(site: SiteIdentity): Review {
  return { version: 1, site, decisions: [] };
}

/** Validate parsed JSON as a review; `file` names the source in errors. */
export function parseReview(json: unknown, file: string): Review {
  return checkContract(reviewSchema, json, file);
}

/** True when two site identities describe the same survey (same name and CRS, overlapping extents). */
export function sameSite(a: SiteIdentity, b: SiteIdentity): boolean {
  if (a.name !== b.name || a.crs !== b.crs) return false;
  const [aw, as, ae, an] = a.extent;
  const [bw, bs, be, bn] = b.extent;
  return aw <= be && bw <= ae && as <= bn && bs <= an;
}

/** Read review.json if it exists; a file of another site is an InputError. Missing file: empty review. */
export async function readReview(path: string, site: SiteIdentity): Promise<Review> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return emptyReview(site);
    throw e;
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new InputError(path, `not valid JSON (${(e as Error).message})`);
  }
  const review = parseReview(json, path);
  if (!sameSite(review.site, site)) {
    throw new InputError(
      path,
      `belongs to another site: expected "${site.name}" in ${site.crs}, found "${review.site.name}" in ${review.site.crs}`,
      { field: 'site' },
    );
  }
  return review;
}

export async function writeReview(path: string, review: Review): Promise<void> {
  await writeFileAtomic(path, JSON.stringify(reviewSchema.parse(review), null, 2) + '\n');
}

/** Insert or replace the decision for `d.anomalyId`. Returns a new review. */
export function upsertDecision(review: Review, d: Decision): Review {
  const decisions = review.decisions.filter((x) => x.anomalyId !== d.anomalyId);
  decisions.push(d);
  return { ...review, decisions };
}

export interface AnchoredAnomaly {
  id: string;
  lon: number;
  lat: number;
  depthTopM: number;
  depthBottomM: number;
}

/**
 * Match decisions to the anomalies of a new run: same id and anchor within tolerance, else the nearest
 * anomaly whose anchor lies within `toleranceM` in plan and whose depth range overlaps.
 * Returns decisions re-keyed to the new ids; decisions that match nothing are kept unmatched
 * (returned separately) so no decision is silently lost.
 */
export function matchDecisions(
  decisions: Decision[],
  anomalies: AnchoredAnomaly[],
  options: { toleranceM?: number } = {},
): { matched: Decision[]; unmatched: Decision[] } {
  const tol = options.toleranceM ?? 0.5;
  const taken = new Set<string>();
  const matched: Decision[] = [];
  const unmatched: Decision[] = [];
  const dist = (d: Decision, a: AnchoredAnomaly) => {
    const kx = 111_320 * Math.cos((d.anchor.lat * Math.PI) / 180);
    return Math.hypot((a.lon - d.anchor.lon) * kx, (a.lat - d.anchor.lat) * 110_574);
  };
  const overlaps = (d: Decision, a: AnchoredAnomaly) => a.depthTopM <= d.anchor.depthBottomM && d.anchor.depthTopM <= a.depthBottomM;
  for (const d of decisions) {
    let best: AnchoredAnomaly | undefined;
    let bestD = Infinity;
    for (const a of anomalies) {
      if (taken.has(a.id) || !overlaps(d, a)) continue;
      const dd = dist(d, a) - (a.id === d.anomalyId ? tol : 0);
      if (dd < bestD) {
        bestD = dd;
        best = a;
      }
    }
    if (best && dist(d, best) <= tol) {
      taken.add(best.id);
      matched.push({ ...d, anomalyId: best.id, anchor: { lon: best.lon, lat: best.lat, depthTopM: best.depthTopM, depthBottomM: best.depthBottomM } });
    } else unmatched.push(d);
  }
  return { matched, unmatched };
}
