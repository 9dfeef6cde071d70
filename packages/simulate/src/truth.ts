import type { Crs } from '@lamina/site';
import { C_M_PER_NS } from '@lamina/constants';
import { velocityOf } from './physics';
import { depthOfTwoWayTime, verticalTwoWayTime } from './medium';
import { STAT_FIELDS } from './forward';
import type { Model, TruthAbove, TruthBuried } from './model';

/**
 * truth.json: what the simulator put in the ground and around it, for scoring and tests. The fields of
 * DEVELOPERS.md ("truth.json") are kept; the rest is added for scoring:
 * - `response` of each buried target and `airWave` of each above-ground reflector: peak amplitude in the
 *   raw traces (direct air wave = 1) and how many traces show it above 3x the noise RMS;
 * - `airWave.distanceMinM/MaxM`: half the bistatic air path over those traces (the horizontal distance r
 *   of the monostatic rule), and `apparentDepthMinM/MaxM`: the depth a two-way time of 2r/c converts to in
 *   the simulated soil (r / sqrt(K) in a uniform soil), i.e. where its reflections appear in depth slices.
 */
export interface Truth {
  scenario: { name: string; seed: number };
  soil: {
    permittivity: number;
    velocityMPerNs: number;
    attenuationDbPerM: number;
    layers: { topM: number; bottomM: number | null; permittivity: number; velocityMPerNs: number; attenuationDbPerM: number; dipDeg: number; dipAzimuthDeg: number }[];
  };
  crs: string;
  metresPerUnit: number;
  antenna: { frequencyMHz: number; separationM: number; shielding: number; beamExponent: number };
  recording: { sampleIntervalNs: number; samples: number; timeZeroNs: number; timeZeroJitterNs: number; timeZeroDriftNs: number };
  noiseRms: number;
  buried: (TruthBuried & { topDepthM: number; bottomDepthM: number; response: { peakAmplitude: number; traces: number; apexTwoWayTimeNs: number; averageVelocityMPerNs: number } })[];
  aboveGround: (TruthAbove & {
    airWave: { peakAmplitude: number; traces: number; distanceMinM: number | null; distanceMaxM: number | null; apparentDepthMinM: number | null; apparentDepthMaxM: number | null };
  })[];
  lines: { id: string; file: string; positionSource: string; nTraces: number; start: [number, number]; end: [number, number] }[];
  clutter: [number, number, number][];
  /** Roots [x0, y0, z0, x1, y1, z1] (only when the scene has any). */
  roots?: [number, number, number, number, number, number][];
}

function r6(v: number): number {
  return Math.round(v * 1e6) / 1e6;
}

