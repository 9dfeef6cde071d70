import type { Command } from 'commander';
import { loadSite, summarizeSite, type SiteSummary } from '@lamina/site';
import { action, progress } from '../run';

export function register(program: Command): void {
  program
    .command('info')
    .description('summarise a site folder: lines (traces, samples, interval, length), extent in the site CRS and WGS84, plan features by kind')
    .argument('<site>', 'site folder (or its site.json); format: docs/site-format.md')
    .option('--json', 'print the summary as JSON (default: text)')
    .addHelpText('after', '\nReads site.json, the plan and every line\'s headers and positions (no samples); writes nothing.\nExample:\n  pnpm lamina info sample-sites/yard/site --json')
    .action(
      action(async (dir: string, opts: { json?: boolean }) => {
        const site = await loadSite(dir);
        const bar = progress();
        bar.start('reading headers', site.lines.length);
        const summary = await summarizeSite(site, { onLine: (done) => bar.update(done) });
        bar.stop();
        process.stdout.write(opts.json ? JSON.stringify(summary, null, 2) + '\n' : formatSummary(summary));
      }),
    );
}

const fx = (v: number, d: number): string => (Number.isFinite(v) ? v.toFixed(d) : '-');

function table(rows: string[][], right: boolean[]): string {
  const widths = (rows[0] ?? []).map((_, c) => Math.max(...rows.map((r) => (r[c] ?? '').length)));
  return rows.map((r) => '  ' + r.map((cell, c) => (right[c] ? cell.padStart(widths[c] ?? 0) : cell.padEnd(widths[c] ?? 0))).join('  ').trimEnd()).join('\n') + '\n';
}

export function formatSummary(s: SiteSummary): string {
  const crsName = s.crs.code ?? s.crs.proj4;
  const unit = s.crs.units;
  const out: string[] = [];
  out.push(`site      ${s.name} (${s.dir})`);
  out.push(`crs       ${crsName}, units ${unit}${unit === 'm' ? '' : ` (${s.crs.metresPerUnit} m each)`}`);
  const off = s.antenna.gpsOffset;
  out.push(`antenna   ${s.antenna.frequencyMHz} MHz, separation ${s.antenna.separationM} m${off ? `, GPS fix ${off.alongM} m ahead and ${off.acrossM} m right of the midpoint` : ''}`);
  out.push(`lines     ${s.lines.length}, ${s.totalTraces} traces, ${fx(s.totalLengthM, 1)} m surveyed`);
  out.push('');
  const rows = [['id', 'traces', 'samples', 'dt (ns)', 'record (ns)', 'length (m)', 'spacing (m)', 'azimuth', 'positions', 'file']];
  for (const l of s.lines) {
    rows.push([l.id, String(l.traces), String(l.samples), fx(l.dtNs, 4), fx(l.recordNs, 1), fx(l.lengthM, 2), fx(l.traceSpacingM, 3), fx(l.azimuthDeg >= 359.95 ? l.azimuthDeg - 360 : l.azimuthDeg, 1), l.positionSource, l.file]);
  }
  out.push(table(rows, [false, true, true, true, true, true, true, true, false, false]));
  const [x0, y0, x1, y1] = s.extent.crs;
  const [lo0, la0, lo1, la1] = s.extent.wgs84;
  const m = s.crs.metresPerUnit;
  out.push(`extent    ${crsName}: x ${fx(x0, 2)} .. ${fx(x1, 2)}, y ${fx(y0, 2)} .. ${fx(y1, 2)} ${unit} (${fx((x1 - x0) * m, 1)} m x ${fx((y1 - y0) * m, 1)} m)`);
  out.push(`          WGS84: lon ${fx(lo0, 7)} .. ${fx(lo1, 7)}, lat ${fx(la0, 7)} .. ${fx(la1, 7)}`);
  const kinds = Object.entries(s.plan.byKind).filter(([, n]) => n > 0).map(([k, n]) => `${k} ${n}`);
  out.push(`plan      ${s.plan.features} feature${s.plan.features === 1 ? '' : 's'}${kinds.length ? `: ${kinds.join(', ')}` : ''}`);
  return out.join('\n') + '\n';
}
