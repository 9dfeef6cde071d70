import { buildAnomaly, makeMember, memberOf, type Anomaly3D, type Member } from '@lamina/anomalies';
import type { SliceStack } from '@lamina/slices';
import { combine, WEIGHTS, type Evidence } from './evidence';
import type { ScreenedAnomaly } from './screened';
import type { ScreenContext } from './context';

export interface BridgeOptions {
  /** Robust score a corridor cell needs to carry the object. */
  lowThreshold: number;
  /** Share of the gap along which the corridor must carry it. @default 0.8 */
  minSupport?: number;
  /** Share of the bridge cells that an above-ground anomaly must hold (the field that swallowed it). @default 0.5 */
  minSwallowed?: number;
}

type XY = [number, number];

function angleDiff(a: number, b: number): number {
  const d = Math.abs(a - b) % 180;
  return Math.min(d, 180 - d);
}

const azimuth = (dx: number, dy: number) => ((((Math.atan2(dx, dy) * 180) / Math.PI) % 180) + 180) % 180;

/**
 * Pipes through ghost fields. A dense field of air-wave loci (a row of bollards, a ring of posts) is
 * one above-ground component in each slice, and a buried pipe crossing it is taken into it: only its
 * pieces outside the field stay subsurface. A buried object keeps its plan position and depth, so two
 * subsurface linear anomalies that are collinear (directions and the gap between their facing ends
 * within the parallel tolerance), share a slice, and face each other across a gap no wider than the
 * field can be (twice the largest locus radius plus its tolerance at their depth) are one object when,
 * in a shared slice, a corridor as wide as the pieces scores at least `lowThreshold` along `minSupport`
 * of the gap and above-ground anomalies hold at least `minSwallowed` of those cells. The corridor's
 * cells move from the above-ground anomalies to the joined one, which carries a `continuity` item.
 */
