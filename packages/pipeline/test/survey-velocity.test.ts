// `lamina process --velocity <file>`: the survey's model is read and checked (issue 17, part 1).
import { mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { adoptSurveyVelocity, readSurveyVelocity } from '../src/survey-velocity';

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
});
