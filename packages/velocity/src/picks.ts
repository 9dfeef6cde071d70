import { InputError } from '@lamina/errors';
import type { RadarLine } from '@lamina/radar-data';
import { checkContract, parseJsonText, picksSchema, type ManualHyperbola, type PicksFile } from '@lamina/contracts';
import { alongLine, pointAlong } from './along';
import { fitHyperbola, type FitOptions } from './fit';
import type { HyperbolaFit } from './model';
import { lineDirection } from './oblique';
import { toHyperbolaFit } from './report';

// The picks file's schema (and its documentation) is a contract: picksSchema in @lamina/contracts.
export type { PicksFile, ManualHyperbola };

/** Parse and validate a picks file's text; errors name the file and the JSON path. */
export function parsePicks(text: string, file: string): PicksFile {
  return checkContract(picksSchema, parseJsonText(text, file), file);
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
