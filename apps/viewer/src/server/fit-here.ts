import { z } from 'zod';
import type { RadarLine } from '@lamina/radar-data';
import { classifyVelocity, detectHyperbolas, permittivityFromVelocity } from '@lamina/velocity';
import { radargramData, radargramLine } from './radargram-line';

export const fitInputSchema = z.object({ line: z.string().min(1).max(200), trace: z.number().nonnegative(), timeNs: z.number() }).strict();
export type FitInput = z.infer<typeof fitInputSchema>;

export interface FitHereOptions {
  /** Half-width of the stretch of line handed to the detector, m (its largest aperture is 4 m). @default 6 */
  windowM?: number;
  /** How far (m along the line) the fitted apex may lie from the point asked about. @default 1 */
  maxShiftM?: number;
}

/**
 * "Fit here": the automatic detector and fitter of @lamina/velocity (`detectHyperbolas`) on the stretch
 * of the line's radargram around (trace, time), and the fit whose apex is nearest that point, or null.
 * `trace` is the stored (possibly thinned) trace index of the radargram; `timeNs` is after time-zero.
 */
export async function fitHere(outDir: string, input: FitInput, options: FitHereOptions = {}) {
  const { line, along } = await radargramLine(outDir, input.line);
  const full = await radargramData(outDir, line);
  const windowM = options.windowM ?? 6;
  const maxShift = options.maxShiftM ?? 1;
  const i = Math.max(0, Math.min(line.nTraces - 1, input.trace));
  const xAt = along[Math.floor(i)]!;
  let a = Math.floor(i);
  while (a > 0 && along[a - 1]! >= xAt - windowM) a--;
  let b = Math.floor(i);
  while (b < line.nTraces - 1 && along[b + 1]! <= xAt + windowM) b++;
  const crop: RadarLine = { ...full, nTraces: b - a + 1, data: full.data.subarray(a * full.nSamples, (b + 1) * full.nSamples), x: full.x.subarray(a, b + 1), y: full.y.subarray(a, b + 1) };
  const found = detectHyperbolas(crop, { separationM: line.separationM, metresPerUnit: line.metresPerUnit, ...(line.frequencyMHz ? { frequencyMHz: line.frequencyMHz } : {}) });
  const x0Crop = along[a]!;
  let best: { d: number; f: (typeof found)[number] } | undefined;
  for (const f of found) {
    const dx = Math.abs(f.x0M + x0Crop - xAt);
    if (dx > maxShift) continue;
    // one period of a 100 MHz pulse is 10 ns: a time miss counts like a distance miss of 1 m per 10 ns
    const d = dx + Math.abs(f.t0Ns - input.timeNs) / 10;
    if (!best || d < best.d) best = { d, f };
  }
  if (!best) return null;
  const f = best.f;
  let half = 0;
  for (const o of f.offsetM) half = Math.max(half, Math.abs(o - f.x0M));
  return {
    x0M: f.x0M + x0Crop,
    t0Ns: f.t0Ns,
    velocityMPerNs: f.velocityMPerNs,
    permittivity: permittivityFromVelocity(f.velocityMPerNs),
    origin: classifyVelocity(f.velocityMPerNs).origin,
    radiusM: f.radiusM,
    halfApertureM: half,
    picks: f.offsetM.length,
  };
}
