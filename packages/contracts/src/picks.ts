import { z } from 'zod';

/**
 * A picks file (an input of `lamina velocity --picks`): hand-picked hyperbola flanks.
 * ```
 * { "hyperbolas": [
 *     { "line": "L03", "label": "optional note",
 *       "picks": [ { "trace": 118, "timeNs": 21.4 }, { "offsetM": 6.05, "timeNs": 20.9 }, ... ] } ] }
 * ```
 * Each pick gives either `trace` (0-based index in the line, may be fractional) or `offsetM` (distance
 * along the line from its first trace, m), and `timeNs`, the two-way time after time-zero in ns.
 * At least 5 picks per hyperbola; both flanks should be picked.
 */
export const pickSchema = z
  .object({
    trace: z.number().nonnegative().optional(),
    offsetM: z.number().optional(),
    timeNs: z.number().positive(),
  })
  .strict()
  .refine((p) => (p.trace === undefined) !== (p.offsetM === undefined), { message: 'give exactly one of "trace" or "offsetM"' });

export const picksSchema = z
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
export type PicksFile = z.infer<typeof picksSchema>;
export type ManualHyperbola = PicksFile['hyperbolas'][number];
