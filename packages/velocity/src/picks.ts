import { InputError } from '@lamina/errors';
import type { RadarLine } from '@lamina/radar-data';
import { z } from 'zod';
import { alongLine, pointAlong } from './along';
import { fitHyperbola, type FitOptions } from './fit';
import type { HyperbolaFit } from './model';
import { lineDirection } from './oblique';
import { toHyperbolaFit } from './report';

/**
 * Manual picks file (JSON):
 * ```
 * { "hyperbolas": [
 *     { "line": "L03", "label": "optional note",
 *       "picks": [ { "trace": 118, "timeNs": 21.4 }, { "offsetM": 6.05, "timeNs": 20.9 }, ... ] } ] }
 * ```
 * Each pick gives either `trace` (0-based index in the line, may be fractional) or `offsetM` (distance
 * along the line from its first trace, m), and `timeNs`, the two-way time after time-zero in ns.
 * At least 5 picks per hyperbola; both flanks should be picked.
 */
const pickSchema = z
  .object({
    trace: z.number().nonnegative().optional(),
    offsetM: z.number().optional(),
    timeNs: z.number().positive(),
  })
  .strict()
  .refine((p) => (p.trace === undefined) !== (p.offsetM === undefined), { message: 'give exactly one of "trace" or "offsetM"' });

const picksFileSchema = z
  .object({
    hyperbolas: z.array(
      z
        .object({
          line: z.string().min(1),
          label: z.string().optional(),
          picks: z.array(pickSchema).min(5),
        })
        .strict(),
    ),
  })
  .strict();

export type PicksFile = z.infer<typeof picksFileSchema>;
export type ManualHyperbola = PicksFile['hyperbolas'][number];

function jsonPath(path: readonly PropertyKey[]): string {
  let s = '';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s === '' ? String(p) : `.${String(p)}`;
  return s === '' ? '(root)' : s;
}

/** Parse and validate a picks file's text; errors name the file and the JSON path. */
export function parsePicks(text: string, file: string): PicksFile {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    throw new InputError(file, `expected JSON, found a syntax error (${e instanceof Error ? e.message : String(e)})`);
  }
  const r = picksFileSchema.safeParse(raw);
  if (!r.success) {
    const issue = r.error.issues[0]!;
    let found: unknown = raw;
    for (const k of issue.path) found = found !== null && typeof found === 'object' ? (found as Record<PropertyKey, unknown>)[k] : undefined;
    const shown = found === undefined ? 'nothing' : JSON.stringify(found).slice(0, 60);
    throw new InputError(file, `${issue.message}, found ${shown}`, { field: jsonPath(issue.path) });
  }
  return r.data;
}

/**
 * Fit the manual picks of one hyperbola on its line. `index` is its place in the file (for messages).
 * Throws InputError when a pick lies outside the line or the picks do not make a hyperbola.
 */
export function fitManualPicks(
  line: RadarLine,
  h: ManualHyperbola,
  file: string,
  index: number,
  options: FitOptions & { metresPerUnit?: number; aboveGroundMaxPermittivity?: number } = {},
): HyperbolaFit {
  const along = alongLine(line, options.metresPerUnit ?? 1);
  const length = along[line.nTraces - 1]!;
  const off: number[] = [];
  const tim: number[] = [];
  h.picks.forEach((p, i) => {
    let o: number;
    if (p.trace !== undefined) {
      if (p.trace > line.nTraces - 1) {
        throw new InputError(file, `expected a trace index 0..${line.nTraces - 1} of line ${line.id}, found ${p.trace}`, { field: `hyperbolas[${index}].picks[${i}].trace` });
      }
      const a = Math.floor(p.trace);
      const b = Math.min(a + 1, line.nTraces - 1);
      o = along[a]! + (p.trace - a) * (along[b]! - along[a]!);
    } else {
      o = p.offsetM!;
      if (o < 0 || o > length) {
        throw new InputError(file, `expected an offset 0..${length.toFixed(3)} m along line ${line.id}, found ${o}`, { field: `hyperbolas[${index}].picks[${i}].offsetM` });
      }
    }
    off.push(o);
    tim.push(p.timeNs);
  });
  const fit = fitHyperbola(off, tim, options);
  if (!fit || !Number.isFinite(fit.sigmaVelocity)) {
    throw new InputError(file, `expected picks along a diffraction hyperbola, found ${off.length} picks that do not fit one`, { field: `hyperbolas[${index}].picks` });
  }
  const p = pointAlong(line, along, fit.x0M);
  return { ...toHyperbolaFit(line.id, { ...fit, ...p, offsetM: off, timeNs: tim }, 'manual', options), lineDirection: lineDirection(line) };
}
