import { writeFileSync } from 'node:fs';

/**
 * A minimal SEG-Y rev 2.0 writer for this package's fixtures (big-endian, IEEE float samples, format 5),
 * following the SEG-Y rev 2.0 byte table: binary header 3217-3218 sample interval (us), 3221-3222 samples
 * per trace, 3225-3226 format code, 3273-3280 extended sample interval (IEEE double, us), 3297-3300
 * byte-order constant, 3501/3502 revision, 3503-3504 fixed-length flag; trace header 1-4 / 5-8 sequence
 * numbers, 71-72 coordinate scalar, 73-80 source X/Y, 89-90 coordinate units, 115-116 samples,
 * 117-118 interval, 181-188 CDP X/Y. Kept
 * independent of @lamina/radar-data so its reader is checked against a second writer.
 */
export interface TinySegy {
  nSamples: number;
  dtNs: number;
  sourceX: ArrayLike<number>;
  sourceY: ArrayLike<number>;
  cdpX?: ArrayLike<number>;
  cdpY?: ArrayLike<number>;
  /** Coordinate scalar (bytes 71-72): negative divides. @default -100 */
  scalar?: number;
  /** @default 1 (length) */
  coordUnits?: number;
  /** Sample value of trace t, sample s. @default a small deterministic ramp */
  sample?: (t: number, s: number) => number;
  /** Write the extended sample interval (rev 2). @default true */
  extendedInterval?: boolean;
}

export function tinySegy(s: TinySegy): Buffer {
  const n = s.sourceX.length;
  const ns = s.nSamples;
  const buf = Buffer.alloc(3600 + n * (240 + 4 * ns));
  buf.write('C 1 lamina site package test fixture'.padEnd(3200, ' '), 0, 'ascii');
  const dtUs = s.dtNs / 1000;
  buf.writeInt16BE(Math.min(32767, Math.round(dtUs)), 3216);
  buf.writeInt16BE(ns, 3220);
  buf.writeInt16BE(5, 3224);
  buf.writeInt16BE(1, 3254);
  if (s.extendedInterval ?? true) buf.writeDoubleBE(dtUs, 3272);
  buf.writeUInt32BE(0x01020304, 3296);
  buf.writeUInt8(2, 3500);
  buf.writeUInt8(0, 3501);
  buf.writeInt16BE(1, 3502);
  const scalar = s.scalar ?? -100;
  const enc = (v: number): number => Math.round(scalar < 0 ? v * -scalar : scalar > 0 ? v / scalar : v);
  const sample = s.sample ?? ((t: number, k: number) => Math.sin(0.3 * k + 0.01 * t));
  for (let t = 0; t < n; t++) {
    const o = 3600 + t * (240 + 4 * ns);
    buf.writeInt32BE(t + 1, o);
    buf.writeInt32BE(t + 1, o + 4);
    buf.writeInt16BE(scalar, o + 70);
    buf.writeInt32BE(enc(s.sourceX[t] as number), o + 72);
    buf.writeInt32BE(enc(s.sourceY[t] as number), o + 76);
    buf.writeInt16BE(s.coordUnits ?? 1, o + 88);
    buf.writeInt16BE(ns, o + 114);
    buf.writeInt16BE(Math.min(32767, Math.round(dtUs)), o + 116);
    if (s.cdpX && s.cdpY) {
      buf.writeInt32BE(enc(s.cdpX[t] as number), o + 180);
      buf.writeInt32BE(enc(s.cdpY[t] as number), o + 184);
    }
    for (let k = 0; k < ns; k++) buf.writeFloatBE(sample(t, k), o + 240 + 4 * k);
  }
  return buf;
}

export function writeTinySegy(path: string, s: TinySegy): void {
  writeFileSync(path, tinySegy(s));
}

