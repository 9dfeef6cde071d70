import { describe, expect, it } from 'vitest';
import { buildVelocityReport, C_M_PER_NS, detectHyperbolas, EARLY_APEX_FLAG, lineHyperbolas, type DetectedHyperbola } from '../src';
import { bistatic, synthLine, type Diffractor } from './synth';

const S = 0.15;
const targets: Diffractor[] = [
  { x0: 2.5, z: 0.5, v: C_M_PER_NS / 2, amp: 1 }, // K 4 (dry sand, Davis & Annan 1989 range)
  { x0: 6, z: 1.1, v: 0.1, amp: 1 }, // K 9
  { x0: 10.5, z: 0.7, v: C_M_PER_NS / 5, amp: 1 }, // K 25
];
// A post 0.9 m beside the line: t = 2 sqrt(dx^2 + r^2) / c (bistatic form), weaker than the buried targets.
const post: Diffractor = { x0: 14, z: 0.9, v: C_M_PER_NS, amp: 0.4 };

function match(found: DetectedHyperbola[], d: Diffractor): DetectedHyperbola | undefined {
  const t0 = bistatic(0, d.z, d.v, S);
  return found.find((h) => Math.abs(h.x0M - d.x0) < 0.15 && Math.abs(h.t0Ns - t0) < 1.5);
}

const opts = { separationM: S, frequencyMHz: 400 };
const flats: [number, number][] = [
  [0.6, 4], // direct wave
  [30, 0.3], // a flat layer
];