export function bridgeThroughFields(screened: ScreenedAnomaly[], stack: SliceStack, scores: Float32Array[], ctx: ScreenContext, options: BridgeOptions): { screened: ScreenedAnomaly[]; bridges: number } {
  const g = stack.grid;
  const mpu = ctx.metresPerUnit;
  const minSupport = options.minSupport ?? 0.8;
  const minSwallowed = options.minSwallowed ?? 0.5;
  let list = [...screened];
  let bridges = 0;
  let nextId = 1 << 30;
  for (let pass = 0; pass < 8; pass++) {
    // cells held by above-ground members, per slice
    const airCells = new Map<number, Set<number>>();
    for (const s of list) {
      if (s.verdict.origin !== 'above-ground') continue;
      for (const m of s.anomaly.members) {
        const set = airCells.get(m.slice) ?? new Set<number>();
        for (let ci = 0; ci < m.cells.length; ci++) set.add(m.cells[ci]!);
        airCells.set(m.slice, set);
      }
    }
    const cands = list.filter((s) => s.verdict.origin === 'subsurface' && s.anomaly.shape.kind === 'linear' && s.anomaly.centreline && s.anomaly.centreline.length >= 2);
    let found: { a: ScreenedAnomaly; b: ScreenedAnomaly; cells: Map<number, Int32Array>; evidence: Evidence } | undefined;
    for (let i = 0; i < cands.length && !found; i++)
      for (let j = i + 1; j < cands.length && !found; j++) {
        const r = tryBridge(cands[i]!, cands[j]!);
        if (r) found = { a: cands[i]!, b: cands[j]!, ...r };
      }
    if (!found) break;
    bridges++;
    const { a, b, cells, evidence } = found;
    const takenSets = new Map([...cells].map(([k, cs]) => [k, new Set(cs)]));
    const taken = (k: number, c: number) => takenSets.get(k)?.has(c) ?? false;
    const next: ScreenedAnomaly[] = [];
    for (const s of list) {
      if (s === a || s === b) continue;
      const hit = s.anomaly.members.some((m) => cells.has(m.slice) && m.cells.some((c) => taken(m.slice, c)));
      if (!hit) {
        next.push(s);
        continue;
      }
      const members: Member[] = [];
      for (const m of s.anomaly.members) {
        if (!cells.has(m.slice)) {
          members.push(m);
          continue;
        }
        const keep: number[] = [];
        for (let q = 0; q < m.cells.length; q++) if (!taken(m.slice, m.cells[q]!)) keep.push(q);
        if (keep.length === m.cells.length) members.push(m);
        else if (keep.length > 0) members.push(memberOf(m.id, m.slice, Int32Array.from(keep, (q) => m.cells[q]!), Float32Array.from(keep, (q) => m.scores[q]!), stack, { metresPerUnit: mpu }));
      }
      if (members.length > 0) next.push({ anomaly: buildAnomaly(s.anomaly.id, members, stack, { metresPerUnit: mpu }), evidence: s.evidence, verdict: s.verdict });
    }
    const bridgeMembers = [...cells].map(([k, cs]) => makeMember(nextId++, k, cs, stack, scores[k]!, { metresPerUnit: mpu }));
    const joined = buildAnomaly(a.anomaly.id, [...a.anomaly.members, ...b.anomaly.members, ...bridgeMembers], stack, { metresPerUnit: mpu });
    const ev = [...a.evidence, ...b.evidence, evidence];
    next.push({ anomaly: joined, evidence: ev, verdict: combine(ev) });
    list = next;

    function tryBridge(p: ScreenedAnomaly, q: ScreenedAnomaly): { cells: Map<number, Int32Array>; evidence: Evidence } | undefined {
      const A = p.anomaly, B = q.anomaly;
      if (angleDiff(A.shape.directionDeg, B.shape.directionDeg) > ctx.parallelToleranceDeg) return undefined;
      const shared = [...new Set(A.members.map((m) => m.slice))].filter((k) => B.members.some((m) => m.slice === k));
      if (shared.length === 0) return undefined;
      // facing ends: the closest pair of centreline end points
      const ends = (x: Anomaly3D): XY[] => [x.centreline![0]!, x.centreline![x.centreline!.length - 1]!];
      let ea: XY = [0, 0], eb: XY = [0, 0], best = Infinity;
      for (const u of ends(A)) for (const v of ends(B)) {
        const d = Math.hypot(u[0] - v[0], u[1] - v[1]);
        if (d < best) [best, ea, eb] = [d, u, v];
      }
      const gapM = best * mpu;
      const cellM = g.cellSize * mpu;
      if (gapM < 2 * cellM) return undefined; // touching pieces are linking's business
      const reach = Math.max(...shared.map((k) => ctx.loci[k]!.radiusM + ctx.loci[k]!.toleranceM));
      if (gapM > 2 * reach) return undefined;
      const gapAz = azimuth(eb[0] - ea[0], eb[1] - ea[1]);
      if (angleDiff(gapAz, A.shape.directionDeg) > ctx.parallelToleranceDeg || angleDiff(gapAz, B.shape.directionDeg) > ctx.parallelToleranceDeg) return undefined;
      const halfW = Math.max(0.5 * Math.max(A.shape.widthM, B.shape.widthM), cellM) / mpu;
      const ux = (eb[0] - ea[0]) / best, uy = (eb[1] - ea[1]) / best;
      const nx = uy, ny = -ux;
      const steps = Math.max(2, Math.ceil((2 * best) / g.cellSize));
      let bestSlice: { k: number; support: number; swallowed: number } | undefined;
      const cells = new Map<number, Int32Array>();
      for (const k of shared) {
        const z = scores[k];
        if (!z) continue;
        const air = airCells.get(k);
        const chosen = new Set<number>();
        let supported = 0;
        for (let s = 1; s < steps; s++) {
          const t = (s / steps) * best;
          let top = -Infinity;
          for (let w = -halfW; w <= halfW + 1e-9; w += 0.5 * g.cellSize) {
            const x = ea[0] + ux * t + nx * w, y = ea[1] + uy * t + ny * w;
            const col = Math.floor((x - g.originX) / g.cellSize), row = Math.floor((g.originY - y) / g.cellSize);
            if (col < 0 || row < 0 || col >= g.width || row >= g.height) continue;
            const c = row * g.width + col;
            const v = z[c]!;
            if (!(v >= options.lowThreshold)) continue;
            top = Math.max(top, v);
            chosen.add(c);
          }
          if (top >= options.lowThreshold) supported++;
        }
        const support = supported / (steps - 1);
        if (support < minSupport || chosen.size === 0) continue;
        let swallowed = 0;
        for (const c of chosen) if (air?.has(c)) swallowed++;
        if (swallowed < minSwallowed * chosen.size) continue;
        // the corridor is carried through every shared slice where it holds
        cells.set(k, Int32Array.from(chosen).sort());
        if (!bestSlice || support > bestSlice.support) bestSlice = { k, support, swallowed: swallowed / chosen.size };
      }
      if (!bestSlice) return undefined;
      return {
        cells,
        evidence: {
          test: 'continuity',
          featureId: null,
          measured: bestSlice.support,
          expected: minSupport,
          tolerance: 0,
          units: 'share of gap',
          passed: true,
          weight: WEIGHTS.continuity,
          slice: bestSlice.k,
          detail: `${A.id} and ${B.id} are collinear at the same depth on both sides of an above-ground field; the corridor between them (${gapM.toFixed(2)} m) carries the object along ${(100 * bestSlice.support).toFixed(0)} % of the gap (slice ${bestSlice.k}), ${(100 * bestSlice.swallowed).toFixed(0)} % of it inside above-ground anomalies`,
        },
      };
    }
  }
  return { screened: list, bridges };
}
