import { z } from 'zod';
import { surveySchema } from '@lamina/contracts';
import { describe, type Problem, zodProblems } from './problems';

/** Line ids become file names (`radargrams/<id>.f32`), so they are kept to a portable set. */
/** A line id becomes file names (`radargrams/<id>.f32`): at most 100 characters, well inside 255-byte names. */
export const LINE_ID = /^[A-Za-z0-9][A-Za-z0-9._-]{0,99}$/;

const finite = (what: string) =>
  z.number({ error: (iss) => (iss.input === undefined ? `missing: expected ${what}` : `expected ${what}, found ${describe(iss.input)}`) });
const positive = (what: string) => finite(what).positive({ error: (iss) => `expected ${what} > 0, found ${String(iss.input)}` });
const text = (what: string) =>
  z
    .string({ error: (iss) => (iss.input === undefined ? `missing: expected ${what}` : `expected ${what}, found ${describe(iss.input)}`) })
    .min(1, { error: `expected ${what}, found an empty string` });
const xy = z.tuple([finite('a number (x in CRS units)'), finite('a number (y in CRS units)')], {
  error: (iss) => `expected [x, y] in site CRS units, found ${describe(iss.input)}`,
});

const traceIndex = z
  .number({ error: (iss) => `expected a trace index (a whole number >= 0), found ${describe(iss.input)}` })
  .int({ error: (iss) => `expected a trace index (a whole number >= 0), found ${describe(iss.input)}` })
  .nonnegative({ error: (iss) => `expected a trace index (a whole number >= 0), found ${describe(iss.input)}` });

export const gpsOffsetSchema = z.strictObject({
  /** How far the position fix is ahead of the antenna midpoint, in the direction of travel (m). */
  alongM: finite('a number of metres').default(0),
  /** How far the position fix is to the right of the antenna midpoint, looking along the line (m). */
  acrossM: finite('a number of metres').default(0),
});

export const antennaSchema = z.strictObject({
  frequencyMHz: positive('the centre frequency in MHz'),
  separationM: finite('the transmitter-receiver separation in metres').nonnegative({ error: (iss) => `expected a separation >= 0 m, found ${String(iss.input)}` }),
  gpsOffset: gpsOffsetSchema.optional(),
});

export const lineSchema = z.strictObject({
    file: text('the path of a SEG-Y file'),
    id: text('a line id').regex(LINE_ID, { error: (iss) => `expected a line id of at most 100 letters, digits, ".", "_" or "-" (it becomes a file name), found ${describe(iss.input)}` }).optional(),
    start: xy.optional(),
    end: xy.optional(),
    positions: text('the path of a positions CSV (trace,x,y)').optional(),
    traces: z
      .tuple([traceIndex, traceIndex], { error: (iss) => `expected [first, last] trace indices of the file (0-based, inclusive), found ${describe(iss.input)}` })
      .refine(([a, b]) => b > a, { error: (iss) => `expected last > first (a line needs at least 2 traces), found ${JSON.stringify(iss.input)}` })
      .optional(),
    context: z
      .tuple([traceIndex, traceIndex], { error: (iss) => `expected [first, last] trace indices of the file (0-based, inclusive), found ${describe(iss.input)}` })
      .refine(([a, b]) => b > a, { error: (iss) => `expected last > first, found ${JSON.stringify(iss.input)}` })
      .optional(),
  })
  .refine((l) => !l.context || (l.traces !== undefined && l.context[0] <= l.traces[0] && l.context[1] >= l.traces[1]), {
    path: ['context'],
    error: 'expected "context" to contain the "traces" range (and "traces" given)',
  });

// The survey block is a contract of site.json and run.json alike: its schema lives in @lamina/contracts.
export { surveySchema, type SurveyJson as SurveyInfo } from '@lamina/contracts';

export const siteSchema = z.strictObject({
  name: text('a site name'),
  description: z.string().optional(),
  crs: text('an EPSG code ("EPSG:32617") or a proj4 string'),
  antenna: antennaSchema,
  sampleIntervalNs: positive('a sample interval in ns').optional(),
  plan: text('the path of the plan GeoJSON').optional(),
  lines: z.array(lineSchema, { error: (iss) => (iss.input === undefined ? 'missing: expected an array of lines' : `expected an array of lines, found ${describe(iss.input)}`) }).min(1, { error: 'expected at least one line, found none' }),
  recipe: z.unknown().optional(),
  survey: surveySchema.optional(),
});

export type SiteJson = z.infer<typeof siteSchema>;
export type SiteJsonLine = z.infer<typeof lineSchema>;

function lineRules(l: unknown, i: number): Problem[] {
  if (l === null || typeof l !== 'object') return [];
  const { start, end, positions } = l as { start?: unknown; end?: unknown; positions?: unknown };
  const out: Problem[] = [];
  if ((start === undefined) !== (end === undefined)) {
    out.push({ path: `lines[${i}].${start === undefined ? 'start' : 'end'}`, message: 'missing: "start" and "end" go together (traces are spaced evenly from start to end)' });
  }
  if (positions !== undefined && (start !== undefined || end !== undefined)) {
    out.push({ path: `lines[${i}].positions`, message: 'expected one position source, found both "positions" and "start"/"end"' });
  }
  const a = xy.safeParse(start);
  const b = xy.safeParse(end);
  if (a.success && b.success && a.data[0] === b.data[0] && a.data[1] === b.data[1]) {
    out.push({ path: `lines[${i}].end`, message: `expected an end different from start, found both at [${a.data.join(', ')}]` });
  }
  return out;
}

/** Problems in document order: top-level keys as written, then by line index. */
function order(path: string, doc: object): number {
  const keys = Object.keys(doc);
  const top = /^[A-Za-z_$][\w$]*/.exec(path)?.[0] ?? '';
  const k = keys.indexOf(top);
  const line = /^lines\[(\d+)\]/.exec(path);
  return (k < 0 ? keys.length : k) * 1e6 + (line ? Number(line[1]) : 0);
}

/** Sort problems into the order their keys appear in the document (stable within a key). */
export function sortProblems(problems: Problem[], doc: unknown): Problem[] {
  if (doc === null || typeof doc !== 'object') return problems;
  return problems.sort((p, q) => order(p.path, doc) - order(q.path, doc));
}

/** Validate parsed site.json; every problem with its JSON path (empty when valid). */
export function checkSiteJson(value: unknown): { value?: SiteJson; problems: Problem[] } {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    return { problems: [{ path: '(top level)', message: `expected a JSON object, found ${describe(value)}` }] };
  }
  const r = siteSchema.safeParse(value);
  const problems = r.success ? [] : zodProblems(r.error);
  // Cross-field rules run on the raw lines so they show beside the field errors zod reports.
  const lines = (value as { lines?: unknown }).lines;
  if (Array.isArray(lines)) lines.forEach((l, i) => problems.push(...lineRules(l, i)));
  sortProblems(problems, value);
  return r.success && problems.length === 0 ? { value: r.data, problems } : { problems };
}
