import type { HyperbolaFit, VelocityReport } from './model';
import { fitWeights, objectGroups, siteVelocityOf, usableForSite } from './site-model';

/**
 * Which lines a large site needs fitted for its velocity model. Fitting every candidate on every line
 * of a large site buys nothing once the site velocity is known well: with `sampleVelocityLines` (off by
 * default) `lamina process` takes lines in `spreadOrder` (so the first few already span the site) and
 * stops detecting hyperbolas on new lines once `SiteSampler` says the site velocity is known. The lines after that are still processed, gridded and screened; they only
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

/** What `SiteSampler` reads of a site velocity model worked out from some fits (`buildVelocityReport`). */
export type SiteEstimate = Pick<VelocityReport, 'site' | 'model'>;

/**
 * Kish's effective number of independent objects among the usable fits: (sum W)^2 / sum W^2, W an
 * object's (`objectGroups`) summed per-fit weight in the site model's weighted median (1 / max(relative
 * sigma x median v, 2 % of the median v)^2, `siteVelocityModel`'s 'perFit' weights). One pipe on many
 * lines with tight fits counts as one object however many small objects sit beside it: the median is its.
 */
export function effectiveObjects(fits: HyperbolaFit[], options: { metresPerUnit?: number; uncertaintyFloor?: number } = {}): number {
  const usable = fits.filter((f) => usableForSite(f));
  if (usable.length === 0) return 0;
  const { fitWeight } = fitWeights(usable, siteVelocityOf, options.uncertaintyFloor);
  const { group, sizes } = objectGroups(usable, { metresPerUnit: options.metresPerUnit ?? 1 });
  const w = new Float64Array(sizes.length);
  usable.forEach((f, i) => (w[group[i]!]! += fitWeight(f)));
  let s = 0, s2 = 0;
  for (const x of w) {
    s += x;
    s2 += x * x;
  }
  return s2 > 0 ? (s * s) / s2 : 0;
}

export interface SiteSamplerOptions extends SamplingOptions {
  /**
   * The estimate must have stayed within this relative velocity of the current one since half the lines
   * fitted so far were fitted (the lines of `spreadOrder`'s second half are spread over the site like the
   * first's, so they are a second sample of it). @default `targetStandardError`
   */
  settleTolerance?: number;
}

/**
 * The stopping rule of `lamina process` for a large site: lines are taken in `spreadOrder`, and after each
 * line (in that order) `add` says whether the site velocity is known well enough to stop detecting
 * hyperbolas on the lines after it. It holds once, for the lines fitted so far (k of them):
 * - the site is larger than `2 x minLines` lines and k >= `minLines`;
 * - the site model (`estimate`, e.g. `buildVelocityReport` of the fits) rests on >= `minFits` usable fits,
 *   and on >= `minObjects` objects by weight (`effectiveObjects`: a weighted median held by one object has
 *   one sample of the soil however many fits it has);
 * - the standard error of the weighted median, 1.2533 x spread / sqrt(effective objects) (the median's
 *   asymptotic efficiency against the mean of a normal sample, pi / 2, e.g. Kendall & Stuart), relative to
 *   the velocity, is below `targetStandardError`;
 * - the estimate has settled: every estimate since the first ceil(k / 2) lines (the same kind of model,
 *   constant or layered) lies within `settleTolerance` of the current one. Objects that only the later
 *   lines cross (point objects between the first lines) move the median or leave it.
 * Thresholds: our own choice (a 2 % velocity error is a 2 % depth error, well inside a locate's depth
 * uncertainty), not tuned on a site. The decision depends on the order of the lines only, never on which
 * thread finished first: the caller feeds the lines in `spreadOrder` position.
 */
export class SiteSampler {
  private readonly fits: HyperbolaFit[] = [];
  /** Site velocity and model kind after each line fitted (in order). */
  private readonly history: { v: number; kind: string }[] = [];
  private done = false;

  constructor(
    readonly nLines: number,
    private readonly estimate: (fits: HyperbolaFit[]) => SiteEstimate,
    private readonly options: SiteSamplerOptions = {},
  ) {}

  /** Lines fitted so far. */
  get linesFitted(): number {
    return this.history.length;
  }

  /** The fits of the next line in `spreadOrder`; true once the rule holds (and from then on). */
  add(lineFits: HyperbolaFit[]): boolean {
    if (this.done) return true;
    this.fits.push(...lineFits);
    const o = this.options;
    const minLines = o.minLines ?? 8;
    const k = this.history.length + 1;
    if (this.nLines <= 2 * minLines) {
      this.history.push({ v: Number.NaN, kind: '' });
      return false;
    }
    const { site, model } = this.estimate(this.fits);
    const v = site.velocityMPerNs;
    this.history.push({ v: site.fitCount > 0 ? v : Number.NaN, kind: model.kind });
    if (k < minLines || site.fitCount < (o.minFits ?? 30)) return false;
    if ((site.objectCount ?? 0) < (o.minObjects ?? 10)) return false;
    const nEff = effectiveObjects(this.fits, { metresPerUnit: o.metresPerUnit ?? 1 });
    const target = o.targetStandardError ?? 0.02;
    if ((1.2533 * site.spreadMPerNs) / Math.sqrt(nEff) / v >= target) return false;
    const tol = o.settleTolerance ?? target;
    for (let j = Math.ceil(k / 2) - 1; j < k; j++) {
      const h = this.history[j]!;
      if (!(Math.abs(h.v / v - 1) < tol) || h.kind !== model.kind) return false;
    }
    this.done = true;
    return true;
  }
}
