// Where utility recall goes: for each kept scene folder of `pnpm bench field` (LAMINA_BENCH_FIELD_KEEP=1),
// the surveyed utility length (pipes and cables) covered
//   - by targets.geojson (the scoring's utility recall),
//   - by every anomaly not flagged above-ground, and by every anomaly (flags ignored): what the
//     classes and the flags cost, against what was never detected;
// and, for each rule that kept anomalies out of the targets (class and the start of classReason), the
// length its anomalies would add to the targets and what they are when added (covering a buried object,
// on an air-wave locus, or neither: the precision a rule's change would cost). Scored with
// packages/scoring's frozen definitions (scoreRun); a diagnostic, not a score.
// Usage: tsx bench/field-recall.ts <kept-dir> [kept-dir ...] (VERBOSE=1 lists the scenes that lose over
// 5 % of their length to classes or flags).
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { readScoreTruth, scoreRun, type ScoreReport } from '../packages/scoring/src/index';
import { pointFromWgs84, resolveCrs } from '../packages/site/src/index';

type Collection = { type: 'FeatureCollection'; features: { properties: Record<string, any> }[] };
const dirs = process.argv.slice(2);
const ruleOf = (p: Record<string, any>) => `${p.class}: ${String(p.classReason ?? '').replace(/\(.*$/, '').replace(/[0-9.]+/g, '#').trim().slice(0, 70)}`;
const rules = new Map<string, { lengthM: number; buried: number; air: number; unmatched: number; scenes: string[] }>();
const pooled = { lengthM: 0, targets: 0, unflagged: 0, all: 0 };

for (const dir of dirs)
  for (const scene of readdirSync(dir).filter((d) => d.endsWith('-out') && !d.endsWith('-keep-air')).map((d) => d.slice(0, -4))) {
    const out = join(dir, `${scene}-out`), truthFile = join(dir, `${scene}-site`, 'truth.json');
    if (!existsSync(truthFile) || !existsSync(join(out, 'targets.geojson'))) continue;
    const truth = readScoreTruth(truthFile);
    const crs = resolveCrs(truth.crs, { file: truthFile, field: 'crs' });
    const from = (lon: number, lat: number) => pointFromWgs84(crs, lon, lat);
    const read = (f: string) => JSON.parse(readFileSync(join(out, f), 'utf8'));
    const anomalies: Collection = read('anomalies.geojson');
    const targets: Collection = read('targets.geojson');
    const velocity = read('velocity.json');
    const lines = read('lines.geojson').features.flatMap((f: any) => (f.geometry?.type === 'LineString' ? [f.geometry.coordinates.map((c: number[]) => from(c[0]!, c[1]!))] : []));
    const options = { runModel: velocity.model, runPermittivity: velocity.site.permittivity, survey: { lines } };
    // surveyed length of the pipes and cables, and the part of it a collection's features cover
    const covered = (fc: Collection): { lengthM: number; coveredM: number; report: ScoreReport } => {
      const report = scoreRun(fc as never, anomalies as never, truth, from, options as never);
      let lengthM = 0, coveredM = 0;
      report.buried.forEach((b, i) => {
        if (!(b.surveyedLengthM > 0) || !truth.buried[i]?.from) return;
        lengthM += b.surveyedLengthM;
        coveredM += b.recall * b.surveyedLengthM;
      });
      return { lengthM, coveredM, report };
    };
    const base = covered(targets);
    const unflagged = covered({ ...anomalies, features: anomalies.features.filter((f) => f.properties.origin !== 'above-ground') });
    const all = covered({ ...anomalies, features: anomalies.features.map((f) => ({ ...f, properties: { ...f.properties, origin: 'subsurface' } })) });
    pooled.lengthM += base.lengthM;
    pooled.targets += base.coveredM;
    pooled.unflagged += unflagged.coveredM;
    pooled.all += all.coveredM;
    if (process.env.VERBOSE && base.lengthM > 0 && all.coveredM - base.coveredM > 0.05 * base.lengthM) {
      const pct = (v: number) => `${((100 * v) / base.lengthM).toFixed(0)} %`;
      console.log(`${scene.padEnd(11)} ${base.lengthM.toFixed(0)} m: targets ${pct(base.coveredM)}, unflagged anomalies ${pct(unflagged.coveredM)}, all anomalies ${pct(all.coveredM)}`);
    }
    // the anomalies each rule kept out of the targets (flagged ones aside), added to the targets
    const ids = new Set(targets.features.map((f) => String(f.properties.id)));
    const byRule = new Map<string, Collection['features']>();
    for (const f of anomalies.features) {
      if (f.properties.origin === 'above-ground' || ids.has(String(f.properties.id))) continue;
      const k = ruleOf(f.properties);
      const list = byRule.get(k);
      if (list) list.push(f);
      else byRule.set(k, [f]);
    }
    for (const [k, fs] of byRule) {
      const added = covered({ ...targets, features: [...targets.features, ...fs] });
      const q = rules.get(k) ?? { lengthM: 0, buried: 0, air: 0, unmatched: 0, scenes: [] };
      const gain = added.coveredM - base.coveredM;
      q.lengthM += gain;
      if (gain > 0.5) q.scenes.push(`${scene}:${gain.toFixed(0)}`);
      const mine = new Set(fs.map((f) => String(f.properties.id)));
      for (const t of added.report.targets) if (mine.has(t.id)) q[t.kind]++;
      rules.set(k, q);
    }
  }

const pct = (v: number) => `${((100 * v) / pooled.lengthM).toFixed(1)} %`;
console.log(`utility length ${pooled.lengthM.toFixed(0)} m covered by targets ${pct(pooled.targets)}, by unflagged anomalies ${pct(pooled.unflagged)}, by all anomalies ${pct(pooled.all)}`);
console.log('length the anomalies kept out by each rule would add to the targets (their count by what they cover):');
for (const [k, q] of [...rules].sort((a, b) => b[1].lengthM - a[1].lengthM))
  console.log(`  +${pct(q.lengthM).padStart(6)}  buried ${q.buried} air ${q.air} nothing ${q.unmatched}  ${k}  [${q.scenes.slice(0, 6).join(' ')}]`);
