// `lamina process --velocity <file>`: the survey's model is read and checked (issue 17, part 1).
import { mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { adoptSurveyVelocity, readSurveyVelocity } from '../src/survey-velocity';
import { SURVEY_WINDOWS, checkSurveyWindows, writeSurveyWindows } from '../src/windows';

const good = {
  site: { velocityMPerNs: 0.1, permittivity: 8.99, spreadMPerNs: 0.004, fitCount: 12 },
  model: { kind: 'layered', layers: [{ topM: 0, bottomM: 0.8, velocityMPerNs: 0.12 }, { topM: 0.8, bottomM: 3, velocityMPerNs: 0.09 }] },
  hyperbolas: [],
};

async function file(content: unknown): Promise<string> {
  const f = join(await mkdtemp(join(tmpdir(), 'survey-v-')), 'velocity.json');
  await writeFile(f, typeof content === 'string' ? content : JSON.stringify(content));
  return f;
}

describe('survey velocity', () => {
  it("adopts the survey's site velocity and model, keeps the run's own fits and says so", async () => {
    const s = await readSurveyVelocity(await file(good));
    const own = { site: { velocityMPerNs: 0.08, permittivity: 14, spreadMPerNs: 0.01, fitCount: 3 }, model: { kind: 'constant' as const, layers: [{ topM: 0, bottomM: 2, velocityMPerNs: 0.08, permittivity: 14 }] }, hyperbolas: [{ line: 'l1' }] };
    const v = adoptSurveyVelocity(own as never, s);
    expect(v.model).toEqual(good.model);
    expect(v.site.velocityMPerNs).toBe(0.1);
    expect(v.hyperbolas).toEqual([{ line: 'l1' }]);
    expect(v.site.note).toMatch(/the 3 fits of this run are listed, not used for depth/);
  });

  it('refuses what is not a usable model, naming the field', async () => {
    await expect(readSurveyVelocity(await file('{'))).rejects.toThrow(/invalid JSON/);
    await expect(readSurveyVelocity(await file({ ...good, site: { velocityMPerNs: -1 } }))).rejects.toMatchObject({ field: 'site.velocityMPerNs' });
    await expect(readSurveyVelocity(await file({ ...good, model: { layers: [] } }))).rejects.toMatchObject({ field: 'model.layers' });
    await expect(readSurveyVelocity(await file({ ...good, model: { layers: [{ topM: 0, bottomM: 1, velocityMPerNs: 0.1 }, { topM: 1.5, velocityMPerNs: 0.1 }] } }))).rejects.toMatchObject({ field: 'model.layers[1]' });
  });

  it("reads the survey's windows beside its velocity.json; refuses stale, malformed or too deep ones", async () => {
    const f = await file(good);
    expect((await readSurveyVelocity(f)).windows).toBeUndefined();
    const windows = [{ index: 0, topM: 0.1, bottomM: 0.3 }, { index: 1, topM: 0.3, bottomM: 0.5 }];
    await writeSurveyWindows(f, windows, 0.1);
    const s = await readSurveyVelocity(f);
    expect(s.windows?.windows).toEqual(windows);
    expect(s.windows?.file).toBe(join(f, '..', SURVEY_WINDOWS));
    // a run whose own records reach as deep takes them; one whose records end a window step higher is refused
    expect(checkSurveyWindows(s.windows!, windows.slice(0, 1).concat([{ index: 1, topM: 0.3, bottomM: 0.5 }]))).toBe(s.windows!.windows);
    expect(() => checkSurveyWindows(s.windows!, [{ index: 0, topM: 0, bottomM: 0.1 }, { index: 1, topM: 0.1, bottomM: 0.2 }])).toThrow(/windows to 0.5 m/);
    // windows cut with another model (velocity.json rewritten after them)
    await writeSurveyWindows(f, windows, 0.11);
    await expect(readSurveyVelocity(f)).rejects.toMatchObject({ field: 'velocityMPerNs' });
    await writeFile(join(f, '..', SURVEY_WINDOWS), JSON.stringify({ version: 1, velocityMPerNs: 0.1, windows: [{ index: 0, topM: 0.3, bottomM: 0.2 }] }));
    await expect(readSurveyVelocity(f)).rejects.toMatchObject({ field: 'windows[0]' });
  });
});
