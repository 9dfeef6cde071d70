import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { z } from 'zod';
import { checkContract, parseJsonText } from './check';
import { anomaliesSchema, forecastSchema, interfacesSchema } from './anomalies';
import { linesSchema, planSchema, radargramIndexSchema } from './radargrams';
import { reviewSchema } from './review';
import { runSchema } from './run';
import { slicesSchema } from './slices';
import { targetsSchema } from './targets';
import { velocitySchema } from './velocity';

/** Every JSON file of the output folder of `lamina process`, with its schema. */
export const FOLDER_FILES: readonly (readonly [string, z.ZodType])[] = [
  ['run.json', runSchema],
  ['lines.geojson', linesSchema],
  ['plan.geojson', planSchema],
  ['velocity.json', velocitySchema],
  ['slices.json', slicesSchema],
  ['radargrams/index.json', radargramIndexSchema],
  ['anomalies.geojson', anomaliesSchema],
  ['interfaces.geojson', interfacesSchema],
  ['forecast.geojson', forecastSchema],
  ['review.json', reviewSchema],
  ['targets.geojson', targetsSchema],
];

/**
 * Checks every JSON file of an output folder against its schema (whole files in memory: for tests and
 * tools, not for a site larger than memory). Returns the files found; a missing file is skipped, a
 * file that breaks its contract throws the InputError of `checkContract`.
 */
export async function checkFolder(outDir: string): Promise<string[]> {
  const found: string[] = [];
  for (const [name, schema] of FOLDER_FILES) {
    const file = join(outDir, name);
    const text = await readFile(file, 'utf8').catch((e: NodeJS.ErrnoException) => {
      if (e.code === 'ENOENT') return undefined;
      throw e;
    });
    if (text === undefined) continue;
    checkContract(schema, parseJsonText(text, file), file);
    found.push(name);
  }
  return found;
}
