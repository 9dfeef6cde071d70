import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { C_M_PER_NS } from '@lamina/constants';
import type { RadarLine } from '@lamina/radar-data';
import {
  airEventKernel,
  chooseMigration,
  envelope,
  kirchhoffMigrate,
  phaseShiftKernel,
  phaseShiftMigrate,
  phaseShiftModel,
  runRecipe,
  stoltKernel,
  stoltMigrate,
  stoltModel,
} from '../src';
import { addDiffraction, addNoise, addRicker, makeLine, rng } from './synth';

const F = 400;
const V = 0.1;
const S = 0.16;
const DT = 0.1;
const TZ = 5;

function peak2d(line: RadarLine): { trace: number; sample: number; value: number } {
  const env = envelope(line);
  let best = { trace: 0, sample: 0, value: -1 };
  for (let t = 0; t < line.nTraces; t++) {
    for (let i = 0; i < line.nSamples; i++) {
      const e = env.data[t * line.nSamples + i] as number;
      if (e > best.value) best = { trace: t, sample: i, value: e };
    }
  }
  return best;
}

/** Share of the envelope energy of the whole section within +-r traces and +-q samples of (t0, i0). */
function concentration(line: RadarLine, t0: number, i0: number, r: number, q: number): number {
  const env = envelope(line);
  let near = 0;
  let all = 0;
  for (let t = 0; t < line.nTraces; t++) {
    for (let i = 0; i < line.nSamples; i++) {
      const e = (env.data[t * line.nSamples + i] as number) ** 2;
      all += e;
      if (Math.abs(t - t0) <= r && Math.abs(i - i0) <= q) near += e;
    }
  }
  return near / all;
}

function relRms(a: ArrayLike<number>, b: ArrayLike<number>, from = 0): number {
  let d = 0;
  let n = 0;
  for (let i = from; i < a.length; i++) {
    d += ((a[i] as number) - (b[i] as number)) ** 2;
    n += (b[i] as number) ** 2;
  }
  return Math.sqrt(d / n);
}

describe('three migrations on one bistatic point diffractor', () => {
  // Apex two-way time from the bistatic geometry: t0 = 2 sqrt(z^2 + (s/2)^2) / v (straight rays).
  const z = 1.0;
  const line = makeLine(201, 320, DT, 0.02, TZ);
  addDiffraction(line, 2.0, z, V, S, F);
  const apex = (TZ + (2 * Math.hypot(z, S / 2)) / V) / DT;
  const layers = [{ topM: 0, velocityMPerNs: V }];
  const run = (halfDerivative: boolean) => ({
    kirchhoff: peak2d(kirchhoffMigrate(line, { velocityMPerNs: V, separationM: S, halfDerivative })),
    stolt: peak2d(stoltMigrate(line, { velocityMPerNs: V, separationM: S, halfDerivative })),
    phaseShift: peak2d(phaseShiftMigrate(line, { layers, separationM: S, halfDerivative })),
  });
  // halfDerivative false (the default): ray-made diffractions focus zero-phase; true: the plain wave-equation
  // result. The f-k methods follow the same switch (half-integral with the migration when false).
  const runs = [run(false), run(true)];
  const st = stoltMigrate(line, { velocityMPerNs: V, separationM: S, halfDerivative: true });
  const ps = phaseShiftMigrate(line, { layers, separationM: S, halfDerivative: true });

  it('focus at the apex within one trace and one sample, each method', () => {
    for (const peaks of runs) {
      for (const p of Object.values(peaks)) {
        expect(Math.abs(p.trace - 100)).toBeLessThanOrEqual(1);
        expect(Math.abs(p.sample - apex)).toBeLessThanOrEqual(1);
      }
    }
  });

  it('peak envelope amplitudes agree within 10 % (Stolt vs phase-shift within 1 %), both conventions', () => {
    // Envelope peaks (phase aside). Measured here: Stolt / Kirchhoff about 1.01 with the half-derivative,
    // 1.014 without; phase-shift / Stolt about 1.001.
    for (const peaks of runs) {
      expect(peaks.stolt.value / peaks.kirchhoff.value).toBeGreaterThan(0.9);
      expect(peaks.stolt.value / peaks.kirchhoff.value).toBeLessThan(1.1);
      expect(peaks.phaseShift.value / peaks.stolt.value).toBeGreaterThan(0.99);
      expect(peaks.phaseShift.value / peaks.stolt.value).toBeLessThan(1.01);
    }
  });

  it('Stolt and one-layer phase-shift give the same section (relative RMS < 1 %)', () => {
    // Same continuous operator; they differ by Stolt's frequency interpolation and phase-shift's band limit.
    expect(relRms(ps.data, st.data)).toBeLessThan(0.01);
  });
});