export function buildTruth(m: Model, crs: Crs, stats: Float64Array): Truth {
  const s = m.scenario;
  const mpu = m.metresPerUnit;
  const [ox, oy] = m.origin;
  const local = (p: readonly number[]): [number, number] => [((p[0] ?? 0) - ox) * mpu, ((p[1] ?? 0) - oy) * mpu];
  const buriedStats = new Map<number, number>();
  const aboveStats = new Map<number, number>();
  m.scatterers.forEach((sc, i) => {
    if (sc.truth < 0) return;
    (sc.medium === 'air' ? aboveStats : buriedStats).set(sc.truth, i);
  });
  const layers = (s.soil.layers ?? []).map((l, i, all) => ({
    topM: l.depthM,
    bottomM: all[i + 1]?.depthM ?? null,
    permittivity: l.permittivity,
    velocityMPerNs: r6(velocityOf(l.permittivity)),
    attenuationDbPerM: l.attenuationDbPerM ?? s.soil.attenuationDbPerM,
    dipDeg: l.dipDeg ?? 0,
    dipAzimuthDeg: l.dipAzimuthDeg ?? 0,
  }));
  const top = { topM: 0, bottomM: layers[0]?.topM ?? null, permittivity: s.soil.permittivity, velocityMPerNs: r6(velocityOf(s.soil.permittivity)), attenuationDbPerM: s.soil.attenuationDbPerM, dipDeg: 0, dipAzimuthDeg: 0 };

  const buried = m.buried.map((b, i) => {
    const o = (buriedStats.get(i) ?? 0) * STAT_FIELDS;
    let topD: number, botD: number, at: [number, number];
    if (b.kind === 'compact') {
      const c = b.center!;
      const hh = b.shape === 'box' ? b.sizeM![2] / 2 : b.radiusM;
      topD = c[2] - hh;
      botD = c[2] + hh;
      at = local(c);
    } else {
      topD = Math.min(b.from![2], b.to![2]) - b.radiusM;
      botD = Math.max(b.from![2], b.to![2]) + b.radiusM;
      const shallow = b.from![2] <= b.to![2] ? b.from! : b.to!;
      at = local(shallow);
    }
    const t = verticalTwoWayTime(m.medium, at[0], at[1], Math.max(topD, 1e-6));
    return {
      ...b,
      topDepthM: r6(topD),
      bottomDepthM: r6(botD),
      response: {
        peakAmplitude: r6(stats[o] ?? 0),
        traces: stats[o + 3] ?? 0,
        apexTwoWayTimeNs: r6(t),
        averageVelocityMPerNs: r6((2 * Math.max(topD, 1e-6)) / t),
      },
    };
  });

  const aboveGround = m.above.map((a, i) => {
    const o = (aboveStats.get(i) ?? 0) * STAT_FIELDS;
    const n = stats[o + 3] ?? 0;
    const rMin = n > 0 ? stats[o + 1]! : null;
    const rMax = n > 0 ? stats[o + 2]! : null;
    const at = local(a.center ?? [((a.from![0] + a.to![0]) / 2), ((a.from![1] + a.to![1]) / 2)]);
    const depth = (r: number | null): number | null => (r === null ? null : r6(depthOfTwoWayTime(m.medium, at[0], at[1], (2 * r) / C_M_PER_NS)));
    return {
      ...a,
      airWave: { peakAmplitude: r6(stats[o] ?? 0), traces: n, distanceMinM: rMin === null ? null : r6(rMin), distanceMaxM: rMax === null ? null : r6(rMax), apparentDepthMinM: depth(rMin), apparentDepthMaxM: depth(rMax) },
    };
  });

  const lines = m.lines.map((l) => {
    const n = l.mx.length;
    return {
      id: l.id,
      file: `lines/${l.id}.sgy`,
      positionSource: l.positionSource,
      nTraces: n,
      start: [r6(ox + l.mx[0]! / mpu), r6(oy + l.my[0]! / mpu)] as [number, number],
      end: [r6(ox + l.mx[n - 1]! / mpu), r6(oy + l.my[n - 1]! / mpu)] as [number, number],
    };
  });
  return {
    scenario: { name: s.name, seed: s.seed },
    soil: { permittivity: s.soil.permittivity, velocityMPerNs: r6(velocityOf(s.soil.permittivity)), attenuationDbPerM: s.soil.attenuationDbPerM, layers: [top, ...layers] },
    crs: crs.code ?? s.crs,
    metresPerUnit: mpu,
    antenna: { frequencyMHz: m.frequencyMHz, separationM: m.separationM, shielding: m.shielding, beamExponent: m.beamExponent },
    recording: { sampleIntervalNs: m.dtNs, samples: m.nSamples, timeZeroNs: m.timeZeroNs, timeZeroJitterNs: m.timeZeroJitterNs, timeZeroDriftNs: m.timeZeroDriftNs },
    noiseRms: m.noiseRms,
    buried,
    aboveGround,
    lines,
    clutter: m.clutter.map((c) => [r6(c[0]), r6(c[1]), r6(c[2])] as [number, number, number]),
    ...(m.roots.length ? { roots: m.roots.map((c) => c.map(r6) as [number, number, number, number, number, number]) } : {}),
  };
}
