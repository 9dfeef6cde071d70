import type { RadarLine } from '@lamina/radar-data';
import { alongTrackM, outputFor, withData } from './line-util';

export interface BackgroundOptions {
  /** `mean`: subtract the whole-line mean trace; `movingMean`: the mean of the traces within `windowM`. @default 'mean' */
  method?: 'mean' | 'movingMean';
  /** Moving window length along the track, metres (traces within +-windowM/2). @default 10 */
  windowM?: number;
  /** Metres per CRS unit of `line.x/y`. @default 1 */
  metresPerUnit?: number;
}

/**
 * Background removal: subtracts the average trace, which removes events flat along the line (antenna
 * ringing, the direct wave, and also a flat reflection from anything parallel to the line, e.g. a wall).
 * Keeps dipping and curved events such as diffraction hyperbolas. `out` may be `line.data`.
 */
export function backgroundRemoval(line: RadarLine, options: BackgroundOptions = {}, out?: Float32Array): RadarLine {
  const method = options.method ?? 'mean';
  const { nSamples: ns, nTraces: nt } = line;
  const { src, dst } = outputFor(line, out);
  const sum = new Float64Array(ns);
  if (method === 'mean') {
    for (let t = 0; t < nt; t++) for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) + (src[t * ns + i] as number);
    for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) / Math.max(1, nt);
    for (let t = 0; t < nt; t++) for (let i = 0; i < ns; i++) dst[t * ns + i] = (src[t * ns + i] as number) - (sum[i] as number);
    return withData(line, dst);
  }
  const windowM = options.windowM ?? 10;
  if (!(windowM > 0)) throw new Error(`backgroundRemoval: windowM must be > 0, found ${windowM}`);
  const s = alongTrackM(line, options.metresPerUnit ?? 1);
  const half = windowM / 2;
  // Two pointers over the along-track distance keep a running sum of the traces inside the window.
  let lo = 0;
  let hi = 0;
  for (let t = 0; t < nt; t++) {
    const st = s[t] as number;
    while (hi < nt && (s[hi] as number) <= st + half) {
      for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) + (src[hi * ns + i] as number);
      hi++;
    }
    while ((s[lo] as number) < st - half) {
      for (let i = 0; i < ns; i++) sum[i] = (sum[i] as number) - (src[lo * ns + i] as number);
      lo++;
    }
    const inv = 1 / (hi - lo);
    for (let i = 0; i < ns; i++) dst[t * ns + i] = (src[t * ns + i] as number) - (sum[i] as number) * inv;
  }
  return withData(line, dst);
}
