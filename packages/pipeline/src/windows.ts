/**
 * Depth windows of the slices. A run cuts them from its shallowest record (every trace must reach every
 * slice). The windows of a whole survey are cut once, by `lamina velocity` from all lines, and written
 * beside its velocity.json (`windows.json`): every tile of the survey then slices at exactly those depths,
 * so the merge's mosaic has one set of windows, not windows a fraction of a sample apart.
 */
import { readFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { writeFileAtomic } from '@lamina/atomic';
import { InputError } from '@lamina/errors';
import { shownPath, type Site } from '@lamina/site';
import { defaultWindows, type SliceWindow } from '@lamina/slices';
import type { VelocityReport } from '@lamina/velocity';

/** File name of the survey's windows, beside its velocity.json. */
export const SURVEY_WINDOWS = 'windows.json';

/** A processed line's record: what the windows depend on. */
export interface LineRecord {
  nSamples: number;
  dtNs: number;
  /** After the time-zero step. */
  timeZeroNs: number;
}

export interface WindowOptions {
  /** @default half a wavelength in the soil */
  sliceThicknessM?: number;
  /** @default 0 */
  sliceOverlap?: number;
  /** @default the shallowest record's reach */
  maxDepthM?: number;
}

/** The windows of `records` through the velocity model: to the shallowest record's reach. */
export function recordWindows(site: Site, records: readonly LineRecord[], velocity: Pick<VelocityReport, 'site' | 'model'>, options: WindowOptions = {}): SliceWindow[] {
  let nSamples = Infinity, dtNs = 0, timeZeroNs = 0, reach = Infinity;
  for (const r of records) {
    const t = (r.nSamples - 1) * r.dtNs - r.timeZeroNs;
    if (t < reach) {
      reach = t;
      nSamples = r.nSamples;
      dtNs = r.dtNs;
      timeZeroNs = r.timeZeroNs;
    }
  }
  const reaches = reach * velocity.site.velocityMPerNs > site.antenna.separationM;
  if (!reaches) {
    // bistatic depth sqrt((v t / 2)^2 - (s / 2)^2) needs v t > s: the record ends before any echo from below the surface
    throw new InputError(shownPath(join(site.dir, 'site.json')), `expected a separation the record reaches past: at the fitted ${velocity.site.velocityMPerNs.toFixed(3)} m/ns the ${Number(reach.toFixed(3))} ns after time-zero (${nSamples} samples of ${dtNs} ns) cover ${Number((reach * velocity.site.velocityMPerNs).toFixed(3))} m, less than the separation of ${site.antenna.separationM} m; check it is in metres`, { field: 'antenna.separationM' });
  }
  return defaultWindows({
    model: velocity.model,
    separationM: site.antenna.separationM,
    frequencyMHz: site.antenna.frequencyMHz,
    nSamples,
    dtNs,
    timeZeroNs,
    ...(options.maxDepthM !== undefined ? { bottomM: options.maxDepthM } : {}),
    ...(options.sliceThicknessM !== undefined ? { thicknessM: options.sliceThicknessM } : {}),
    ...(options.sliceOverlap !== undefined ? { overlap: options.sliceOverlap } : {}),
  });
}

/** windows.json: the survey's windows and the site velocity they were cut with. */
export interface SurveyWindowsJson {
  version: 1;
  /** The site velocity of the velocity.json beside it, m/ns: a stale file (another model) is refused. */
  velocityMPerNs: number;
  windows: SliceWindow[];
}

export async function writeSurveyWindows(velocityFile: string, windows: SliceWindow[], velocityMPerNs: number): Promise<string> {
  const file = join(dirname(velocityFile), SURVEY_WINDOWS);
  const json: SurveyWindowsJson = { version: 1, velocityMPerNs, windows };
  await writeFileAtomic(file, JSON.stringify(json, null, 1) + '\n');
  return file;
}

/** The windows beside a survey's velocity.json, checked; undefined when there is no such file. */
export async function readSurveyWindows(velocityFile: string, velocityMPerNs: number): Promise<{ file: string; windows: SliceWindow[] } | undefined> {
  const file = join(dirname(velocityFile), SURVEY_WINDOWS);
  const text = await readFile(file, 'utf8').catch(() => undefined);
  if (text === undefined) return undefined;
  const shown = shownPath(file);
  let j: Partial<SurveyWindowsJson>;
  try {
    j = JSON.parse(text) as Partial<SurveyWindowsJson>;
  } catch {
    throw new InputError(shown, "expected the survey's depth windows of `lamina velocity`, found invalid JSON");
  }
  if (j.velocityMPerNs !== velocityMPerNs) {
    throw new InputError(shown, `expected the windows of the velocity.json beside it (${velocityMPerNs} m/ns), found windows cut at ${JSON.stringify(j.velocityMPerNs)} m/ns: run \`lamina velocity\` again`, { field: 'velocityMPerNs' });
  }
  const w = j.windows;
  if (!Array.isArray(w) || w.length === 0) throw new InputError(shown, 'expected at least one window', { field: 'windows' });
  w.forEach((x, i) => {
    const ok = typeof x === 'object' && x !== null && x.index === i && Number.isFinite(x.topM) && Number.isFinite(x.bottomM) && x.bottomM > x.topM;
    if (!ok) throw new InputError(shown, 'expected { index, topM, bottomM } with index in order and bottomM > topM', { field: `windows[${i}]` });
  });
  return { file, windows: w };
}

/**
 * The survey's windows for a run whose own records give `own`: refused when the survey's reach deeper
 * than this run's records (by more than one window step, the rounding of `sliceWindows`).
 */
export function checkSurveyWindows(survey: { file: string; windows: SliceWindow[] }, own: SliceWindow[]): SliceWindow[] {
  const deepest = survey.windows[survey.windows.length - 1]!.bottomM;
  const last = own[own.length - 1]!;
  const step = own.length > 1 ? own[1]!.topM - own[0]!.topM : last.bottomM - last.topM;
  if (deepest > last.bottomM + step + 1e-3) {
    throw new InputError(shownPath(survey.file), `expected windows this site's records reach (to about ${(last.bottomM + step).toFixed(3)} m), found windows to ${deepest} m: are these the survey's lines?`, { field: `windows[${survey.windows.length - 1}].bottomM` });
  }
  return survey.windows;
}
