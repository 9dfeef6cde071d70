import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtemp, readFile, readdir, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openSegy, readSegyLine } from '@lamina/radar-data';
import { loadSite, readLine } from '@lamina/site';
import { parseScenario, scenarioCrs, scenarioModel, simulateLine, simulateScenarioFile, simulateSite, type Truth } from '../src';
import { C_M_PER_NS } from '@lamina/constants';

const ROOT = resolve(__dirname, '../../..');
const dirs: string[] = [];
async function tmp(): Promise<string> {
  const d = await mkdtemp(join(tmpdir(), 'lamina-sim-'));
  dirs.push(d);
  return d;
}
afterAll(async () => {
  for (const d of dirs) await rm(d, { recursive: true, force: true });
});

function small(over: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    name: 'small',
    seed: 42,
    crs: 'EPSG:32617',
    antenna: { frequencyMHz: 400, separationM: 0.16 },
    recording: { sampleIntervalNs: 0.1, samples: 256, timeZeroNs: 4, timeZeroJitterNs: 0.1 },
    soil: { permittivity: 8, attenuationDbPerM: 3 },
    noise: { rms: 0.003, clutterPerM2: 1 },
    survey: { origin: [431000, 4430000], azimuthDeg: 90, lengthM: 2, widthM: 1, lineSpacingM: 0.5, traceSpacingM: 0.1 },
    plan: [
      { id: 'shed', kind: 'building', footprint: [[430995, 4430001], [430998, 4430001], [430998, 4429996], [430995, 4429996]] },
      { id: 'fence', kind: 'fence', postSpacingM: 2, path: [[431004, 4430002], [431004, 4429995]] },
      { id: 'lamp', kind: 'post', at: [431001, 4430003] },
      { id: 'elm', kind: 'tree', at: [431003, 4430003] },
      { id: 'pillar', kind: 'column', at: [430999, 4430003] },
      { id: 'garden-wall', kind: 'wall', path: [[430996, 4429994], [431004, 4429994]] },
    ],
    buried: [
      { id: 'pipe', kind: 'pipe', utility: 'water', material: 'metal', radiusM: 0.05, from: [431001, 4430001, 0.8], to: [431001, 4429998, 0.8] },
      { id: 'void', kind: 'compact', shape: 'box', material: 'air', sizeM: [0.4, 0.4, 0.3], center: [431000.5, 4429999.5, 0.6], repeat: { count: 2, spacingM: 1, azimuthDeg: 90 } },
    ],
    ...over,
  };
}

async function files(dir: string): Promise<Map<string, Buffer>> {
  const out = new Map<string, Buffer>();
  const walk = async (d: string, rel: string): Promise<void> => {
    for (const e of await readdir(d, { withFileTypes: true })) {
      if (e.isDirectory()) await walk(join(d, e.name), `${rel}${e.name}/`);
      else out.set(`${rel}${e.name}`, await readFile(join(d, e.name)));
    }
  };
  await walk(dir, '');
  return out;
}

