// Runs every bench/*.bench.ts in turn (or those named on the command line): `pnpm bench [name ...]`.
import { readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const wanted = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => wanted.length === 0 || wanted.some((w) => f.startsWith(w)))
  .sort();
for (const f of files) {
  console.log(`\n== ${f}`);
  await import(join(here, f));
}
