import { spreadOrder, type HyperbolaFit, type SiteSampler } from '@lamina/velocity';
import { settleAll } from './settle';

/** What `pass1Sampled` reads and changes of a line's pass-1 result. */
export interface SampledLine {
  fits: HyperbolaFit[];
  context?: { airApexes: number[] };
}

/**
 * Pass 1 over all lines, `inFlight` at a time, in `spreadOrder`, with the stopping rule of @lamina/velocity
 * (`SiteSampler`, see its sampling.ts for the rule and what screening loses): the lines are fed to it in
 * that order, and lines from the first position where it holds on carry no automatic fits. The rule is
 * fed a line only when every line before it in that order has finished, so a line started before the
 * rule was known to hold (the lines in flight, and those started while an earlier line was still running)
 * has its automatic fits dropped: the result depends on the order of the lines only, never on which thread
 * finished first (any thread count gives the same files). Results in line order.
 */
export async function pass1Sampled<R extends SampledLine>(
  n: number,
  inFlight: number,
  start: (i: number, detect: boolean) => Promise<R>,
  sampler: Pick<SiteSampler, 'add'>,
  onDone: (done: number) => void,
): Promise<R[]> {
  const order = spreadOrder(n);
  const byPosition: (R | undefined)[] = new Array(n);
  // positions from `stopAt` on detect nothing; `fed` positions have been given to the sampler
  let stopAt = n;
  let fed = 0;
  let next = 0;
  let done = 0;
  let failed = false;
  const worker = async (): Promise<void> => {
    while (next < n && !failed) {
      const k = next++;
      const r = await start(order[k]!, k < stopAt);
      byPosition[k] = r;
      while (fed < stopAt && byPosition[fed] !== undefined) {
        if (sampler.add(byPosition[fed]!.fits)) stopAt = fed + 1;
        fed++;
      }
      onDone(++done);
    }
  };
  // every worker settles before the first failure is thrown (`settleAll`)
  await settleAll(
    Array.from({ length: Math.min(inFlight, n) }, () =>
      worker().catch((e: unknown) => {
        failed = true;
        throw e;
      }),
    ),
  );
  const out: R[] = new Array(n);
  for (let k = 0; k < n; k++) {
    const r = byPosition[k]!;
    // as the line would have come without detection: its hand picks' fits only, no air apexes
    if (k >= stopAt) {
      r.fits = r.fits.filter((f) => f.source === 'manual');
      if (r.context) r.context = { ...r.context, airApexes: [] };
    }
    out[order[k]!] = r;
  }
  return out;
}