describe('focusing depends on the velocity: soil against air (issue #18)', () => {
  const focus = (v: number, vMig: number) => {
    const line = makeLine(241, 400, DT, 0.02, TZ);
    addDiffraction(line, 2.4, 1.2, v, 0, F);
    const m = stoltMigrate(line, { velocityMPerNs: vMig, maxAngleDeg: 80 });
    const p = peak2d(m);
    // energy within +-3 traces and +-1 period (1000 / F ns) of the focus
    const q = Math.round(1000 / F / DT);
    return { p, c: concentration(m, p.trace, p.sample, 3, q) };
  };

  it('a soil hyperbola focuses at the soil velocity and not at c', () => {
    const atSoil = focus(V, V);
    const atAir = focus(V, C_M_PER_NS);
    expect(atSoil.c).toBeGreaterThan(0.5);
    expect(atSoil.c).toBeGreaterThan(5 * atAir.c);
    expect(Math.abs(atSoil.p.trace - 120)).toBeLessThanOrEqual(1);
  });

  it('an air hyperbola (travel at c) focuses at c and not at the soil velocity', () => {
    const atAir = focus(C_M_PER_NS, C_M_PER_NS);
    const atSoil = focus(C_M_PER_NS, V);
    expect(atAir.c).toBeGreaterThan(0.5);
    expect(atAir.c).toBeGreaterThan(5 * atSoil.c);
    expect(Math.abs(atAir.p.trace - 120)).toBeLessThanOrEqual(1);
  });
});

describe('the aperture as a depth-dependent dip limit', () => {
  it("Stolt's blend of limits agrees with phase-shift's exact per-step limit within 10 % RMS; both narrow the image", () => {
    const line = makeLine(301, 600, DT, 0.02, TZ);
    for (const [x, z] of [
      [1, 0.4],
      [3, 1.5],
      [4.5, 2.5],
    ] as const)
      addDiffraction(line, x, z, V, S, F);
    const layers = [{ topM: 0, velocityMPerNs: V }];
    const st = stoltMigrate(line, { velocityMPerNs: V, separationM: S, apertureM: 1 });
    const ps = phaseShiftMigrate(line, { layers, separationM: S, apertureM: 1 });
    const wide = stoltMigrate(line, { velocityMPerNs: V, separationM: S });
    // measured here: 5 % (the blend is linear in sin(theta) between limits 0.1 apart)
    expect(relRms(st.data, ps.data)).toBeLessThan(0.1);
    expect(relRms(st.data, wide.data)).toBeGreaterThan(0.1);
  });
});

