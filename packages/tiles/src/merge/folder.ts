/** The rest of a merged output folder: lines, plan, radargrams, velocity.json and run.json. */
import { copyFile, link, mkdir, open, readFile, writeFile } from 'node:fs/promises';
import { basename, join } from 'node:path';
import { checkContract, parseJsonText, planSchema, radargramIndexSchema, velocitySchema, type RunJson, type SiteIdentity } from '@lamina/contracts';
import { shownPath } from '@lamina/site';
import { streamFeatures } from '@lamina/targets';
import { ownerTile } from '../manifest';
import { featureWriter } from './features';
import type { MergeInputs } from './inputs';

type Feature = { type: 'Feature'; id?: string | number; geometry: unknown; properties: Record<string, unknown> };

async function readChecked<T>(file: string, schema: { parse: (v: unknown) => T }): Promise<T> {
  return checkContract(schema as never, parseJsonText(await readFile(file, 'utf8'), shownPath(file)), shownPath(file)) as T;
}

/**
 * lines.geojson and radargrams/: every tile's line pieces under `<tile id>/<line id>` (a line that crosses
 * tiles is a piece in each, overlap included, as the tiles processed it); the radargram files are hard
 * links to the tiles' (copies across devices). One tile's index is held at a time.
 */
export async function mergeLines(inputs: MergeInputs, stageDir: string): Promise<number> {
  const lines = await featureWriter(join(stageDir, 'lines.geojson'));
  try {
    for (const t of inputs.tiles)
      for await (const raw of streamFeatures(join(t.outDir, 'lines.geojson'))) {
        const f = raw as Feature;
        const id = `${t.entry.id}/${String(f.properties.id)}`;
        await lines.add({ ...f, id, properties: { ...f.properties, id } });
      }
  } finally {
    await lines.close();
  }
  await mkdir(join(stageDir, 'radargrams'), { recursive: true });
  const index = await indexWriter(join(stageDir, 'radargrams', 'index.json'));
  let n = 0;
  for (const t of inputs.tiles) {
    const idx = await readChecked(join(t.outDir, 'radargrams', 'index.json'), radargramIndexSchema);
    await mkdir(join(stageDir, 'radargrams', t.entry.id), { recursive: true });
    for (const l of idx.lines) {
      const file = `radargrams/${t.entry.id}/${basename(l.file)}`;
      await link(join(t.outDir, l.file), join(stageDir, file)).catch(() => copyFile(join(t.outDir, l.file), join(stageDir, file)));
      await index.add({ ...l, id: `${t.entry.id}/${l.id}`, file });
      n++;
    }
  }
  await index.close();
  return n;
}

/** radargrams/index.json (`{"lines":[...]}`) an entry per line, as the pipeline writes it. */
async function indexWriter(path: string): Promise<{ add(e: unknown): Promise<void>; close(): Promise<void> }> {
  const fh = await open(path, 'w');
  let n = 0;
  await fh.write('{"lines":[');
  return {
    add: async (e) => {
      await fh.write((n++ > 0 ? ',\n' : '\n') + JSON.stringify(e));
    },
    close: async () => {
      await fh.write('\n]}\n');
      await fh.close();
    },
  };
}

/** plan.geojson: the tiles' plan features, each once (the tiles keep the site's ids). */
export async function mergePlan(inputs: MergeInputs, stageDir: string): Promise<number> {
  const seen = new Map<string, unknown>();
  for (const t of inputs.tiles) {
    const plan = await readChecked(join(t.outDir, 'plan.geojson'), planSchema);
    for (const f of plan.features) if (!seen.has(f.properties.id)) seen.set(f.properties.id, f);
  }
  await writeFile(join(stageDir, 'plan.geojson'), `${JSON.stringify({ type: 'FeatureCollection', features: [...seen.values()] }, null, 1)}\n`);
  return seen.size;
}

/**
 * velocity.json: the tiles' one model (the survey's, `lamina tiles --velocity`, when tiles.json has it)
 * and each tile's fitted hyperbolas that lie in its core, on the merged line ids (the viewer draws them
 * on the radargrams). Held: one tile's velocity.json.
 */
export async function mergeVelocity(inputs: MergeInputs, stageDir: string): Promise<number> {
  const { manifest, tiles } = inputs;
  const survey = manifest.velocity ? (JSON.parse(await readFile(join(inputs.dir, manifest.velocity), 'utf8')) as { site?: object }) : undefined;
  const read = async (dir: string) => (await readChecked(join(dir, 'velocity.json'), velocitySchema)) as Record<string, unknown> & { hyperbolas?: Record<string, unknown>[] };
  const first = await read(tiles[0]!.outDir);
  const site = { ...(survey?.site ?? first.site as object), note: `the survey's model${manifest.velocity ? ` (${manifest.velocity} of the tiles)` : ''}; the fits of ${tiles.length} tiles are listed, each where its tile's core holds it` };
  const fh = await open(join(stageDir, 'velocity.json'), 'w');
  let n = 0;
  try {
    const { hyperbolas: _, ...head } = { ...first, site };
    const h = JSON.stringify(head);
    await fh.write(`${h.slice(0, -1)},"hyperbolas":[`);
    for (const t of tiles)
      for (const r of (t === tiles[0] ? first : await read(t.outDir)).hyperbolas ?? []) {
        if (typeof r.x !== 'number' || typeof r.y !== 'number' || ownerTile(manifest, r.x, r.y)?.id !== t.entry.id) continue;
        await fh.write((n++ > 0 ? ',\n' : '\n') + JSON.stringify({ ...r, line: `${t.entry.id}/${String(r.line)}` }));
      }
    await fh.write('\n]}\n');
  } finally {
    await fh.close();
  }
  return n;
}

/** run.json of the merge: the first tile's run (recipe, CRS, antenna) for the survey, and what was merged. */
export function mergedRun(inputs: MergeInputs, identity: SiteIdentity, extentSite: [number, number, number, number], now: Date, counts: Record<string, number>, screenedNearSurfaceM?: number): RunJson {
  const { manifest, tiles } = inputs;
  const r = tiles[0]!.run;
  const nearSurface = tiles.map((t) => t.run.nearSurfaceM).filter((v): v is number => v !== undefined);
  return {
    ...(r.tool ? { tool: r.tool } : {}),
    createdAt: now.toISOString(),
    site: { ...r.site, name: manifest.site.name, dir: manifest.site.dir, extentWgs84: identity.extent, extentSite },
    identity,
    ...(screenedNearSurfaceM !== undefined ? { nearSurfaceM: screenedNearSurfaceM } : nearSurface.length > 0 ? { nearSurfaceM: Math.max(...nearSurface) } : {}),
    ...(r.recipe !== undefined ? { recipe: r.recipe } : {}),
    log: [...(r.log ?? []), { step: 'merge', params: { tiles: tiles.length, sizeM: manifest.sizeM, overlapM: manifest.overlapM, ids: screenedNearSurfaceM !== undefined ? 'screened again as one run' : '<tile id>/<id in the tile>' }, result: counts }],
    lines: tiles.flatMap((t) => (t.run.lines ?? []).map((l) => ({ ...l, id: `${t.entry.id}/${l.id}` }))),
    merge: { tiles: tiles.length, manifest: shownPath(join(inputs.dir, 'tiles.json')), tileIds: tiles.map((t) => t.entry.id) },
  } as RunJson;
}
