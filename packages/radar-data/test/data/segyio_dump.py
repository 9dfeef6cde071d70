"""Print what segyio (Debian python3-segyio) and raw struct reads find in a SEG-Y file, as JSON.

Usage: /usr/bin/python3 segyio_dump.py FILE big|little [FILE big|little ...]   (prints a JSON list)
segyio gives the rev 1 view (samples, trace and binary header fields, textual headers). It knows no
rev 2 fields, so those are read with struct at the byte positions of SEG-Y_r2.0 (SEG Technical
Standards Committee, 2017), Table 2 (binary file header):
  3269-3272 extended samples per trace (int32)    3273-3280 extended sample interval (IEEE double, us)
  3297-3300 byte-order constant 0x01020304         3501 / 3502 major / minor revision (one byte each)
  3503-3504 fixed length trace flag                3505-3506 extended textual header count
  3513-3520 number of traces (uint64)              3521-3528 byte offset of the first trace (uint64)
"""
import json
import struct
import sys

import segyio

def dump(path, endian):
    e = '>' if endian == 'big' else '<'
    TF = segyio.TraceField
    BF = segyio.BinField
    with open(path, 'rb') as f:
        raw = f.read(3600)
    with segyio.open(path, ignore_geometry=True, endian=endian) as f:
        hs = [f.header[i] for i in range(f.tracecount)]
        out = {
            'format': f.bin[BF.Format],
            'tracecount': f.tracecount,
            'nSamples': len(f.samples),
            'bin': {'Interval': f.bin[BF.Interval], 'Samples': f.bin[BF.Samples], 'MeasurementSystem': f.bin[BF.MeasurementSystem],
                    'ExtendedHeaders': f.bin[BF.ExtendedHeaders], 'JobID': f.bin[BF.JobID], 'LineNumber': f.bin[BF.LineNumber]},
            'samples': [float(v) for i in range(f.tracecount) for v in f.trace[i]],
            'text': [f.text[i].decode('latin-1') for i in range(0, f.ext_headers + 1)],
            'headers': {k: [h[getattr(TF, k)] for h in hs] for k in (
                'TRACE_SEQUENCE_LINE', 'TRACE_SEQUENCE_FILE', 'SourceGroupScalar', 'SourceX', 'SourceY', 'GroupX', 'GroupY',
                'CDP_X', 'CDP_Y', 'CoordinateUnits', 'TRACE_SAMPLE_COUNT', 'TRACE_SAMPLE_INTERVAL', 'ElevationScalar',
                'SourceSurfaceElevation', 'ReceiverGroupElevation')},
        }
    out['raw'] = {
        'extSamples': struct.unpack(e + 'i', raw[3268:3272])[0],
        'extIntervalUs': struct.unpack(e + 'd', raw[3272:3280])[0],
        'byteOrderConstantBE': struct.unpack('>I', raw[3296:3300])[0],
        'revisionMajor': raw[3500],
        'revisionMinor': raw[3501],
        'fixedLength': struct.unpack(e + 'h', raw[3502:3504])[0],
        'extTextCount': struct.unpack(e + 'h', raw[3504:3506])[0],
        'traceCount': struct.unpack(e + 'Q', raw[3512:3520])[0],
        'firstTraceOffset': struct.unpack(e + 'Q', raw[3520:3528])[0],
        'textFirstByte': raw[0],
    }
    return out


args = sys.argv[1:]
print(json.dumps([dump(args[i], args[i + 1]) for i in range(0, len(args), 2)]))