describe("Stolt's geometry table, kept between lines", () => {
  // an invariant, no outside reference: the table built for a wider band or kept from another line of
  // the same geometry gives the same bytes as one built for the line itself
  it('a line migrated (and modelled) after a line of other spacing and one of a wider band: the same bytes', () => {
    const clean = makeLine(151, 300, DT, 0.02, TZ);
    addDiffraction(clean, 1.5, 0.6, V, S, F);
    const noisy = makeLine(151, 300, DT, 0.02, TZ);
    addDiffraction(noisy, 1.1, 0.4, V, S, F);
    addNoise(noisy, 0.3, 5);
    const other = makeLine(151, 300, DT, 0.025, TZ);
    addDiffraction(other, 1.5, 0.6, V, S, F);
    for (const run of [stoltMigrate, stoltModel]) {
      const opts = { velocityMPerNs: V, separationM: S, apertureM: 1 };
      const same = (a: Float32Array, b: Float32Array) => Buffer.from(a.buffer).equals(Buffer.from(b.buffer));
      // after a line of another spacing each is the first of its geometry
      run(other, opts);
      const noisyAlone = run(noisy, opts).data;
      run(other, opts);
      const cleanAlone = run(clean, opts).data;
      // the wider band after the narrower one, then the narrower one again
      expect(same(run(noisy, opts).data, noisyAlone)).toBe(true);
      expect(same(run(clean, opts).data, cleanAlone)).toBe(true);
    }
  });
});

describe('mirror symmetry: the line reversed migrates to the image reversed', () => {
  // +kx and -kx share their interpolation (one pass over the bins for both rows): an odd number of
  // traces and an even one (the Nyquist row is its own partner), and diffractors at different dips
  for (const n of [201, 200]) {
    it(`${n} traces: Stolt migration and modelling within 1e-9 of the peak`, () => {
      const line = makeLine(n, 400, DT, 0.02, TZ);
      addDiffraction(line, 1.2, 0.5, V, S, F);
      addDiffraction(line, 2.9, 1.1, V, S, F);
      addNoise(line, 0.01, 3);
      const mirror = (l: RadarLine): RadarLine => {
        const d = new Float32Array(l.data.length);
        for (let t = 0; t < n; t++) d.set(l.data.subarray(t * l.nSamples, (t + 1) * l.nSamples), (n - 1 - t) * l.nSamples);
        return { ...l, data: d };
      };
      for (const run of [stoltMigrate, stoltModel]) {
        const a = run(line, { velocityMPerNs: V, separationM: S, apertureM: 1 }).data;
        const b = mirror(run(mirror(line), { velocityMPerNs: V, separationM: S, apertureM: 1 })).data;
        let peak = 0;
        let diff = 0;
        for (let i = 0; i < a.length; i++) {
          peak = Math.max(peak, Math.abs(a[i] as number));
          diff = Math.max(diff, Math.abs((a[i] as number) - (b[i] as number)));
        }
        expect(diff / peak).toBeLessThan(1e-9);
      }
    });
  }
});

describe('inverse: modelling undoes migration inside the dip limit', () => {
  // A band-limited section: Ricker wavelets in time and smooth lateral amplitudes (so every event keeps to
  // its dips): flat and dipping reflectors (0, 15, -25 degrees, sin^2 tapers along the line) and a point
  // diffraction with a Gaussian lateral amplitude (sd 0.35 z: beyond about 35 degrees from its apex it is
  // below e^-4). Everything lies inside the 60-degree dip limit and ends well before the record does (the
  // f-k line functions taper the last period of the record), so migrate-then-model must give it back.
  const bandLimited = (v: number, s: number) => {
    const line = makeLine(241, 560, DT, 0.02, TZ);
    const n = line.nTraces;
    for (let t = 0; t < n; t++) {
      const x = line.x[t] as number;
      const w = Math.sin((Math.PI * t) / (n - 1)) ** 2;
      addRicker(line, t, TZ + 10, 0.5 * w, F);
      addRicker(line, t, TZ + 22 + (2 / v) * Math.sin(Math.PI / 12) * (x - 2.4), 0.4 * w, F);
      addRicker(line, t, TZ + 30 - (2 / v) * Math.sin((25 * Math.PI) / 180) * (x - 2.4), 0.3 * w, F);
      const z = 0.9;
      const dx = x - 2.4;
      addRicker(line, t, TZ + (Math.hypot(dx - s / 2, z) + Math.hypot(dx + s / 2, z)) / v, Math.exp(-0.5 * (dx / (0.35 * z)) ** 2), F);
    }
    return line;
  };

  it('Stolt: relative RMS error below 2 % (measured 0.8 %), with and without the antenna separation', () => {
    for (const s of [0, S]) {
      const a = bandLimited(V, s);
      const r = stoltModel(stoltMigrate(a, { velocityMPerNs: V, separationM: s }), { velocityMPerNs: V, separationM: s });
      expect(relRms(r.data, a.data)).toBeLessThan(0.02);
    }
  });

  it('phase-shift, two layers: relative RMS error below 2 % (measured 0.45 %)', () => {
    const layers = [
      { topM: 0, velocityMPerNs: V },
      { topM: 0.6, velocityMPerNs: 0.08 },
    ];
    const a = bandLimited(V, S);
    const r = phaseShiftModel(phaseShiftMigrate(a, { layers, separationM: S }), { layers, separationM: S });
    expect(relRms(r.data, a.data)).toBeLessThan(0.02);
  });
});

