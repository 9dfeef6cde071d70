import { parseScenario, type Scenario } from '../src';

/** A quiet scenario in UTM metres: no noise, wow, ringing, clutter, direct or ground wave, unless overridden. */
export function quietScenario(over: Record<string, unknown> = {}): Scenario {
  const base = {
    name: 'tiny',
    seed: 7,
    crs: 'EPSG:32617',
    antenna: { frequencyMHz: 400, separationM: 0, directWave: 0, groundWave: 0, beamExponent: 0, shielding: 0.5 },
    recording: { sampleIntervalNs: 0.02, samples: 3000, timeZeroNs: 5 },
    soil: { permittivity: 9, attenuationDbPerM: 0 },
    noise: { rms: 0, wow: 0, ringing: 0, clutterPerM2: 0 },
    survey: { origin: [500000, 4000000], azimuthDeg: 90, lengthM: 4, widthM: 0, lineSpacingM: 0.5, traceSpacingM: 0.5, pattern: 'parallel' },
    plan: [],
    buried: [],
  };
  return parseScenario({ ...base, ...over });
}

/** Time (ns from the first sample) and value of the largest |sample|, refined by a parabola through its neighbours. */
export function pickPeak(trace: ArrayLike<number>, dtNs: number, from = 0, to = trace.length): { t: number; v: number } {
  let k = from;
  for (let i = from; i < to; i++) if (Math.abs(trace[i]!) > Math.abs(trace[k]!)) k = i;
  const a = trace[k - 1] ?? 0, b = trace[k]!, c = trace[k + 1] ?? 0;
  const den = a - 2 * b + c;
  const off = den === 0 ? 0 : (0.5 * (a - c)) / den;
  return { t: (k + off) * dtNs, v: b };
}