describe('simulated site folder', () => {
  it('is accepted by loadSite; every line reads back with the simulated samples and positions', async () => {
    const out = join(await tmp(), 'site');
    const s = parseScenario(small());
    const res = await simulateSite(s, out);
    expect(res.lines).toBe(3);
    const site = await loadSite(out);
    expect(site.crs.code).toBe('EPSG:32617');
    expect(site.lines.map((l) => l.position.kind)).toEqual(['headers', 'startEnd', 'csv']);
    expect(site.plan.map((p) => p.kind).sort()).toEqual(['building', 'column', 'fence', 'post', 'tree', 'wall']);
    const fence = site.plan.find((p) => p.id === 'fence')!;
    expect(fence.postSpacingM).toBe(2);
    // Plan round trip WGS84 -> site CRS within 1 mm.
    const shed = site.plan.find((p) => p.id === 'shed')!;
    expect(shed.geometry.type).toBe('Polygon');
    const ring = (shed.geometry as { coordinates: [number, number][][] }).coordinates[0]!;
    for (const [x, y] of ring) {
      expect(Math.min(Math.abs(x - 430995), Math.abs(x - 430998))).toBeLessThan(1e-3);
      expect(Math.min(Math.abs(y - 4430001), Math.abs(y - 4429996))).toBeLessThan(1e-3);
    }

    const truth = JSON.parse(await readFile(join(out, 'truth.json'), 'utf8')) as Truth;
    const m = scenarioModel(s, scenarioCrs(s));
    for (let i = 0; i < site.lines.length; i++) {
      const src = site.lines[i]!;
      const line = await readLine(site, src);
      const t = truth.lines[i]!;
      expect(line.nTraces).toBe(t.nTraces);
      expect(line.dtNs).toBeCloseTo(0.1, 12);
      // Header coordinates are stored to the centimetre under scalar -100 (northings need 10 digits).
      expect(Math.abs(line.x[0]! - t.start[0])).toBeLessThan(0.006);
      expect(Math.abs(line.y[0]! - t.start[1])).toBeLessThan(0.006);
      expect(Math.abs(line.x[line.nTraces - 1]! - t.end[0])).toBeLessThan(0.006);
      expect(Math.abs(line.y[line.nTraces - 1]! - t.end[1])).toBeLessThan(0.006);
      const sim = simulateLine(m, m.lines[i]!);
      expect(Buffer.from(line.data.buffer, line.data.byteOffset, line.data.byteLength).equals(Buffer.from(sim.data.buffer))).toBe(true);
    }
    // The streaming reader sees rev 2, IEEE float, the extended interval, and integer-scaled int16 on request.
    const reader = await openSegy(join(out, 'lines/l01.sgy'));
    try {
      expect(reader.revision.major).toBe(2);
      expect(reader.format).toBe(5);
      expect(reader.dtNs).toBeCloseTo(0.1, 12);
      expect(reader.nSamples).toBe(256);
      const chunk = await reader.readChunk(0, 2);
      expect(chunk.data.length).toBe(512);
    } finally {
      await reader.close();
    }
    // Lines zigzag: the second runs back.
    expect(truth.lines[1]!.start[0]).toBeGreaterThan(truth.lines[1]!.end[0]);
  });

  it('writes SEG-Y rev 2 that segyio (Debian python3-segyio) reads with the same samples; extended interval per the rev 2.0 byte table', async () => {
    const out = join(await tmp(), 'site');
    await simulateSite(parseScenario(small()), out);
    const file = join(out, 'lines/l01.sgy');
    const ours = (await readSegyLine(file)).line;
    const py = [
      'import segyio, struct, json, sys, numpy as np',
      'f = sys.argv[1]',
      's = segyio.open(f, ignore_geometry=True)',
      'd = segyio.tools.collect(s.trace[:]).astype(np.float32)',
      'b = open(f, "rb").read(3600)',
      // SEG-Y rev 2.0 binary header: bytes 3225-3226 format code, 3273-3280 extended sample interval (IEEE double, us), 3501 major revision.
      'print(json.dumps({"n": s.tracecount, "ns": len(s.samples), "fmt": int(s.format), "sum": float(np.abs(d).astype(np.float64).sum()), "first": d[3, :40].tolist(),',
      '  "dtExt": struct.unpack(">d", b[3272:3280])[0], "major": b[3500], "sx": s.header[0][segyio.TraceField.SourceX], "scalar": s.header[0][segyio.TraceField.SourceGroupScalar]}))',
    ].join('\n');
    const r = JSON.parse(execFileSync('/usr/bin/python3', ['-c', py, file], { encoding: 'utf8' })) as { n: number; ns: number; fmt: number; sum: number; first: number[]; dtExt: number; major: number; sx: number; scalar: number };
    expect(r.n).toBe(ours.nTraces);
    expect(r.ns).toBe(256);
    expect(r.fmt).toBe(5);
    expect(r.major).toBe(2);
    expect(r.dtExt).toBeCloseTo(1e-4, 15); // 0.1 ns in microseconds
    let sum = 0;
    for (const v of ours.data) sum += Math.abs(v);
    expect(r.sum).toBeCloseTo(sum, 3);
    for (let i = 0; i < 40; i++) expect(r.first[i]).toBe(ours.data[3 * 256 + i]);
    expect(r.sx * (r.scalar < 0 ? -1 / r.scalar : r.scalar)).toBeCloseTo(431000, 2);
  });

  it('is deterministic: the same seed gives identical bytes, another seed other noise', async () => {
    const a = join(await tmp(), 'a');
    const b = join(await tmp(), 'b');
    const c = join(await tmp(), 'c');
    await simulateSite(parseScenario(small()), a);
    await simulateSite(parseScenario(small()), b);
    await simulateSite(parseScenario(small({ seed: 43 })), c);
    const fa = await files(a);
    const fb = await files(b);
    const fc = await files(c);
    expect([...fa.keys()].sort()).toEqual([...fb.keys()].sort());
    for (const [k, v] of fa) expect(v.equals(fb.get(k)!), k).toBe(true);
    expect(fa.get('lines/l01.sgy')!.equals(fc.get('lines/l01.sgy')!)).toBe(false);
    expect(fa.get('site.json')!.equals(fc.get('site.json')!)).toBe(true);
  });

  it('noiseSeed changes the receiver noise alone: a repeat survey of the same site', async () => {
    const line = (over: Record<string, unknown>) => {
      const sc = parseScenario(small(over));
      const m = scenarioModel(sc, scenarioCrs(sc));
      return simulateLine(m, m.lines[0]!).data;
    };
    const a = line({ noiseSeed: 1 }), a2 = line({ noiseSeed: 1 }), b = line({ noiseSeed: 2 });
    // no noise at all: the same traces, jitter and wow (the line's own stream no longer serves the noise)
    const clean = line({ noiseSeed: 1, noise: { rms: 0, clutterPerM2: 1 } });
    expect(Buffer.from(a.buffer).equals(Buffer.from(a2.buffer))).toBe(true);
    let na = 0, nb = 0, ab = 0;
    for (let i = 0; i < a.length; i++) {
      const u = a[i]! - clean[i]!, v = b[i]! - clean[i]!;
      na += u * u;
      nb += v * v;
      ab += u * v;
    }
    const ra = Math.sqrt(na / a.length), rb = Math.sqrt(nb / a.length);
    // what differs from the noiseless run is noise of one level in both, and the two draws are independent
    expect(ra).toBeGreaterThan(0);
    expect(Math.abs(ra / rb - 1)).toBeLessThan(0.1);
    expect(Math.abs(ab / Math.sqrt(na * nb))).toBeLessThan(0.05);
    // the truth is the same site
    const ta = join(await tmp(), 'a'), tb = join(await tmp(), 'b');
    await simulateSite(parseScenario(small({ noiseSeed: 1 })), ta);
    await simulateSite(parseScenario(small({ noiseSeed: 2 })), tb);
    const fa = await files(ta), fb = await files(tb);
    expect(fa.get('truth.json')!.equals(fb.get('truth.json')!)).toBe(true);
    expect(fa.get('lines/l01.sgy')!.equals(fb.get('lines/l01.sgy')!)).toBe(false);
  });

  it('truth.json lists every target and reflector; air-wave apparent depths follow r / sqrt(K)', async () => {
    const out = join(await tmp(), 'site');
    const res = await simulateSite(parseScenario(small()), out);
    const t = res.truth;
    expect(t.soil.permittivity).toBe(8);
    expect(t.soil.velocityMPerNs).toBeCloseTo(C_M_PER_NS / Math.sqrt(8), 6);
    expect(t.buried.map((b) => b.id)).toEqual(['pipe', 'void-1', 'void-2']);
    expect(t.buried[1]!.group).toBe('void');
    expect(t.buried[2]!.center![0]).toBeCloseTo(431001.5, 9);
    const kinds = new Set(t.aboveGround.map((a) => a.kind));
    for (const k of ['building-edge', 'fence', 'post', 'tree', 'column', 'wall']) expect(kinds.has(k as never)).toBe(true);
    // Fence of 7 m with posts every 2 m: at 0, 2, 4, 6 m and the end.
    expect(t.aboveGround.filter((a) => a.planFeatureId === 'fence' && a.kind === 'post').length).toBe(5);
    for (const a of t.aboveGround) {
      expect(a.planFeatureId).toBeTruthy();
      if (a.airWave.distanceMinM === null) continue;
      expect(a.airWave.apparentDepthMinM!).toBeCloseTo(a.airWave.distanceMinM / Math.sqrt(8), 4);
      expect(a.airWave.apparentDepthMaxM!).toBeCloseTo(a.airWave.distanceMaxM! / Math.sqrt(8), 4);
    }
    expect(t.aboveGround.find((a) => a.id === 'lamp')!.airWave.traces).toBeGreaterThan(0);
  });

  it('works in US survey feet: plan and positions in feet, lengths in metres; int16 little-endian samples', async () => {
    const out = join(await tmp(), 'site');
    const ft = 1200 / 3937;
    const s = parseScenario(
      small({
        crs: 'EPSG:2264',
        recording: { sampleIntervalNs: 0.2, samples: 200, timeZeroNs: 6, format: 'int16', byteOrder: 'little' },
        survey: { origin: [2100000, 740000], azimuthDeg: 0, lengthM: 3, widthM: 1, lineSpacingM: 0.5, traceSpacingM: 0.1 },
        plan: [{ id: 'wall', kind: 'wall', path: [[2099990, 740000], [2099990, 740020]] }],
        buried: [{ id: 'pipe', kind: 'pipe', material: 'metal', radiusM: 0.05, from: [2099995, 740005, 0.8], to: [2100010, 740005, 0.8] }],
      }),
    );
    const res = await simulateSite(s, out);
    expect(res.truth.metresPerUnit).toBeCloseTo(ft, 15);
    const l = res.truth.lines[0]!;
    expect(l.end[1] - l.start[1]).toBeCloseTo(3 / ft, 4);
    // The wall is 10 ft west of the first line: the nearest air path is 2 * 10 ft in metres.
    const wall = res.truth.aboveGround[0]!;
    expect(wall.airWave.distanceMinM!).toBeCloseTo(Math.hypot(10 * ft, 0.08), 3);
    const site = await loadSite(out);
    expect(site.crs.units).toBe('us-ft');
    const line = await readLine(site, site.lines[0]!);
    const sim = simulateLine(scenarioModel(s, scenarioCrs(s)), scenarioModel(s, scenarioCrs(s)).lines[0]!);
    for (let i = 0; i < line.data.length; i++) expect(line.data[i]).toBe(Math.max(-32767, Math.min(32767, Math.round(sim.data[i]! * 8000))) + 0); // + 0: int16 has no -0
    const r = await openSegy(site.lines[0]!.file);
    expect(r.littleEndian).toBe(true);
    expect(r.format).toBe(3);
    await r.close();
  });
});

