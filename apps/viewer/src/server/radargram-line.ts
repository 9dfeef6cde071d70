import { readFile, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { checkContract, radargramIndexSchema, type RadargramLine } from '@lamina/contracts';
import type { RadarLine } from '@lamina/radar-data';
import { alongLine } from '@lamina/velocity';
import { resolveInside } from './paths';
import { HttpError } from './review-store';

/** A line's radargram entry with what the fitter needs: its site's antenna, units and distances along it. */
export interface ServedLine extends RadargramLine {
  separationM: number;
  frequencyMHz: number | undefined;
  metresPerUnit: number;
}

async function json(outDir: string, name: string): Promise<unknown> {
  try {
    return JSON.parse(await readFile(join(outDir, name), 'utf8'));
  } catch (e) {
    throw new HttpError(404, `expected ${name} in the output folder, found ${(e as Error).message}`);
  }
}

// radargrams/index.json of a large site is tens of MB: parsed once per version of the file
const indexCache = new Map<string, { mtimeMs: number; size: number; lines: Map<string, RadargramLine> }>();
async function indexOf(outDir: string): Promise<Map<string, RadargramLine>> {
  const file = join(outDir, 'radargrams', 'index.json');
  const st = await stat(file).catch(() => undefined);
  const hit = indexCache.get(file);
  if (st && hit && hit.mtimeMs === st.mtimeMs && hit.size === st.size) return hit.lines;
  const index = checkContract(radargramIndexSchema, await json(outDir, join('radargrams', 'index.json')), 'radargrams/index.json');
  const lines = new Map(index.lines.map((l) => [l.id, l]));
  if (st) indexCache.set(file, { mtimeMs: st.mtimeMs, size: st.size, lines });
  return lines;
}

/** The entry of radargrams/index.json for `id`, with distances along it (m, as the velocity fitter measures them). */
export async function radargramLine(outDir: string, id: string): Promise<{ line: ServedLine; along: Float64Array }> {
  const entry = (await indexOf(outDir)).get(id);
  if (!entry) throw new HttpError(404, `line "${id}" has no radargram in radargrams/index.json`);
  const run = (await json(outDir, 'run.json')) as { site?: { antenna?: { separationM?: number; frequencyMHz?: number }; crs?: { metresPerUnit?: number } } };
  const line: ServedLine = { ...entry, separationM: run.site?.antenna?.separationM ?? 0, frequencyMHz: run.site?.antenna?.frequencyMHz, metresPerUnit: run.site?.crs?.metresPerUnit ?? 1 };
  const along = alongLine({ nTraces: entry.nTraces, x: Float64Array.from(entry.x), y: Float64Array.from(entry.y) } as RadarLine, line.metresPerUnit);
  return { line, along };
}

/** The radargram of `id` as a RadarLine (the processed data the pipeline's detector saw, possibly thinned). */
export async function radargramData(outDir: string, line: ServedLine): Promise<RadarLine> {
  const r = await resolveInside(outDir, line.file.includes('/') ? line.file : `radargrams/${line.file}`);
  if (!r.ok) throw new HttpError(r.status, `${line.file}: ${r.reason}`);
  const buf = await readFile(r.path);
  const n = line.nTraces * line.nSamples;
  if (buf.byteLength < n * 4) throw new HttpError(422, `${line.file} holds ${buf.byteLength} bytes, expected ${n * 4}`);
  const data = new Float32Array(buf.buffer.slice(buf.byteOffset, buf.byteOffset + n * 4));
  return { id: line.id, nTraces: line.nTraces, nSamples: line.nSamples, dtNs: line.dtNs, timeZeroNs: line.timeZeroNs, data, x: Float64Array.from(line.x), y: Float64Array.from(line.y) };
}
