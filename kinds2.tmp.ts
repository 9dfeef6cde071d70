import { scoreFolder } from './packages/scoring/src/index';
import { readFileSync } from 'node:fs';
const dir = process.argv[2]!;
for (const s of [1, 3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23]) {
  const out = `${dir}/random-${s}-out`;
  const { report } = scoreFolder(out, `${dir}/random-${s}-site/truth.json`);
  const props = new Map<string, any>(JSON.parse(readFileSync(`${out}/anomalies.geojson`, 'utf8')).features.map((f: any) => [f.properties.id, f.properties]));
  for (const b of report.buried) {
    const bb = b.targets.filter((id) => props.get(id)?.source === 'before-background');
    if (bb.length) console.log(s, b.id, `recall ${b.recall.toFixed(2)}`, `targets ${b.targets.length}, before-bg ${bb.length}:`, bb.map((id) => `${id} ${props.get(id).class} ${props.get(id).widthM.toFixed(2)}x${props.get(id).lengthM.toFixed(1)} dir ${props.get(id).directionDeg.toFixed(0)}`).join('; '));
  }
}
