import { medianInPlace as median } from '@lamina/stats';
import { apexDistance, hyperbolaTime } from './fit';

/** The line and settings of `detectHyperbolas`' velocity scan. */
export interface ScanLine {
  /** Normalised envelope, nTraces x nSamples. */
  N: Float32Array;
  /** Offset of each trace along the line, m (never decreasing). */
  along: Float64Array;
  nTraces: number;
  nSamples: number;
  separationM: number;
  /** Mean trace spacing, m. */
  spacing: number;
  /** Tangent of the half-aperture angle. */
  tanA: number;
  maxApertureM: number;
  dtNs: number;
  timeZeroNs: number;
  /** The scan's velocities, m/ns. */
  velocities: Float64Array;
  /** Traces either side of the candidate's trace tried as the apex position. */
  apexShift: number;
}

/**
 * The curve geometry and scores of a scan line (JavaScript): the normalised envelope between samples,
 * the traces within an aperture, the half-aperture at a depth, a curve's score, and the scan of one apex
 * candidate (`kernelScan` of ./detect-wasm.ts runs the same in WebAssembly).
 */
export function curveTools(line: ScanLine) {
  const { N, along, nTraces, nSamples, separationM: sep, spacing, tanA, maxApertureM: maxAp, dtNs, timeZeroNs, velocities, apexShift } = line;
  const at = (t: number, sf: number): number => {
    if (sf < 0 || sf > nSamples - 1) return 0;
    const s0 = Math.floor(sf);
    const f = sf - s0;
    const a = N[t * nSamples + s0]!;
    return f > 0 ? a + f * (N[t * nSamples + s0 + 1]! - a) : a;
  };
  const sampleOf = (tNs: number) => (tNs + timeZeroNs) / dtNs;

  // Traces within x0 -+ ap: the first at or past x0 - ap (at most the last), the last at or before x0 + ap
  // (at least the first). `along` never decreases, so by bisection (the scan calls this for every curve).
  const traceRange = (x0: number, ap: number): [number, number] => {
    const lo = x0 - ap;
    let a = 0;
    let r = nTraces - 1;
    while (a < r) {
      const m = (a + r) >> 1;
      if (along[m]! < lo) a = m + 1;
      else r = m;
    }
    const hi = x0 + ap;
    let l = 0;
    let b = nTraces - 1;
    while (l < b) {
      const m = (l + b + 1) >> 1;
      if (along[m]! > hi) b = m - 1;
      else l = m;
    }
    return [a, b];
  };
  const apertureOf = (z: number) => Math.min(maxAp, Math.max(5 * spacing, z * tanA));

  // Score of a curve: the smaller of the two flanks' medians of the normalised envelope along it. A
  // median ignores a few crossings of strong straight events (air waves from walls), and taking the
  // weaker flank favours curves that follow both flanks of a real hyperbola.
  const left = new Float32Array(nTraces);
  const right = new Float32Array(nTraces);
  // With `floor`, a score that cannot exceed it is returned as `floor` itself, decided by counting the
  // values above it (the median of n values is <= floor when fewer than n / 2 exceed it, and > floor when
  // more than n / 2 do), without the selections: the scan only needs the scores above its threshold.
  // The flanks' sizes are counted first (positions only), so that with `floor` the values stop as soon
  // as one flank can no longer have half of them above it: the same result, most curves of the scan
  // decided after a part of one flank.
  const curveScore = (x0: number, z: number, v: number, ap: number, floor = -Infinity): number => {
    const [a, b] = traceRange(x0, ap);
    const stride = Math.max(1, Math.ceil((b - a + 1) / 120));
    const skip = 1.5 * spacing;
    let nl = 0;
    let nr = 0;
    for (let j = a; j <= b; j += stride) {
      const d = along[j]! - x0;
      if (Math.abs(d) < skip) continue;
      if (d < 0) nl++;
      else nr++;
    }
    if (nl < 2 || nr < 2) return 0;
    // a flank fails (fewer than half of its values above `floor`) once more than half are not above it
    let il = 0;
    let ir = 0;
    let bl = 0;
    let br = 0;
    for (let j = a; j <= b; j += stride) {
      const d = along[j]! - x0;
      if (Math.abs(d) < skip) continue;
      const u = at(j, sampleOf(hyperbolaTime(along[j]!, x0, z, v, sep)));
      if (d < 0) {
        left[il++] = u;
        if (!(u > floor) && 2 * ++bl > nl) return floor;
      } else {
        right[ir++] = u;
        if (!(u > floor) && 2 * ++br > nr) return floor;
      }
    }
    return Math.min(median(left.subarray(0, nl)), median(right.subarray(0, nr)));
  };

  /**
   * Scan velocity and a few traces of apex position for a candidate at trace ct, apex time t0 (noise moves
   * the envelope maximum off the apex): per velocity the best score into scoreV (-1: none) and its apex
   * offset into xV. Only scores above `floor` make starts, so it goes to `curveScore`.
   */
  const scan = (ct: number, t0: number, floor: number, scoreV: Float64Array, xV: Float64Array): void => {
    scoreV.fill(-1);
    for (let dj = -apexShift; dj <= apexShift; dj++) {
      const j = ct + dj;
      if (j < 0 || j >= nTraces) continue;
      for (let k = 0; k < velocities.length; k++) {
        const v = velocities[k]!;
        const z = apexDistance(t0, v, sep);
        if (!(z > 0)) continue;
        const sc = curveScore(along[j]!, z, v, apertureOf(z), floor);
        if (sc > scoreV[k]!) {
          scoreV[k] = sc;
          xV[k] = along[j]!;
        }
      }
    }
  };
  return { at, sampleOf, traceRange, apertureOf, curveScore, scan };
}
