import { CAUTION } from '@lamina/constants';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '@lamina/errors';
import { defaultRecipe, parseRecipe, runRecipe } from '@lamina/processing';
import type { RadarLine } from '@lamina/radar-data';
import { loadSite, readLine } from '@lamina/site';
import { recordWindows, writeSurveyWindows, type LineRecord } from '@lamina/pipeline';
import {
  buildVelocityReport,
  fitManualPicks,
  lineDirection,
  lineHyperbolas,
  parsePicks,
  recipeForVelocity,
  writeVelocityJson,
  type HyperbolaFit,
  type PicksFile,
  type VelocityReport,
} from '@lamina/velocity';
import { action, progress } from '../run';

export function register(program: Command): void {
  program
    .command('velocity')
    .description('fit diffraction hyperbolas on every processed line and write velocity.json (site velocity, permittivity, moisture, hyperbolas)')
    .argument('<site>', 'site folder (or its site.json)')
    .requiredOption('-o, --out <dir>', 'output folder; velocity.json and windows.json (the depth windows of the survey) are written atomically inside it')
    .option('--picks <file>', 'manual hyperbola picks (JSON; format: packages/velocity/README.md), fitted besides the automatic detection (default: none)')
    .option('--no-auto', 'fit only the manual picks (no automatic detection) (default: automatic detection on)')
    .addHelpText(
      'after',
      '\nProcesses each line with the site recipe (default recipe from the antenna frequency) minus migration,\n' +
        'detects and fits hyperbolas (bistatic, robust), corrects oblique crossings of linear targets, and\n' +
        'combines the subsurface fits into a site velocity model. Fits with K below 2 are above-ground (air-wave);\n' +
        'fits faster than light are kept with a flag and left out of the model.\n' +
        'Example:\n  pnpm lamina velocity sample-sites/yard/site --out out/yard',
    )
    .action(
      action(async (dir: string, opts: { out: string; picks?: string; auto: boolean }) => {
        const site = await loadSite(dir);
        // Picks are validated before any work, so a bad file fails fast and nothing is written.
        let picks: PicksFile | undefined;
        if (opts.picks) {
          const text = await readFile(opts.picks, 'utf8').catch(() => {
            throw new InputError(opts.picks!, 'expected a readable picks JSON file, found none');
          });
          picks = parsePicks(text, opts.picks);
          const ids = new Set(site.lines.map((l) => l.id));
          picks.hyperbolas.forEach((h, i) => {
            if (!ids.has(h.line)) {
              throw new InputError(opts.picks!, `expected a line id of the site (${[...ids].slice(0, 8).join(', ')}${ids.size > 8 ? ', ...' : ''}), found ${JSON.stringify(h.line)}`, {
                field: `hyperbolas[${i}].line`,
              });
            }
          });
        }
        const recipe = recipeForVelocity(site.recipe !== undefined ? parseRecipe(site.recipe, join(site.dir, 'site.json'), { pathPrefix: 'recipe' }) : defaultRecipe(site.antenna.frequencyMHz));
        const ctx = { frequencyMHz: site.antenna.frequencyMHz, separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit };
        const detect = { separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit, frequencyMHz: site.antenna.frequencyMHz };
        const picked = new Set(picks?.hyperbolas.map((h) => h.line) ?? []);
        const fits: HyperbolaFit[] = [];
        const directions: Record<string, [number, number]> = {};
        const kept = new Map<string, RadarLine>();
        const records: LineRecord[] = [];
        const bar = progress();
        bar.start('fitting hyperbolas', site.lines.length);
        let done = 0;
        for (const src of site.lines) {
          const line = runRecipe(await readLine(site, src), recipe, ctx).line;
          directions[line.id] = lineDirection(line);
          records.push({ nSamples: line.nSamples, dtNs: line.dtNs, timeZeroNs: line.timeZeroNs });
          if (opts.auto) fits.push(...lineHyperbolas(line, detect));
          if (picked.has(line.id)) kept.set(line.id, line);
          bar.update(++done);
        }
        bar.stop();
        picks?.hyperbolas.forEach((h, i) => {
          fits.push(fitManualPicks(kept.get(h.line)!, h, opts.picks!, i, { separationM: site.antenna.separationM, metresPerUnit: site.crs.metresPerUnit }));
        });
        const report = buildVelocityReport(fits, { separationM: site.antenna.separationM, lineDirections: directions, metresPerUnit: site.crs.metresPerUnit });
        const file = join(opts.out, 'velocity.json');
        await writeVelocityJson(file, report);
        // the survey's depth windows, cut once from all its lines: every run with --velocity (every tile) slices at them
        const windows = recordWindows(site, records, report);
        const windowsFile = await writeSurveyWindows(file, windows, report.site.velocityMPerNs);
        process.stdout.write(summary(report, file, `${windowsFile}: ${windows.length} depth windows, ${windows[0]!.topM} to ${windows[windows.length - 1]!.bottomM} m, used with the model by \`process --velocity\` and every tile`));
      }),
    );
}

function summary(r: VelocityReport, file: string, windows: string): string {
  const h = r.hyperbolas;
  const air = h.filter((f) => f.origin === 'above-ground').length;
  const impossible = h.filter((f) => f.flags?.includes('v > c')).length;
  const oblique = h.filter((f) => f.crossing).length;
  const manual = h.filter((f) => f.source === 'manual').length;
  const s = r.site;
  const lines = [
    `${file}: ${h.length} hyperbolas (${manual} from manual picks), ${s.fitCount} used for the site model, ${air} above-ground (air-wave), ${impossible} faster than light (flagged), ${oblique} corrected for oblique crossing`,
    `site velocity ${s.velocityMPerNs.toFixed(4)} m/ns +- ${s.spreadMPerNs.toFixed(4)} (K ${s.permittivity.toFixed(2)})${s.uncertaintyMPerNs !== undefined ? `, the site value itself +- ${s.uncertaintyMPerNs.toFixed(4)} m/ns` : ''}, model ${r.model.kind}` +
      (r.model.kind === 'layered' ? ': ' + r.model.layers.map((l) => `${l.topM.toFixed(2)} m: ${l.velocityMPerNs.toFixed(4)} m/ns`).join(', ') : ''),
  ];
  if (s.note) lines.push(`note: ${s.note}`);
  if (s.moisture) lines.push(`soil moisture about ${(100 * s.moisture.volumetricWaterContent).toFixed(0)} % by volume (${s.moisture.method}); ${s.moisture.caution}`);
  lines.push(windows, `Depths from this velocity carry its uncertainty. ${CAUTION}`);
  return lines.join('\n') + '\n';
}
