// Scores the kept scene folders of an earlier `pnpm bench field` run (LAMINA_BENCH_FIELD_KEEP=1) again with
// today's scoring, without processing anything: the figure that shows what a change of a scoring
// definition alone moves (the outputs stay the same). Prints the table of `pnpm bench field` (its columns
// are explained there). Seeds: random-<odd> is TUNE, random-<even> HELD-OUT, the rest sample sites.
// Usage: tsx bench/field-rescore.ts <kept-dir> [rows.json]   (the air measure of issue 18 is not recomputed;
// with rows.json, the rows are also written there as a field.json that bench/field-compare.ts reads)
import { existsSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { emptyRow, formatTable, pool, scored, single, tableLine, type FieldRow } from './field-lib';
import { intervalLine, poolIntervals } from './field-intervals';

const dir = process.argv[2];
if (!dir) throw new Error('usage: tsx bench/field-rescore.ts <kept-dir>');
const rows: FieldRow[] = [];
for (const d of readdirSync(dir).filter((f) => f.endsWith('-out')).sort()) {
  const name = d.slice(0, -'-out'.length);
  const truth = join(dir, `${name}-site`, 'truth.json');
  if (!existsSync(truth) || !existsSync(join(dir, d, 'targets.geojson'))) continue;
  const m = /^random-(\d+)$/.exec(name);
  const seed = m ? Number(m[1]) : null;
  const row = emptyRow(name, seed === null ? 'sample' : seed % 2 === 1 ? 'tune' : 'held-out', seed);
  try {
    Object.assign(row, scored(join(dir, d), truth));
  } catch (e) {
    row.error = (e as Error).message;
  }
  rows.push(row);
}
rows.sort((a, b) => (a.seed ?? 1e9) - (b.seed ?? 1e9));
const halves = (['tune', 'held-out'] as const).filter((h) => rows.some((r) => r.half === h));
console.log(formatTable([
  ...rows.filter((r) => r.half !== 'sample').map((r) => tableLine(single(r), r)),
  [],
  ...halves.map((h) => tableLine(pool(h === 'tune' ? 'TUNE (odd seeds)' : 'HELD-OUT (even seeds)', rows.filter((r) => r.half === h)))),
  [],
  ...rows.filter((r) => r.half === 'sample').map((r) => tableLine(single(r), r)),
]));
const rowsFile = process.argv[3];
if (rowsFile) writeFileSync(rowsFile, JSON.stringify({ createdAt: new Date().toISOString(), rescoredFrom: dir, rows }, null, 1) + '\n');
// how far the pooled figures move with the choice of scenes alone, as `pnpm bench field` prints it
console.log(`\n90 % intervals over scenes (bench/field-intervals.ts):\n${halves.map((h) => intervalLine(h === 'tune' ? 'TUNE' : 'HELD-OUT', poolIntervals(rows.filter((r) => r.half === h)))).join('\n')}`);