describe('phase-shift through layers against Snell-law travel times', () => {
  // Zero-offset diffraction from a point below an interface: each trace's time from the ray parameter p
  // that reaches it (x(p) = sum h_i v_i p / sqrt(1 - v_i^2 p^2), t = 2 sum h_i / (v_i sqrt(1 - v_i^2 p^2))),
  // i.e. refraction at the interface (Snell's law), independent of the migration code.
  const layers = [
    { topM: 0, velocityMPerNs: 0.12 },
    { topM: 0.5, velocityMPerNs: 0.07 },
  ];
  const hs = [0.5, 0.6]; // thicknesses down to the point at 1.1 m
  const vs = [0.12, 0.07];
  const travel = (dx: number): number => {
    let lo = 0;
    let hi = (1 / Math.max(...vs)) * (1 - 1e-12);
    const xOf = (p: number) => hs.reduce((s, h, i) => s + (h * vs[i]! * p) / Math.sqrt(1 - (vs[i]! * p) ** 2), 0);
    for (let it = 0; it < 100; it++) {
      const mid = 0.5 * (lo + hi);
      if (xOf(mid) < Math.abs(dx)) lo = mid;
      else hi = mid;
    }
    const p = 0.5 * (lo + hi);
    return 2 * hs.reduce((s, h, i) => s + h / (vs[i]! * Math.sqrt(1 - (vs[i]! * p) ** 2)), 0);
  };
  const line = makeLine(241, 480, DT, 0.02, TZ);
  for (let t = 0; t < line.nTraces; t++) {
    const dx = (line.x[t] as number) - 2.4;
    if (Math.abs(dx) < 2) addRicker(line, t, TZ + travel(dx), 1 / Math.hypot(1, dx / 1.1), F);
  }
  const apex = (TZ + travel(0)) / DT;

  it('focuses within one trace and one sample of the apex; Stolt at the top velocity does not', () => {
    const m = phaseShiftMigrate(line, { layers, maxAngleDeg: 70 });
    const p = peak2d(m);
    expect(Math.abs(p.trace - 120)).toBeLessThanOrEqual(1);
    expect(Math.abs(p.sample - apex)).toBeLessThanOrEqual(1);
    const cPs = concentration(m, 120, Math.round(apex), 3, 6);
    const cSt = concentration(stoltMigrate(line, { velocityMPerNs: 0.12, maxAngleDeg: 70 }), 120, Math.round(apex), 3, 6);
    expect(cPs).toBeGreaterThan(0.5);
    expect(cPs).toBeGreaterThan(1.5 * cSt);
  });
});

