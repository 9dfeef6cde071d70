// Why targets match nothing: for each kept scene folder of `pnpm bench field` (LAMINA_BENCH_FIELD_KEEP=1),
// each target that covers no buried object and lies on no air-wave locus (scoring's `unmatched`) is put
// in the first cause that fits, from the simulator's truth (never used by the pipeline):
//   pipe-body     on a pipe within 0.5 m + its radius in plan, its depth range reaching the pipe's body
//                 [z - R, z + R] but not the axis depth z that the scoring tests (a big pipe's top)
//   near-surface  its top lies inside the near-surface zone (run.json nearSurfaceM); ns-stone with a stone
//                 there, else ns-root with a root within 0.5 m in plan
//   echo          over a buried object in plan, deeper than it (ringing, multiples)
//   near-object   within 1.5 m + radius of a buried object in plan, at its depth (a piece off the axis)
//   layer         its depth range holds a truth interface's depth (with dip over the site)
//   stone / root  a clutter point / root within 0.5 m in plan and at its depth
//   other
// Also lists the real anomalies (on a buried object, on no air-wave locus) flagged above-ground, and the
// air-wave anomalies flagged and not flagged, by the tests that passed (DUMP=<file> writes every anomaly's
// label and evidence items, a JSON line each, to weigh the evidence offline). Also counts the targets that candidate rules would drop (buried / unmatched / air), to weigh a rule
// before building it. Usage: tsx bench/field-diagnose.ts <kept-dir> [scene ...] (VERBOSE=1 lists the
// unmatched targets, RULE=<name> those a rule drops, with each member's slice:strength dB). A diagnostic, not a score: the frozen
// definitions stay in packages/scoring.
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fresnelRadiusM } from '../packages/anomalies/src/index';
import { scoreFolder } from '../packages/scoring/src/index';
import { pointFromWgs84, resolveCrs } from '../packages/site/src/index';

type XY = [number, number];
const dir = process.argv[2]!;
const only = process.argv.slice(3);
const scenes = readdirSync(dir).filter((d) => d.endsWith('-out') && !d.endsWith('-keep-air')).map((d) => d.slice(0, -4)).filter((s) => !only.length || only.includes(s));

const segDist = (x: number, y: number, a: number[], b: number[]) => {
  const dx = b[0]! - a[0]!, dy = b[1]! - a[1]!, l2 = dx * dx + dy * dy;
  const t = l2 > 0 ? Math.max(0, Math.min(1, ((x - a[0]!) * dx + (y - a[1]!) * dy) / l2)) : 0;
  return { d: Math.hypot(x - a[0]! - t * dx, y - a[1]! - t * dy), t };
};

