// The site velocity model replayed on the fits of kept scene folders (`pnpm bench field` with
// LAMINA_BENCH_FIELD_KEEP=1), so that a change to the site model (@lamina/velocity `siteVelocityModel`:
// which fits count, their weights, the centre, the layer test) is measured in seconds on every kept scene
// instead of a bench run. The fits are the run's own, as velocity.json lists them (oblique crossings
// already corrected, `buildVelocityReport`); a change to detection, fitting or the oblique correction needs
// `pnpm bench field`. The replay is `buildVelocityReport`'s own `siteModelOfFits` (with its rule for fits
// whose apexes lie in the direct-wave zone) without the oblique correction, which the fits already had.
// Prints each scene whose site K moves, and the pooled site-K mean |error| (scoring's frozen definition:
// velocity.json site permittivity / truth top-layer permittivity - 1) of the runs and of the replay, with
// the paired 90 % bootstrap interval of the difference (bench/field-intervals.ts).
// Usage: tsx bench/velocity-replay.ts <kept-dir> [kept-dir ...]   (from the unchanged code, every
// difference is 0: the replay reproduces the runs)
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { siteModelOfFits, type HyperbolaFit, type SiteModelOptions } from '../packages/velocity/src/index';
import { emptyRow, type FieldRow } from './field-lib';
import { pairedIntervals } from './field-intervals';

export interface Replayed {
  name: string;
  kTruth: number;
  /** velocity.json's site permittivity (the run). */
  kRun: number;
  /** The site model of today's code on the run's fits. */
  kReplay: number;
  fits: number;
}

/** `buildVelocityReport`'s site model (`siteModelOfFits`) on the fits of a velocity.json (already corrected), with `options`. */
export function replaySiteK(hyperbolas: HyperbolaFit[], options: SiteModelOptions & { minEarlyObjects?: number } = {}): number {
  return siteModelOfFits(hyperbolas, options).site.permittivity;
}

/** Every scene of a kept folder (`<name>-out` beside `<name>-site`) replayed. */
export function replayFolder(dir: string, options: SiteModelOptions = {}): Replayed[] {
  const out: Replayed[] = [];
  for (const name of readdirSync(dir).filter((d) => d.endsWith('-out')).map((d) => d.slice(0, -'-out'.length)).sort()) {
    const vFile = join(dir, `${name}-out`, 'velocity.json'), tFile = join(dir, `${name}-site`, 'truth.json');
    if (!existsSync(vFile) || !existsSync(tFile)) continue;
    const v = JSON.parse(readFileSync(vFile, 'utf8')) as { site: { permittivity: number; fitCount: number }; hyperbolas: HyperbolaFit[] };
    const t = JSON.parse(readFileSync(tFile, 'utf8')) as { metresPerUnit?: number; soil: { permittivity: number; layers?: { permittivity: number }[] } };
    out.push({
      name,
      kTruth: t.soil.layers?.[0]?.permittivity ?? t.soil.permittivity,
      kRun: v.site.permittivity,
      kReplay: replaySiteK(v.hyperbolas, { metresPerUnit: t.metresPerUnit ?? 1, ...options }),
      fits: v.site.fitCount,
    });
  }
  return out;
}

/** A field-bench row holding only the site K of a replayed scene (for `pool` and `pairedIntervals`). */
function kRow(r: Replayed, k: number): FieldRow {
  return { ...emptyRow(r.name, 'tune', null), kTruth: r.kTruth, kFitted: k, kRelError: k / r.kTruth - 1 };
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const dirs = process.argv.slice(2);
  if (!dirs.length) throw new Error('usage: tsx bench/velocity-replay.ts <kept-dir> [kept-dir ...]');
  const all = dirs.flatMap((d) => replayFolder(d));
  const pct = (x: number) => `${(100 * x).toFixed(1)}`;
  for (const r of all)
    if (Math.abs(r.kReplay / r.kRun - 1) > 1e-9)
      console.log(`${r.name.padEnd(12)} ${String(r.fits).padStart(4)} fits  K truth ${r.kTruth.toFixed(2)}  run ${r.kRun.toFixed(2)} (${pct(r.kRun / r.kTruth - 1)} %)  replay ${r.kReplay.toFixed(2)} (${pct(r.kReplay / r.kTruth - 1)} %)`);
  const paired = pairedIntervals(all.map((r) => kRow(r, r.kRun)), all.map((r) => kRow(r, r.kReplay)));
  const mean = (k: (r: Replayed) => number) => all.reduce((s, r) => s + Math.abs(k(r) / r.kTruth - 1), 0) / Math.max(1, all.length);
  const d = paired.diff.kAbsErrorMean;
  console.log(
    `${all.length} scenes, ${all.filter((r) => Math.abs(r.kReplay / r.kRun - 1) > 1e-9).length} moved: site K mean |error| ${pct(mean((r) => r.kRun))} % (runs) -> ${pct(mean((r) => r.kReplay))} % (replay); ` +
      `difference ${d.diff === null ? '-' : pct(d.diff)} points, 90 % paired interval ${d.interval ? `${pct(d.interval[0])}..${pct(d.interval[1])}` : '-'}`,
  );
}