describe('scenario errors', () => {
  it('name the JSON path and write nothing', async () => {
    const dir = await tmp();
    const bad = small();
    (bad.buried as Record<string, unknown>[])[0]!.radiusM = -1;
    expect(() => parseScenario(bad, 'x.json')).toThrow(/x\.json: buried\[0\]\.radiusM: expected a number > 0, found -1/);
    const dup = small();
    (dup.plan as Record<string, unknown>[])[1]!.id = 'shed';
    expect(() => parseScenario(dup, 'x.json')).toThrow(/plan\[1\]\.id: expected unique ids/);
    const unknown = parseScenario(small({ crs: 'EPSG:99999' }));
    await expect(simulateSite(unknown, join(dir, 'out'))).rejects.toThrow(/crs: unknown CRS EPSG:99999/);
    await expect(stat(join(dir, 'out'))).rejects.toThrow();
    expect((await readdir(dir)).length).toBe(0);
  });

  it('lamina simulate: exit 2 and one line naming file and field; exit 0 and a site on good input', async () => {
    const dir = await tmp();
    const bad = small();
    (bad.survey as Record<string, unknown>).traceSpacingM = 'x';
    await writeFile(join(dir, 'bad.json'), JSON.stringify(bad));
    const tsx = join(ROOT, 'node_modules/.bin/tsx');
    const r = spawnSync(tsx, [join(ROOT, 'apps/cli/src/main.ts'), 'simulate', join(dir, 'bad.json'), '--out', join(dir, 'out')], { encoding: 'utf8', cwd: ROOT });
    expect(r.status).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/bad\.json: survey\.traceSpacingM: /);
    await writeFile(join(dir, 'good.json'), JSON.stringify(small()));
    const ok = spawnSync(tsx, [join(ROOT, 'apps/cli/src/main.ts'), 'simulate', join(dir, 'good.json')], { encoding: 'utf8', cwd: ROOT });
    expect(ok.status, ok.stderr).toBe(0);
    expect((await stat(join(dir, 'site', 'site.json'))).isFile()).toBe(true);
    await expect(stat(join(dir, 'out'))).rejects.toThrow();
  });

  it('simulateScenarioFile reports JSON syntax errors with the file', async () => {
    const dir = await tmp();
    await writeFile(join(dir, 's.json'), '{ "name": ');
    await expect(simulateScenarioFile(join(dir, 's.json'))).rejects.toThrow(/s\.json: expected JSON/);
  });
});

describe('scenario limits', () => {
  it('refuse surveys that would not fit and line ids that do not exist', () => {
    const huge = small({ survey: { origin: [431000, 4430000], azimuthDeg: 90, lengthM: 1e5, widthM: 1, lineSpacingM: 0.5, traceSpacingM: 0.01 } });
    expect(() => parseScenario(huge, 's.json')).toThrow(/s\.json: survey\.traceSpacingM: expected 2 to 1000000 traces per line/);
    const ghost = small({ survey: { origin: [431000, 4430000], azimuthDeg: 90, lengthM: 2, widthM: 1, lineSpacingM: 0.5, traceSpacingM: 0.1, csvLines: ['l09'] } });
    expect(() => parseScenario(ghost, 's.json')).toThrow(/survey\.csvLines\[0\]: expected a line id of this survey \(l01 \.\.\. l03\), found "l09"/);
  });
});