describe('detectHyperbolas (end to end on a synthetic radargram)', () => {
  it('finds every diffractor without noise and recovers v within 1 %, with no spurious fits', () => {
    const line = synthLine('L1', [...targets, post], { nTraces: 340, nSamples: 640, dtNs: 0.1, fMHz: 400, separationM: S, flats });
    const found = detectHyperbolas(line, opts);
    for (const d of [...targets, post]) {
      const h = match(found, d);
      expect(h, `target at ${d.x0}`).toBeDefined();
      expect(Math.abs(h!.velocityMPerNs / d.v - 1)).toBeLessThan(0.01);
      expect(Math.abs(h!.zM - d.z)).toBeLessThan(0.02);
    }
    expect(found.length).toBe(4);
  });

  it('recovers v within 5 % with realistic noise (three seeds)', () => {
    for (const seed of [11, 12, 13]) {
      // Gaussian noise at 5 % of the apex amplitude of a 1 m deep target (common practice, no source).
      const line = synthLine('L1', [...targets, post], { nTraces: 340, nSamples: 640, dtNs: 0.1, fMHz: 400, separationM: S, flats, noise: 0.05, seed });
      const found = detectHyperbolas(line, opts);
      for (const d of targets) {
        const h = match(found, d);
        expect(h, `seed ${seed} target at ${d.x0}`).toBeDefined();
        expect(Math.abs(h!.velocityMPerNs / d.v - 1)).toBeLessThan(0.05);
      }
    }
  });

  it("fits a post's air-wave hyperbola with K between 0.8 and 1.5 and calls it above-ground", () => {
    for (const seed of [21, 22]) {
      const line = synthLine('L2', [targets[1]!, post], { nTraces: 340, nSamples: 640, dtNs: 0.1, fMHz: 400, separationM: S, flats, noise: 0.03, seed });
      const fits = lineHyperbolas(line, opts);
      const air = fits.find((f) => Math.abs((f.x0M ?? 0) - post.x0) < 0.2);
      expect(air).toBeDefined();
      expect(air!.permittivity).toBeGreaterThan(0.8);
      expect(air!.permittivity).toBeLessThan(1.5);
      expect(air!.origin).toBe('above-ground');
      const soil = fits.find((f) => Math.abs((f.x0M ?? 0) - 6) < 0.2)!;
      expect(soil.origin).toBe('subsurface');
      expect(soil.flags).toBeUndefined();
    }
  });

  it('reports apex positions in the site CRS (US survey feet, diagonal line)', () => {
    const ft = 1200 / 3937;
    const heading: [number, number] = [0.6, 0.8];
    const line = synthLine('L3', targets, { nTraces: 300, nSamples: 640, dtNs: 0.1, fMHz: 400, separationM: S, metresPerUnit: ft, heading, origin: [1000, 2000] });
    const found = detectHyperbolas(line, { ...opts, metresPerUnit: ft });
    expect(found.length).toBe(3);
    for (const d of targets) {
      const h = match(found, d)!;
      expect(h).toBeDefined();
      expect(h.x).toBeCloseTo(1000 + (heading[0] * d.x0) / ft, 1);
      expect(h.y).toBeCloseTo(2000 + (heading[1] * d.x0) / ft, 1);
      expect(h.trace).toBe(Math.round(d.x0 / 0.05));
      expect(Math.abs(h.velocityMPerNs / d.v - 1)).toBeLessThan(0.01);
    }
  });

  it('finds nothing in pure noise or on flat reflections alone', () => {
    const line = synthLine('L4', [], { nTraces: 300, nSamples: 512, dtNs: 0.1, fMHz: 400, flats, noise: 0.05, seed: 5 });
    expect(detectHyperbolas(line, opts)).toEqual([]);
  });

  it('leaves out the delayed copies of a ringing pipe, keeps a weaker object straight below a strong one', () => {
    // A pipe whose echo train repeats its hyperbola 3 and 6 ns later (more than a period at 400 MHz),
    // halving each time: a delayed copy t(x) + T is not a hyperbola of the soil's velocity, and its fit
    // (apex curvature (2 / v)^2 / (t0 + T), flank slopes 2 / v) reads another velocity.
    const pipe: Diffractor = { x0: 4, z: 0.5, v: 0.1, amp: 1 };
    const ringing: Diffractor[] = [
      { ...pipe, amp: 0.5, delayNs: 3 },
      { ...pipe, amp: 0.25, delayNs: 6 },
    ];
    // A weaker point 0.7 m below another strong one: a different curve, not a copy.
    const upper: Diffractor = { x0: 11, z: 0.4, v: 0.1, amp: 1 };
    const lower: Diffractor = { x0: 11, z: 1.1, v: 0.1, amp: 0.3 };
    const line = synthLine('L5', [pipe, ...ringing, upper, lower], { nTraces: 340, nSamples: 640, dtNs: 0.1, fMHz: 400, separationM: S, flats, noise: 0.01, seed: 3 });
    const found = detectHyperbolas(line, opts);
    for (const d of [pipe, upper, lower]) {
      const h = match(found, d);
      expect(h, `diffractor at ${d.x0} m, ${d.z} m`).toBeDefined();
      expect(Math.abs(h!.velocityMPerNs / d.v - 1)).toBeLessThan(0.03);
    }
    const near = (f: DetectedHyperbola[]) => f.filter((h) => Math.abs(h.x0M - pipe.x0) < 0.3);
    expect(near(found).length).toBe(1);
    // Without the test the copies are fitted too, with a velocity off by more than the fits' 3 %.
    const all = near(detectHyperbolas(line, { ...opts, rejectEchoes: false }));
    expect(all.length).toBeGreaterThan(1);
    for (const h of all.filter((h) => h.t0Ns > bistatic(0, pipe.z, pipe.v, S) + 2)) expect(Math.abs(h.velocityMPerNs / pipe.v - 1)).toBeGreaterThan(0.03);
  });
});

