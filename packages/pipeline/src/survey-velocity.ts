/**
 * One velocity model for a whole survey: `lamina process --velocity <velocity.json>` converts time to
 * depth (and screens) with the model of that file instead of the one its own lines fit, so the tiles of
 * a survey cut their slices at the same depths and a pipe crossing a tile edge does not step in depth.
 * The run's own fits are still made and listed (the viewer draws them, screening uses the air fits).
 * The survey's depth windows, written beside its velocity.json (windows.ts), are used too.
 */
import { readFile } from 'node:fs/promises';
import { InputError } from '@lamina/errors';
import { shownPath } from '@lamina/site';
import type { SliceWindow } from '@lamina/slices';
import type { VelocityReport } from '@lamina/velocity';
import { readSurveyWindows } from './windows';

const isObj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const positive = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v) && v > 0;

/** The site velocity and model of a velocity.json, checked: what a run adopts from it. */
export interface SurveyVelocity {
  file: string;
  site: VelocityReport['site'];
  model: VelocityReport['model'];
  /** The survey's depth windows, from windows.json beside the file (`lamina velocity` writes it). */
  windows?: { file: string; windows: SliceWindow[] };
}

export async function readSurveyVelocity(file: string): Promise<SurveyVelocity> {
  const shown = shownPath(file);
  let j: unknown;
  try {
    j = JSON.parse(await readFile(file, 'utf8'));
  } catch (e) {
    throw new InputError(shown, `expected a velocity.json of \`lamina velocity\` or \`lamina process\`, found ${e instanceof SyntaxError ? 'invalid JSON' : 'no readable file'}`);
  }
  if (!isObj(j) || !isObj(j.site)) throw new InputError(shown, 'expected an object with "site"', { field: 'site' });
  if (!positive(j.site.velocityMPerNs)) throw new InputError(shown, `expected a positive velocity in m/ns, found ${JSON.stringify(j.site.velocityMPerNs)}`, { field: 'site.velocityMPerNs' });
  if (!isObj(j.model) || !Array.isArray(j.model.layers) || j.model.layers.length === 0) throw new InputError(shown, 'expected a model with at least one layer', { field: 'model.layers' });
  let top = 0;
  j.model.layers.forEach((l, i) => {
    if (!isObj(l) || !positive(l.velocityMPerNs) || typeof l.topM !== 'number' || Math.abs(l.topM - top) > 1e-9) {
      throw new InputError(shown, 'expected layers contiguous from 0 m, each with topM and a positive velocityMPerNs', { field: `model.layers[${i}]` });
    }
    top = typeof l.bottomM === 'number' ? l.bottomM : top;
  });
  const windows = await readSurveyWindows(file, j.site.velocityMPerNs);
  return { file, site: j.site as unknown as VelocityReport['site'], model: j.model as unknown as VelocityReport['model'], ...(windows ? { windows } : {}) };
}

/** The run's report with the survey's model in place of its own (its own fits kept, said in `site.note`). */
export function adoptSurveyVelocity(own: VelocityReport, survey: SurveyVelocity): VelocityReport {
  return {
    ...own,
    site: { ...survey.site, note: `the survey's model from ${shownPath(survey.file)}; the ${own.site.fitCount} fits of this run are listed, not used for depth` },
    model: survey.model,
  };
}
