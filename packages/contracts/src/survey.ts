import { z } from 'zod';

/** How a value is shown in an error: its JSON (cut), or its type. */
const describe = (v: unknown): string => (v === undefined ? 'nothing' : typeof v === 'string' ? JSON.stringify(v.length > 40 ? `${v.slice(0, 40)}...` : v) : JSON.stringify(v) ?? typeof v);
const text = (what: string) =>
  z
    .string({ error: (iss) => (iss.input === undefined ? `missing: expected ${what}` : `expected ${what}, found ${describe(iss.input)}`) })
    .min(1, { error: `expected ${what}, found an empty string` });
const positive = (what: string) =>
  z.number({ error: (iss) => `expected ${what}, found ${describe(iss.input)}` }).positive({ error: (iss) => `expected ${what} > 0, found ${String(iss.input)}` });

/**
 * ISO 8601 calendar date or date-time (YYYY-MM-DD, optionally Thh:mm[:ss[.s]] with Z or +-hh:mm), a real
 * day of the calendar (2026-02-30 is refused).
 */
const isoDate = z
  .string({ error: (iss) => `expected an ISO 8601 date ("2026-11-30" or "2026-11-30T09:15:00Z"), found ${describe(iss.input)}` })
  .regex(/^\d{4}-\d{2}-\d{2}(T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2})?)?$/, { error: (iss) => `expected an ISO 8601 date ("2026-11-30" or "2026-11-30T09:15:00Z"), found ${describe(iss.input)}` })
  .refine(
    (s) => {
      const [y, m, d] = s.slice(0, 10).split('-').map(Number) as [number, number, number];
      const t = new Date(Date.UTC(y, m - 1, d));
      return t.getUTCFullYear() === y && t.getUTCMonth() === m - 1 && t.getUTCDate() === d && !Number.isNaN(Date.parse(s.length > 10 ? s : `${s}T00:00:00Z`));
    },
    { error: (iss) => `expected a real calendar date, found ${describe(iss.input)}` },
  );

/** Who surveyed what, when and how (optional; carried into run.json, the target files and the report). */
export const surveySchema = z.strictObject({
  date: isoDate,
  /** Last day of a survey that took several days. */
  endDate: isoDate.optional(),
  operator: text('the operator or crew').optional(),
  client: text('the client').optional(),
  /** Radar system (make, model) and antenna, with serial numbers. */
  equipment: text('the radar system and antenna').optional(),
  antennaSerial: text('the antenna serial number').optional(),
  positioning: z
    .strictObject({
      method: text('the positioning method (e.g. "RTK GNSS", "total station", "tape and grid")'),
      /** Stated horizontal accuracy, m (as the positioning system or surveyor states it). */
      accuracyM: positive('a horizontal accuracy in metres').optional(),
    })
    .optional(),
  groundConditions: text('the ground conditions (surface, moisture, weather)').optional(),
  notes: z.string().optional(),
});

export type SurveyJson = z.infer<typeof surveySchema>;