describe('apexes in the direct-wave zone (earlyApexPeriods)', () => {
  // 200 MHz (period 5 ns): a diffractor at 0.32 m in K 9 soil (v 0.1 m/ns, Davis & Annan 1989 range for
  // moist soil, from memory) has its apex 6.5 ns after time-zero, 1.3 periods: inside the 1.5 periods
  // that detection skips by default, where the direct wave's residue lies.
  const shallow: Diffractor = { x0: 5, z: 0.32, v: 0.1, amp: 1 };
  const deep: Diffractor = { x0: 12, z: 1.2, v: 0.1, amp: 1 };
  const o = { nTraces: 340, nSamples: 500, dtNs: 0.2, fMHz: 200, separationM: S, flats: [[0.6, 4]] as [number, number][], noise: 0.02, seed: 5 };
  const dopts = { separationM: S, frequencyMHz: 200 };

  it('finds a shallow apex only in the early window, marks it early, and leaves the later fits as they were', () => {
    const line = synthLine('E1', [shallow, deep], o);
    const late = detectHyperbolas(line, dopts);
    expect(late.some((h) => Math.abs(h.x0M - shallow.x0) < 0.2)).toBe(false);
    const both = detectHyperbolas(line, { ...dopts, earlyApexPeriods: 1 });
    const e = both.find((h) => Math.abs(h.x0M - shallow.x0) < 0.2);
    expect(e?.early).toBe(true);
    expect(Math.abs(e!.velocityMPerNs / shallow.v - 1)).toBeLessThan(0.05);
    // the later fits are the same fits, in the same order, ahead of the early ones
    expect(both.slice(0, late.length).map((h) => [h.x0M, h.t0Ns, h.velocityMPerNs])).toEqual(late.map((h) => [h.x0M, h.t0Ns, h.velocityMPerNs]));
    expect(both.slice(late.length).every((h) => h.early === true)).toBe(true);
  });

  it('lineHyperbolas flags the early fits; the report keeps them only for a site that nothing later fits', () => {
    // a line whose later fits serve the site: its early window is not examined (the report would drop its fits)
    const withDeep = lineHyperbolas(synthLine('E1', [shallow, deep], o), dopts);
    expect(withDeep.some((f) => Math.abs((f.x0M ?? 0) - deep.x0) < 0.2)).toBe(true);
    expect(withDeep.some((f) => f.flags?.includes(EARLY_APEX_FLAG))).toBe(false);
    // early fits beside later ones on other lines are dropped, the site is the later fits' alone
    const early = lineHyperbolas(synthLine('E9', [shallow], { ...o, origin: [0, 20] }), dopts);
    expect(early.length).toBeGreaterThan(0);
    const r1 = buildVelocityReport([...withDeep, ...early], { separationM: S });
    expect(r1.hyperbolas!.some((f) => f.flags?.includes(EARLY_APEX_FLAG))).toBe(false);
    expect(r1.site).toEqual(buildVelocityReport(withDeep, { separationM: S }).site);

    // three lines 5 m apart, each over a shallow object of its own: three objects (objectGroups)
    const onlyShallow = [0, 5, 10].flatMap((y, i) => lineHyperbolas(synthLine(`E${i + 2}`, [shallow], { ...o, seed: 5 + i, origin: [0, y] }), dopts));
    const r2 = buildVelocityReport(onlyShallow, { separationM: S });
    expect(r2.site.objectCount).toBe(3);
    // the site takes the radius-free velocity of an unresolved radius, uncertain by up to 10 % (maxRelativeUncertainty)
    expect(Math.abs(r2.site.velocityMPerNs / shallow.v - 1)).toBeLessThan(0.1);
    expect(r2.site.note).toMatch(/direct-wave zone/);
    expect(r2.hyperbolas!.every((f) => f.flags?.includes(EARLY_APEX_FLAG))).toBe(true);
    // one object's early fits are not enough: the site falls back to the assumed velocity, without them
    const one = onlyShallow.filter((f) => f.line === 'E2');
    const r4 = buildVelocityReport(one, { separationM: S });
    expect(r4.site.fitCount).toBe(0);
    expect(r4.hyperbolas).toEqual([]);
    expect(buildVelocityReport(one, { separationM: S, minEarlyObjects: 1 }).site.fitCount).toBe(one.length);
    const r3 = buildVelocityReport([], { separationM: S });
    expect(r3.site.fitCount).toBe(0);
  });
});
