/** interfaces.geojson and forecast.geojson of a merge: each tile's part within its core. */
import { join } from 'node:path';
import { streamFeatures } from '@lamina/targets';
import type { Box } from '../grid';
import type { AnomalyMerge } from './anomalies';
import { clipPolygons } from './clip';
import { featureWriter, headOf, multiPolygonOf, polygonsOf } from './features';
import type { MergeInputs } from './inputs';

type Feature = { type: 'Feature'; geometry: unknown; properties: Record<string, unknown> };

/**
 * interfaces.geojson: the depth maps of the layer anomalies kept, under their merged ids; the maps of a
 * joined layer are cut to each piece's core like the layer itself. forecast.geojson: each tile's predicted
 * loci cut to its core (a locus around one plan feature may so come in pieces, one per tile).
 */
export async function mergeOverlays(inputs: MergeInputs, anomalies: AnomalyMerge, stageDir: string): Promise<{ interfaces: number; forecast: number }> {
  const { tiles, crs } = inputs;
  const counts = { interfaces: 0, forecast: 0 };
  const interfaces = await featureWriter(join(stageDir, 'interfaces.geojson'));
  try {
    for (const t of tiles)
      for await (const raw of streamFeatures(join(t.outDir, 'interfaces.geojson'))) {
        const f = raw as Feature;
        const key = `${t.entry.id}/${String(f.properties.anomalyId)}`;
        const id = anomalies.ids.get(key);
        if (id === undefined) continue;
        let geometry = f.geometry;
        if (anomalies.cut.has(key)) {
          const polys = clipPolygons(polygonsOf(f.geometry, crs), t.entry.core as Box);
          if (polys.length === 0) continue;
          geometry = multiPolygonOf(polys, crs);
        }
        await interfaces.add({ ...f, geometry, properties: { ...f.properties, anomalyId: id } });
        counts.interfaces++;
      }
  } finally {
    await interfaces.close();
  }
  const forecast = await featureWriter(join(stageDir, 'forecast.geojson'), tiles[0] ? await headOf(join(tiles[0].outDir, 'forecast.geojson')) : {});
  try {
    for (const t of tiles)
      for await (const raw of streamFeatures(join(t.outDir, 'forecast.geojson'))) {
        const f = raw as Feature;
        const polys = clipPolygons(polygonsOf(f.geometry, crs), t.entry.core as Box);
        if (polys.length === 0) continue;
        await forecast.add({ ...f, geometry: polys.length === 1 ? { type: 'Polygon', coordinates: multiPolygonOf(polys, crs).coordinates[0] } : multiPolygonOf(polys, crs) });
        counts.forecast++;
      }
  } finally {
    await forecast.close();
  }
  return counts;
}
