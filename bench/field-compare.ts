// Two runs of `pnpm bench field` on the same scenes, compared scene by scene: the pooled figures' paired
// differences (b - a) with their 90 % bootstrap intervals over scenes (bench/field-intervals.ts), per half,
// and the scenes whose counts changed. A difference whose interval holds 0 is not yet a result.
// Usage: tsx bench/field-compare.ts <a/field.json>[:kept] <b/field.json>[:kept]
//   ":kept" takes the file's --keep-air-events rows (a run made with LAMINA_BENCH_FIELD_AIR_BEFORE=1).
import { readFileSync } from 'node:fs';
import { beforeRow, type FieldRow } from './field-lib';
import { differenceLine, pairedIntervals } from './field-intervals';

function rowsOf(arg: string): FieldRow[] {
  const kept = arg.endsWith(':kept');
  const file = kept ? arg.slice(0, -':kept'.length) : arg;
  const rows = (JSON.parse(readFileSync(file, 'utf8')) as { rows: FieldRow[] }).rows;
  if (!kept) return rows;
  return rows.map((r) => {
    const b = beforeRow(r);
    if (!b) throw new Error(`${file}: scene ${r.name} has no --keep-air-events run (made without LAMINA_BENCH_FIELD_AIR_BEFORE=1?)`);
    return { ...b, name: r.name };
  });
}

const [argA, argB] = process.argv.slice(2);
if (!argA || !argB) {
  console.error('usage: tsx bench/field-compare.ts <a/field.json>[:kept] <b/field.json>[:kept]');
  process.exit(2);
}
const a = rowsOf(argA), b = rowsOf(argB);
const COUNTS = ['targets', 'buriedTargets', 'airTargets', 'clutterTargets', 'real', 'realFlagged', 'onLocus', 'onLocusFlagged', 'compactFound'] as const;
const byName = new Map(b.map((r) => [r.name, r]));
console.log(`a: ${argA}\nb: ${argB}\n\nscenes whose counts changed (a -> b):`);
for (const r of a) {
  const s = byName.get(r.name);
  if (!s) continue;
  if (r.error || s.error) {
    if (r.error !== s.error) console.log(`  ${r.name}: ${r.error ? 'FAILED' : 'ok'} -> ${s.error ? 'FAILED' : 'ok'}`);
    continue;
  }
  const changed = COUNTS.filter((k) => r[k] !== s[k]).map((k) => `${k} ${r[k]} -> ${s[k]}`);
  const du = s.utilityCoveredM - r.utilityCoveredM;
  if (Math.abs(du) > 0.05) changed.push(`utility covered ${du > 0 ? '+' : ''}${du.toFixed(1)} m`);
  if (r.kFitted !== s.kFitted) changed.push(`K ${r.kFitted?.toFixed(2) ?? '-'} -> ${s.kFitted?.toFixed(2) ?? '-'}`);
  if (changed.length) console.log(`  ${r.name}: ${changed.join(', ')}`);
}
console.log('\npooled b - a, with the 90 % interval of the paired difference over scenes:');
for (const half of ['tune', 'held-out', 'sample'] as const) {
  const ra = a.filter((r) => r.half === half), rb = b.filter((r) => r.half === half);
  if (ra.length && rb.length) console.log(differenceLine(half.toUpperCase(), pairedIntervals(ra, rb)));
}