const totals: Record<string, number> = {};
// candidate rules: how many targets each would drop, of those covering a buried object and of the unmatched
const rules: Record<string, { buried: number; unmatched: number; air: number }> = {};
const byClass: Record<string, Record<string, number>> = {};
// real anomalies (on a buried object, on no locus) flagged above-ground, by the evidence that passed
const realFlagged: Record<string, number> = {};
// anomalies on an air-wave locus only, flagged or not, by the evidence that passed
const airFlagged: Record<string, number> = {};
const airMissed: Record<string, number> = {};
// DUMP=<file>: one JSON line per anomaly (label from the truth, the evidence items), to weigh the evidence
const dump: string[] = [];
// anomalies whose unsurveyed-obstruction test passed, by what they match (air / real / ambiguous / none)
const unsurveyedPasses: Record<string, number> = {};
const strengths: Record<string, number[]> = { buried: [], unmatched: [] };
for (const scene of scenes) {
  const out = join(dir, `${scene}-out`), site = join(dir, `${scene}-site`);
  const truthFile = join(site, 'truth.json');
  if (!existsSync(truthFile) || !existsSync(join(out, 'targets.geojson'))) continue;
  const { report, truth } = scoreFolder(out, truthFile);
  const t = JSON.parse(readFileSync(truthFile, 'utf8'));
  const run = JSON.parse(readFileSync(join(out, 'run.json'), 'utf8'));
  const nearSurfaceM: number = run.screening?.nearSurfaceM ?? run.nearSurfaceM ?? 0;
  const crs = resolveCrs(truth.crs, { file: truthFile, field: 'crs' });
  const from = (lon: number, lat: number) => pointFromWgs84(crs, lon, lat) as XY;
  const tg = JSON.parse(readFileSync(join(out, 'targets.geojson'), 'utf8'));
  const props = new Map<string, Record<string, any>>(tg.features.map((f: any) => [String(f.properties.id), f.properties]));
  const kinds = new Map(report.targets.map((r) => [r.id, r.kind]));
  for (const [id, kind] of kinds) {
    const p = props.get(id);
    if (p && (kind === 'buried' || kind === 'unmatched')) strengths[kind]!.push(p.strengthDb ?? NaN);
  }
  const xs = t.lines.flatMap((l: any) => [l.start[0], l.end[0]]), ys = t.lines.flatMap((l: any) => [l.start[1], l.end[1]]);
  const span = Math.hypot(Math.max(...xs) - Math.min(...xs), Math.max(...ys) - Math.min(...ys));
  const rows: string[] = [];
  const vel = JSON.parse(readFileSync(join(out, 'velocity.json'), 'utf8'));
  const v: number = vel.site.velocityMPerNs, f: number = t.antenna.frequencyMHz;
  const azs: number[] = t.lines.map((l: any) => Math.atan2(l.end[0] - l.start[0], l.end[1] - l.start[1]) * 180 / Math.PI);
  // line spacing: median distance from each line's midpoint to the nearest other line of its direction
  const mids = t.lines.map((l: any) => [(l.start[0] + l.end[0]) / 2, (l.start[1] + l.end[1]) / 2]);
  const sp: number[] = [];
  t.lines.forEach((_l: any, i: number) => {
    let best = Infinity;
    t.lines.forEach((m: any, j: number) => {
      if (i === j) return;
      const da = Math.abs((((azs[i]! - azs[j]!) % 180) + 180) % 180);
      if (Math.min(da, 180 - da) > 10) return;
      best = Math.min(best, segDist(mids[i]![0], mids[i]![1], m.start, m.end).d);
    });
    if (Number.isFinite(best)) sp.push(best);
  });
  sp.sort((a, b) => a - b);
  const spacing = sp[Math.floor(sp.length / 2)] ?? 1;
  const anomalyProps = new Map<string, any>(JSON.parse(readFileSync(join(out, 'anomalies.geojson'), 'utf8')).features.map((q: any) => [String(q.properties.id), q.properties]));
  for (const r of report.targets) {
    const a = anomalyProps.get(r.id);
    if (!a) continue;
    const members = a.members as { topM: number; bottomM: number }[];
    const fired: string[] = [];
    // the near-surface rule with a stricter share of a slice inside the zone (the classifier takes half)
    for (const fr of [0, 0.25]) if (a.depthTopM < nearSurfaceM && !members.some((m) => m.topM >= nearSurfaceM - fr * (m.bottomM - m.topM))) fired.push(`nearSurface${fr}`);
    // candidates for the near-surface zone: no member wholly below it (every slice reaches into it), compact,
    // and (Narrow) narrower than two line spacings or (Across) crossing fewer than three lines
    const inTransition = a.depthTopM < nearSurfaceM + 1e-9 && !members.some((m) => m.topM >= nearSurfaceM);
    if (a.kind !== 'linear' && inTransition) fired.push('nsTransitionCompact');
    if (a.kind !== 'linear' && inTransition && a.widthM < 2 * spacing) fired.push('nsTransitionCompactNarrow');
    const angle = Math.min(...azs.map((az) => { const d = Math.abs((((a.directionDeg - az) % 180) + 180) % 180); return Math.min(d, 180 - d); }));
    // extent across the survey lines of a box L x W at the anomaly's angle to the nearest line direction
    const rad = (angle * Math.PI) / 180;
    const across = a.lengthM * Math.abs(Math.sin(rad)) + a.widthM * Math.abs(Math.cos(rad));
    if (inTransition && across < 2 * spacing) fired.push('nsTransitionAcross');
    const rf = fresnelRadiusM(0.5 * (a.depthTopM + a.depthBottomM), v, f);
    if (a.kind === 'linear' && a.widthM <= spacing && 2 * rf - spacing > a.widthM) fired.push('narrowStripAnyDirection');
    if (a.widthM < rf) fired.push('narrowerThanFresnel');
    const nSl = new Set(members.map((m: any) => m.slice ?? m.topM)).size;
    const pointSize = 2 * rf + spacing + 0.1;
    if (a.kind !== 'linear' && a.lengthM <= pointSize && nSl <= 2) fired.push('pointSized2');
    if (a.kind !== 'linear' && a.lengthM <= pointSize && nSl <= 3) fired.push('pointSized3');
    if (a.kind !== 'linear' && a.lengthM <= pointSize) fired.push('pointSizedAny');
    if (a.strengthDb < 10) fired.push('weakerThan10dB');
    // short utility-class pieces (issue 12: about 60 % of the unmatched targets in session 14), by length in line spacings
    for (const k of [4, 6, 8]) if (a.class === 'utility' && a.lengthM < k * spacing * (t.metresPerUnit ?? 1)) fired.push(`shortUtility${k}`);
    {
      const th = Math.max(...members.map((m: any) => m.bottomM - m.topM));
      const zt = Math.max(a.depthTopM, nearSurfaceM);
      const rX = Math.sqrt(Math.max(0, (zt + th) ** 2 - zt ** 2));
      const lam = (1000 * v) / f;
      const foot = 2 * rX + spacing + lam / 2;
      const dz = a.depthBottomM - a.depthTopM;
      const pulse = (1.5 * v * 1000) / (2 * f);
      if (a.kind !== 'linear' && a.lengthM <= foot && dz <= pulse + th + 1e-6) fired.push('pointResponse');
      if (a.lengthM <= foot && dz <= pulse + th + 1e-6) fired.push('pointResponseAny');
      const zm = Math.max(a.depthTopM, nearSurfaceM);
      const rS = Math.sqrt(2 * zm * th + th * th);
      if (a.kind === 'linear' && angle <= 15 && a.widthM <= 2 * spacing && rS > spacing) fired.push('alongOneLineSlice');
      if (a.kind === 'linear' && angle <= 15 && a.widthM <= 2 * spacing && rX > spacing) fired.push('alongOneLinePulse');
    }
    if (nSl <= 2 && a.areaM2 >= Math.PI * rf * rf) fired.push('thinSheet');
    if (nSl <= 2 && a.areaM2 >= 4 * Math.PI * rf * rf) fired.push('thinSheet4');
    if (nSl <= 1 && a.areaM2 >= Math.PI * rf * rf) fired.push('thinSheet1');
    if (process.env.RULE && fired.includes(process.env.RULE)) console.log(`[${(a.members as any[]).map((m) => `${m.slice}:${m.strengthDb}`).join(' ')}] `+`    ${process.env.RULE} ${r.kind} ${r.kind === 'buried' ? r.matches : ''} ${r.id} ${a.class} z ${a.depthTopM.toFixed(2)}-${a.depthBottomM.toFixed(2)} L ${a.lengthM?.toFixed(1)} W ${a.widthM?.toFixed(2)} angle ${angle.toFixed(0)} rF ${rf.toFixed(2)} s ${spacing.toFixed(2)} ${a.strengthDb} dB`);
    for (const k of fired) { const q = (rules[k] ??= { buried: 0, unmatched: 0, air: 0 }); q[r.kind]++; }
  }
  for (const row of report.anomalies) {
    const ev = (anomalyProps.get(row.id)?.evidence ?? []) as any[];
    if (ev.some((e) => e.test === 'unsurveyed-obstruction' && e.passed)) {
      const k = row.buried && row.reflector ? 'ambiguous' : row.reflector ? 'air' : row.buried ? 'real' : 'none';
      unsurveyedPasses[k] = (unsurveyedPasses[k] ?? 0) + 1;
    }
    const a = anomalyProps.get(row.id);
    const tests = [...new Set(((a?.evidence ?? []) as any[]).filter((e) => e.passed && e.weight > 0).map((e) => e.test as string))].sort().join('+') || 'none';
    if (process.env.DUMP) {
      const label = row.reflector && !row.buried ? 'air' : row.buried && !row.reflector ? 'real' : row.buried ? 'ambiguous' : 'none';
      dump.push(JSON.stringify({ scene, id: row.id, label, flagged: row.origin === 'above-ground', p: a?.pAboveGround, cls: a?.class, evidence: ((a?.evidence ?? []) as any[]).map((e) => ({ test: e.test, featureId: e.featureId, passed: e.passed, weight: e.weight, slice: e.slice })) }));
    }
    if (row.reflector && !row.buried) {
      const tally = row.origin === 'above-ground' ? airFlagged : airMissed;
      tally[tests] = (tally[tests] ?? 0) + 1;
    }
    if (!row.buried || row.reflector || row.origin !== 'above-ground') continue;
    realFlagged[tests] = (realFlagged[tests] ?? 0) + 1;
    if (process.env.VERBOSE) rows.push(`  flagged ${row.id} on ${row.buried} z ${a.depthTopM.toFixed(2)}-${a.depthBottomM.toFixed(2)} ${a.kind} L ${a.lengthM.toFixed(1)} W ${a.widthM.toFixed(1)} slices ${a.slices.length} P ${a.pAboveGround.toFixed(2)} by ${tests}`);
  }
  const count: Record<string, number> = {};
  for (const r of report.targets) {
    if (r.kind !== 'unmatched') continue;
    const p = props.get(r.id)!;
    const anom = anomalyProps.get(r.id) ?? p;
    const [x, y] = from(p.centroid[0], p.centroid[1]);
    const top = p.depthTopM as number, bottom = p.depthBottomM as number;
    const tol = (z: number) => Math.max(0.25, 0.25 * z);
    let cause = 'other';
    // on a pipe's body away from its axis depth: within 0.5 m + R of the axis in plan, the depth range
    // (widened as the scoring widens it) reaching [z - R, z + R] but not z itself (the scoring's
    // buried-sample rule tests the axis depth only: a big pipe's top reflection, R above it, is unmatched)
    const flat = (c: any): number[][] => (typeof c[0] === 'number' ? [c] : c.flatMap(flat));
    const verts: XY[] = [[x, y], ...((anom.members ?? []) as any[]).flatMap((m) => flat(m.outline?.coordinates ?? []).map((c) => from(c[0]!, c[1]!)))];
    const onPipeBody = t.buried.some((b: any) => {
      if (b.center) return false;
      return verts.some(([vx, vy]) => {
        const s = segDist(vx, vy, b.from, b.to);
        const z = b.from[2] + s.t * (b.to[2] - b.from[2]);
        return s.d <= 0.5 + b.radiusM && top - tol(z) <= z + b.radiusM && bottom + tol(z) >= z - b.radiusM;
      });
    });
    const rootNear = (t.roots ?? []).some((q: number[]) => segDist(x, y, q.slice(0, 2), q.slice(3, 5)).d < 0.5);
    const stoneNear = t.clutter.some((c: number[]) => Math.hypot(c[0]! - x, c[1]! - y) < 0.5 && c[2]! >= top - tol(c[2]!) && c[2]! <= bottom + tol(c[2]!));
    if (onPipeBody) cause = 'pipe-body';
    else if (top < nearSurfaceM) cause = stoneNear ? 'ns-stone' : rootNear ? 'ns-root' : 'near-surface';
    else {
      for (const b of t.buried) {
        const { d, z } = b.center ? { d: Math.hypot(x - b.center[0], y - b.center[1]), z: b.center[2] } : (() => { const s = segDist(x, y, b.from, b.to); return { d: s.d, z: b.from[2] + s.t * (b.to[2] - b.from[2]) }; })();
        const half = b.sizeM ? Math.max(...b.sizeM) / 2 : b.radiusM;
        if (d <= 0.5 + half && top > b.bottomDepthM + tol(z) * 0) { cause = cause === 'other' ? 'echo' : cause; }
        else if (d <= 1.5 + half && top <= z + tol(z) && bottom >= z - tol(z)) cause = cause === 'other' ? 'near-object' : cause;
      }
      if (cause === 'other')
        for (const l of t.soil.layers.slice(1)) {
          const dz = Math.tan((l.dipDeg * Math.PI) / 180) * span;
          if (top <= l.topM + dz + tol(l.topM) && bottom >= l.topM - dz - tol(l.topM)) cause = 'layer';
        }
      if (cause === 'other' && t.clutter.some((c: number[]) => Math.hypot(c[0]! - x, c[1]! - y) < 0.5 && c[2]! >= top - tol(c[2]!) && c[2]! <= bottom + tol(c[2]!))) cause = 'stone';
      if (cause === 'other' && rootNear) cause = 'root';
    }
    count[cause] = (count[cause] ?? 0) + 1;
    totals[cause] = (totals[cause] ?? 0) + 1;
    (byClass[p.class ?? 'none'] ??= {})[cause] = (byClass[p.class ?? 'none']![cause] ?? 0) + 1;
    rows.push(`  ${r.id} ${String(p.class).padEnd(9)} ${cause.padEnd(12)} z ${top.toFixed(2)}-${bottom.toFixed(2)} sl ${(anom.slices ?? []).length} ${String(anom.kind).padEnd(7)} L ${Number(anom.lengthM ?? 0).toFixed(1)} W ${Number(anom.widthM ?? 0).toFixed(1)} A ${Number(anom.areaM2 ?? 0).toFixed(1)} ${Number(p.strengthDb).toFixed(1)} dB score ${Number(anom.peakScore).toFixed(1)}`);
  }
  const nT = report.targets.length;
  console.log(`${scene}: ${nT} targets, ${report.targets.filter((q) => q.kind === 'buried').length} buried, ${rows.length} unmatched: ${JSON.stringify(count)} (near-surface ${nearSurfaceM.toFixed(2)} m, K ${t.soil.permittivity}, ${t.antenna.frequencyMHz} MHz, clutter ${t.clutter.length}, layers ${t.soil.layers.length - 1})`);
  if (process.env.VERBOSE) console.log(rows.join('\n'));
}
console.log('rules (targets each would drop):', JSON.stringify(rules));
console.log('unmatched targets by cause:', JSON.stringify(totals));
console.log('real anomalies flagged above-ground, by the evidence that passed:', JSON.stringify(realFlagged));
if (process.env.DUMP) writeFileSync(process.env.DUMP, dump.join('\n') + '\n');
const sorted = (r: Record<string, number>) => JSON.stringify(Object.fromEntries(Object.entries(r).sort((p, q) => q[1] - p[1])));
console.log('air-wave anomalies flagged, by the evidence that passed:', sorted(airFlagged));
console.log('air-wave anomalies not flagged, by the evidence that passed:', sorted(airMissed));
console.log('unsurveyed-obstruction passed on anomalies matching:', JSON.stringify(unsurveyedPasses));
for (const [c, v] of Object.entries(byClass)) console.log(`  ${c}: ${JSON.stringify(v)}`);
const q = (a: number[], f: number) => { const s = a.filter(Number.isFinite).sort((p, r) => p - r); return s[Math.floor(f * (s.length - 1))]?.toFixed(1); };
for (const k of ['buried', 'unmatched']) console.log(`strengthDb of ${k} targets: n ${strengths[k]!.length}, q10 ${q(strengths[k]!, 0.1)} q25 ${q(strengths[k]!, 0.25)} q50 ${q(strengths[k]!, 0.5)} q75 ${q(strengths[k]!, 0.75)} q90 ${q(strengths[k]!, 0.9)}`);
