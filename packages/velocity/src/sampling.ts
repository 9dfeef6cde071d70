import { medianHigh } from '@lamina/stats';
import type { HyperbolaFit } from './model';
import { objectGroups, robustCentre, usableForSite } from './site-model';

/**
 * Which lines a large site needs fitted for its velocity model. Fitting every candidate on every line
 * of a large site buys nothing once the site velocity is known well: with `sampleVelocityLines` (off by
 * default) `lamina process` takes lines in `spreadOrder` (so the first few already span the site) and
 * stops detecting hyperbolas on new lines once `enoughFits` holds. The lines after that are still processed, gridded and screened; they only
 * carry no fits.
 *
 * What screening loses: its hyperbola evidence (`hyperbolaHits`: above-ground fits pointing at plan
 * reflectors, and subsurface fits marking buried objects) exists only on the fitted lines. The air-wave
 * loci, move-out and plan tests use every line and are unchanged. Sites of at most `2 x minLines` lines
 * are always fitted in full.
 */
export interface SamplingOptions {
  /** Relative standard error of the site velocity to reach: 1.2533 x spread / sqrt(objects) / v. @default 0.02 */
  targetStandardError?: number;
  /** Usable (subsurface, unflagged) fits needed. @default 30 */
  minFits?: number;
  /** Independent objects (`objectGroups`) among them. @default 10 */
  minObjects?: number;
  /** Lines fitted at least. @default 8 */
  minLines?: number;
  /** metres per site CRS unit, for `objectGroups`. @default 1 */
  metresPerUnit?: number;
}

/**
 * The indices 0..n-1 in van der Corput order over the line sequence (0, then n/2, n/4, 3n/4, ...): any
 * first k of them are spread evenly over the site, and every index comes exactly once.
 */
export function spreadOrder(n: number): number[] {
  const out: number[] = [];
  const seen = new Uint8Array(n);
  let bits = 0;
  while (1 << bits < n) bits++;
  for (let k = 0; k < 1 << bits; k++) {
    let r = 0;
    for (let b = 0; b < bits; b++) if (k & (1 << b)) r |= 1 << (bits - 1 - b);
    const i = Math.floor((r * n) / (1 << bits));
    if (i < n && !seen[i]) {
      seen[i] = 1;
      out.push(i);
    }
  }
  for (let i = 0; i < n; i++) if (!seen[i]) out.push(i);
  return out;
}

/**
 * True when the fits of `linesFitted` lines (of `nLines`) pin the site velocity down: enough usable
 * fits and independent objects, enough lines, and a relative standard error of the weighted median
 * (1.2533 sigma / sqrt(n), n the objects) below the target. Thresholds: our own choice (a 2 % velocity
 * error is a 2 % depth error, well inside the depth uncertainty a locate carries), not tuned on a site.
 */
export function enoughFits(fits: HyperbolaFit[], linesFitted: number, nLines: number, options: SamplingOptions = {}): boolean {
  const minLines = options.minLines ?? 8;
  if (nLines <= 2 * minLines || linesFitted < minLines) return false;
  const usable = fits.filter((f) => usableForSite(f));
  if (usable.length < (options.minFits ?? 30)) return false;
  const { sizes, group } = objectGroups(usable, { metresPerUnit: options.metresPerUnit ?? 1 });
  if (sizes.length < (options.minObjects ?? 10)) return false;
  // The site model's weights (`siteVelocityModel`): 1 / max(sigma, 2 % of the median v)^2, shared within an object.
  const v = usable.map((f) => f.velocityMPerNs);
  const floor = 0.02 * medianHigh(v);
  const { centre, spread } = robustCentre(
    v,
    usable.map((f, i) => 1 / Math.max(f.uncertaintyMPerNs, floor) ** 2 / sizes[group[i]!]!),
  );
  const se = (1.2533 * spread) / Math.sqrt(sizes.length) / centre;
  return se < (options.targetStandardError ?? 0.02);
}
