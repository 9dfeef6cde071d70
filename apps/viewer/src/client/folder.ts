import { EMPTY_FC, getJson, normaliseIds, type Config, type FeatureCollection, type RadargramIndex, type RunJson, type SlicesJson, type VelocityJson } from './data';
import type { DecisionView } from './panel';

export type ReviewView = { decisions: (DecisionView & { anomalyId: string })[] };

/** Everything the page shows from the output folder and the server, fetched once at start. */
export interface Folder {
  config: Config;
  run: RunJson;
  slicesJson: SlicesJson | undefined;
  velocity: VelocityJson | undefined;
  rgIndex: RadargramIndex;
  plan: FeatureCollection;
  lines: FeatureCollection;
  /** With string `properties.id` and numeric feature ids (maplibre feature state). */
  anomalies: FeatureCollection;
  forecast: FeatureCollection;
  targets: FeatureCollection;
  review: ReviewView;
}

export async function loadFolder(): Promise<Folder> {
  const config = (await (await fetch('api/config', { cache: 'no-store' })).json()) as Config;
  const run = await getJson<RunJson>('run.json');
  if (!run) throw new Error('run.json is missing: this is not the output folder of `lamina process`');
  const [slicesJson, velocity, rgIndex, plan, lines, anomaliesRaw, forecast, targets] = await Promise.all([
    getJson<SlicesJson>('slices.json'),
    getJson<VelocityJson>('velocity.json'),
    getJson<RadargramIndex>('radargrams/index.json', { lines: [] }),
    getJson<FeatureCollection>('plan.geojson', EMPTY_FC),
    getJson<FeatureCollection>('lines.geojson', EMPTY_FC),
    getJson<FeatureCollection>('anomalies.geojson', EMPTY_FC),
    getJson<FeatureCollection>('forecast.geojson', EMPTY_FC),
    getJson<FeatureCollection>('targets.geojson', EMPTY_FC),
  ]);
  const anomalies = normaliseIds(anomaliesRaw);
  const review = (await (await fetch('api/review', { cache: 'no-store' })).json()) as ReviewView;
  return { config, run, slicesJson, velocity, rgIndex, plan, lines, anomalies, forecast, targets, review };
}
