"""Write SEG-Y fixtures with segyio (Debian python3-segyio) and a JSON manifest of what segyio reads back.

Usage: /usr/bin/python3 make_segyio_fixtures.py OUTDIR   (prints the manifest path)
Seeded: the same files every run. Variants per format (1, 2, 3, 5, 8) and byte order (big, little):
  "plain"  as segyio writes it (revision 0, no byte-order constant, EBCDIC text, interval 0 us; the
           reader needs the sampleIntervalNs override); format 5 also gets one extended text header.
  "rev2"   the same file patched with struct after segyio closed it, per SEG-Y_r2.0 (SEG Technical
           Standards Committee, 2017) Table 2: revision bytes 3501/3502 = 2/0, byte-order constant
           0x01020304 at 3297-3300 written in the file's order, extended sample interval (IEEE double,
           microseconds) at 3273-3280, and an ASCII textual header.
"""
import json
import os
import struct
import sys

import numpy as np
import segyio

# NS a multiple of 4: segyio 1.8.3 writes the last trace short when its sample bytes are not (seen here).
NT, NS = 7, 52
TF = segyio.TraceField
BF = segyio.BinField


def samples(fmt, rng):
    if fmt in (1, 5):
        a = (rng.standard_normal((NT, NS)) * 1000).astype(np.float32)
        a[0, :4] = [0.0, 100.0, -118.625, 1e-6]
        return a
    lim = {2: 2**31 - 1, 3: 32767, 8: 127}[fmt]
    a = rng.integers(-lim - 1, lim + 1, size=(NT, NS), dtype=np.int64)
    a[0, :3] = [-lim - 1, lim, 0]
    return a.astype({2: np.int32, 3: np.int16, 8: np.int8}[fmt])


def write(path, fmt, endian, ext, rng):
    spec = segyio.spec()
    spec.format = fmt
    spec.samples = list(range(NS))
    spec.tracecount = NT
    spec.endian = endian
    if ext:
        spec.ext_headers = 1
    data = samples(fmt, rng)
    scalars = [-100, -1000, 10, 0, 1, -10, -100]
    with segyio.create(path, spec) as f:
        f.text[0] = b'C01 LAMINA TEST FIXTURE WRITTEN BY SEGYIO  format %d %s-endian' % (fmt, endian.encode())
        if ext:
            f.text[1] = b'C01 EXTENDED TEXTUAL HEADER ONE'
        f.bin.update({BF.Interval: 0, BF.Samples: NS, BF.Format: fmt, BF.MeasurementSystem: 1})
        for i in range(NT):
            f.header[i] = {
                TF.TRACE_SEQUENCE_LINE: i + 1,
                TF.TRACE_SEQUENCE_FILE: 101 + i,
                TF.SourceGroupScalar: scalars[i],
                TF.SourceX: 50000012 + 7 * i,
                TF.SourceY: -440000045 - 3 * i,
                TF.GroupX: 50000112 + 7 * i,
                TF.GroupY: 440000145 + 3 * i,
                TF.CDP_X: 50000062 + 7 * i,
                TF.CDP_Y: 440000095 + 3 * i,
                TF.CoordinateUnits: 1 + (i % 3),
                TF.ElevationScalar: -100,
                TF.SourceSurfaceElevation: 12345 + i,
                TF.TRACE_SAMPLE_COUNT: NS,
            }
            f.trace[i] = data[i]
    return data


ASCII_TEXT = b'C01 ASCII TEXTUAL HEADER (REV 2 PATCH)'.ljust(3200, b' ')


def patch_rev2(path, endian, dt_us):
    e = '>' if endian == 'big' else '<'
    with open(path, 'r+b') as f:
        f.seek(0)
        f.write(ASCII_TEXT)
        f.seek(3272)
        f.write(struct.pack(e + 'd', dt_us))
        f.seek(3296)
        f.write(struct.pack(e + 'I', 0x01020304))
        f.seek(3500)
        f.write(bytes([2, 0]))


def scaled(v, s):
    return v * s if s > 0 else v / -s if s < 0 else float(v)


def manifest_entry(path, fmt, endian, variant):
    with segyio.open(path, ignore_geometry=True, endian=endian) as f:
        hs = [f.header[i] for i in range(f.tracecount)]
        sc = [h[TF.SourceGroupScalar] for h in hs]
        es = [h[TF.ElevationScalar] for h in hs]
        return {
            'file': os.path.basename(path),
            'format': fmt,
            'endian': endian,
            'variant': variant,
            'nTraces': f.tracecount,
            'nSamples': len(f.samples),
            'samples': [float(v) for i in range(f.tracecount) for v in f.trace[i]],
            # segyio decodes every textual header as EBCDIC: the ASCII one is compared with what was written.
            'text0': ASCII_TEXT.decode('ascii') if variant == 'rev2' else f.text[0].decode('latin-1'),
            'dtUs': 0.00025 if variant == 'rev2' else None,
            'ext': [f.text[i].decode('latin-1') for i in range(1, f.ext_headers + 1)],
            'headers': {
                'sequence': [h[TF.TRACE_SEQUENCE_LINE] for h in hs],
                'sequenceInFile': [h[TF.TRACE_SEQUENCE_FILE] for h in hs],
                'coordScalar': sc,
                'coordUnits': [h[TF.CoordinateUnits] for h in hs],
                'nSamples': [h[TF.TRACE_SAMPLE_COUNT] for h in hs],
                'sourceX': [scaled(h[TF.SourceX], s) for h, s in zip(hs, sc)],
                'sourceY': [scaled(h[TF.SourceY], s) for h, s in zip(hs, sc)],
                'groupX': [scaled(h[TF.GroupX], s) for h, s in zip(hs, sc)],
                'groupY': [scaled(h[TF.GroupY], s) for h, s in zip(hs, sc)],
                'cdpX': [scaled(h[TF.CDP_X], s) for h, s in zip(hs, sc)],
                'cdpY': [scaled(h[TF.CDP_Y], s) for h, s in zip(hs, sc)],
                'elevation': [scaled(h[TF.SourceSurfaceElevation], s) for h, s in zip(hs, es)],
            },
        }


def main(out):
    os.makedirs(out, exist_ok=True)
    rng = np.random.default_rng(20261201)
    entries = []
    for fmt in (1, 2, 3, 5, 8):
        for endian in ('big', 'little'):
            for variant in ('plain', 'rev2'):
                path = os.path.join(out, 'segyio_f%d_%s_%s.sgy' % (fmt, endian, variant))
                write(path, fmt, endian, variant == 'plain' and fmt == 5, rng)
                if variant == 'rev2':
                    patch_rev2(path, endian, 0.00025)
                entries.append(manifest_entry(path, fmt, endian, variant))
    manifest = os.path.join(out, 'manifest.json')
    with open(manifest, 'w') as f:
        json.dump({'segyio': segyio.__version__, 'numpy': np.__version__, 'files': entries}, f)
    print(manifest)


if __name__ == '__main__':
    main(sys.argv[1])
