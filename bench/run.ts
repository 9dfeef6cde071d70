// Runs every bench/*.bench.ts in turn (or those named on the command line): `pnpm bench [name ...]`.
import { existsSync, readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const wanted = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  // a name runs that bench (`process` is not `processing`); a name that is no bench's runs those it begins
  .filter((f) => wanted.length === 0 || wanted.some((w) => f === `${w}.bench.ts` || (!existsSync(join(here, `${w}.bench.ts`)) && f.startsWith(w))))
  .sort();
for (const f of files) {
  console.log(`\n== ${f}`);
  await import(join(here, f));
}