describe('against the numpy reference of the same algorithms (test/stolt_ref.py, Debian /usr/bin/python3)', () => {
  const here = dirname(fileURLToPath(import.meta.url));
  const dir = mkdtempSync(join(tmpdir(), 'lamina-fk-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));
  const reference = (params: Record<string, unknown>, data: Float32Array): Float32Array => {
    writeFileSync(join(dir, 'p.json'), JSON.stringify(params));
    writeFileSync(join(dir, 'in.f32'), Buffer.from(data.buffer, data.byteOffset, data.byteLength));
    const r = spawnSync('/usr/bin/python3', [join(here, 'stolt_ref.py'), join(dir, 'p.json'), join(dir, 'in.f32'), join(dir, 'out.f32')], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(r.stderr);
    const b = readFileSync(join(dir, 'out.f32'));
    return new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
  };
  const maxRel = (a: Float32Array, b: Float32Array) => {
    let d = 0;
    let m = 0;
    for (let i = 0; i < a.length; i++) {
      d = Math.max(d, Math.abs((a[i] as number) - (b[i] as number)));
      m = Math.max(m, Math.abs(b[i] as number));
    }
    return d / m;
  };
  // a section with two diffractions, a dipping reflector and noise (seeded)
  const line = makeLine(97, 200, DT, 0.03, TZ);
  addDiffraction(line, 1.0, 0.5, V, 0, F);
  addDiffraction(line, 2.2, 0.8, V, 0, F, -0.6);
  for (let t = 0; t < line.nTraces; t++) addRicker(line, t, TZ + 12 + 0.05 * t, 0.3, F);
  addNoise(line, 0.01, 3);
  const r = rng(5);
  const dxM = 0.03 + 0.001 * r.next();
  const base = { nTraces: 97, nSamples: 200, dtNs: DT, dxM, timeZeroNs: TZ, maxAngleDeg: 55, taper: 0.3 };

  // Both compute in float64 and store float32: agreement to 1e-5 of the peak leaves room for the float32
  // rounding of both outputs and nothing else.
  it('Stolt migration and modelling (with the half-integral) within 1e-5 of the peak', () => {
    for (const inverse of [false, true]) {
      const ts = stoltKernel(line.data, 97, 200, DT, dxM, TZ, V, { maxAngleDeg: 55, taper: 0.3, inverse, halfIntegral: true });
      const py = reference({ ...base, method: 'stolt', velocityMPerNs: V, inverse, halfIntegral: true }, line.data);
      expect(maxRel(ts, py)).toBeLessThan(1e-5);
    }
  });

  // the airEvents step's pair (air-events.ts): migration at c, a mask, the exact inverse; the reference
  // runs the two transforms and the mask is applied between them
  it('the f-k pair at c of the airEvents step (migration, mask, modelling) within 1e-5 of the peak', () => {
    const mask = new Float32Array(97 * 200);
    for (let t = 20; t < 60; t++) for (let k = 80; k < 150; k++) mask[t * 200 + k] = 0.5 + 0.5 * Math.sin(t + k);
    const ts = airEventKernel(line.data, 97, 200, DT, dxM, TZ, mask, { maxAngleDeg: 88, taper: 0.05, energyTolerance: 0 });
    const c = { ...base, method: 'stolt', velocityMPerNs: C_M_PER_NS, maxAngleDeg: 88, taper: 0.05, halfIntegral: false };
    const img = reference({ ...c, inverse: false }, line.data);
    for (let q = 0; q < img.length; q++) img[q] = (img[q] as number) * (mask[q] as number);
    const py = reference({ ...c, inverse: true }, img);
    expect(maxRel(ts, py)).toBeLessThan(1e-5);
  });

  it('phase-shift migration and modelling through two layers, with and without an aperture, within 1e-5 of the peak', () => {
    const layers = [
      { topM: 0, velocityMPerNs: V },
      { topM: 0.43, velocityMPerNs: 0.075 },
    ];
    for (const apertureM of [Infinity, 0.6]) {
      for (const inverse of [false, true]) {
        const ts = phaseShiftKernel(line.data, 97, 200, DT, dxM, TZ, layers, { maxAngleDeg: 55, taper: 0.3, inverse, energyTolerance: 0, apertureM, halfIntegral: !inverse });
        const py = reference({ ...base, method: 'phase-shift', layers, inverse, halfIntegral: !inverse, ...(Number.isFinite(apertureM) ? { apertureM } : {}) }, line.data);
        expect(maxRel(ts, py)).toBeLessThan(1e-5);
      }
    }
  });
});

describe('choosing the method', () => {
  const regular = makeLine(101, 100, DT, 0.025, TZ);

  it('auto: Stolt for a constant model, phase-shift for a layered one, Kirchhoff for irregular spacing', () => {
    expect(chooseMigration(regular, { velocityMPerNs: V }).method).toBe('stolt');
    const layers = [
      { topM: 0, velocityMPerNs: V },
      { topM: 1, velocityMPerNs: 0.08 },
    ];
    expect(chooseMigration(regular, { velocityMPerNs: V, layers }).method).toBe('phase-shift');
    // jitter of +-0.4 spacing keeps every trace within half a spacing of its slot
    const r = rng(3);
    const jittered = { ...regular, x: Float64Array.from(regular.x, (x, i) => (i === 0 || i === 100 ? x : x + 0.025 * 0.8 * (r.next() - 0.5))) };
    expect(chooseMigration(jittered, { velocityMPerNs: V }).method).toBe('stolt');
    // a stretch at half speed: the slots drift by more than half a spacing
    const uneven = { ...regular, x: Float64Array.from(regular.x, (_, i) => (i < 50 ? i * 0.0125 : 0.625 + (i - 50) * 0.0375)) };
    const c = chooseMigration(uneven, { velocityMPerNs: V, layers });
    expect(c.method).toBe('kirchhoff');
    expect(c.maxSlotDeviationM).toBeGreaterThan(0.0125);
    expect(chooseMigration(uneven, { velocityMPerNs: V, method: 'stolt' }).method).toBe('stolt');
  });

  it('the recipe log records what ran and why', () => {
    const ctx = { frequencyMHz: F, separationM: S, velocityMPerNs: V };
    const a = runRecipe(regular, { steps: [{ step: 'migration' }] }, ctx);
    expect(a.log[0]?.params.method).toBe('auto');
    expect(a.log[0]?.result?.method).toBe('stolt');
    expect(String(a.log[0]?.result?.reason)).toMatch(/constant model/);
    const layers = [
      { topM: 0, velocityMPerNs: V },
      { topM: 1, velocityMPerNs: 0.08 },
    ];
    const b = runRecipe(regular, { steps: [{ step: 'migration' }] }, { ...ctx, velocityLayers: layers });
    expect(b.log[0]?.result?.method).toBe('phase-shift');
    const c = runRecipe(regular, { steps: [{ step: 'migration', method: 'kirchhoff' }] }, { ...ctx, velocityLayers: layers });
    expect(c.log[0]?.result?.method).toBe('kirchhoff');
    // a step velocity overrides the model: constant
    const d = runRecipe(regular, { steps: [{ step: 'migration', velocityMPerNs: 0.09 }] }, { ...ctx, velocityLayers: layers });
    expect(d.log[0]?.result?.method).toBe('stolt');
  });

  it('all methods pass samples before the ground wave through and accept out = line.data', () => {
    const line = makeLine(41, 200, DT, 0.05, TZ);
    addDiffraction(line, 1, 0.5, V, S, F);
    const copy = line.data.slice();
    const kMax = Math.floor((TZ + S / V) / DT);
    for (const run of [
      (out?: Float32Array) => stoltMigrate(line, { velocityMPerNs: V, separationM: S }, out),
      (out?: Float32Array) => phaseShiftMigrate(line, { layers: [{ topM: 0, velocityMPerNs: V }], separationM: S }, out),
    ]) {
      line.data.set(copy);
      const ref = run();
      const inPlace = run(line.data);
      expect(inPlace.data).toBe(line.data);
      expect(Array.from(inPlace.data)).toEqual(Array.from(ref.data));
      for (let t = 0; t < 41; t++) for (let k = 0; k <= kMax; k++) expect(ref.data[t * 200 + k]).toBe(copy[t * 200 + k]);
    }
  });
});
