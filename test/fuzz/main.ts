/**
 * `pnpm fuzz [--cases 1000] [--seed 1] [--cli-every 100] [--only N]`: the whole-folder fuzzer (fuzz.ts).
 * Prints the counts and every internal error with its case number; exits 1 if there was one.
 */
import { runFuzz } from './fuzz';

const arg = (name: string, d: number): number => {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? Number(process.argv[i + 1]) : d;
};
const only = process.argv.includes('--only') ? arg('only', 0) : undefined;
const t0 = performance.now();
const report = await runFuzz({
  cases: arg('cases', 1000),
  seed: arg('seed', 1),
  cliEvery: arg('cli-every', 100),
  ...(only !== undefined ? { only } : {}),
  log: (l) => process.stderr.write(l + '\n'),
});
const { internal, ...counts } = report;
console.log(JSON.stringify({ ...counts, internalErrors: internal.length, seconds: Math.round((performance.now() - t0) / 1000) }, null, 1));
for (const f of internal) console.log(`case ${f.case} (${f.stage}): ${f.message}\n  ${f.mutations.join('\n  ')}`);
process.exit(internal.length ? 1 : 0);
