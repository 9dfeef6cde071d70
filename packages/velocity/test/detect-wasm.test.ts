// The detection's kernels (wasm/detect-kernels.ts) against their JavaScript: the velocity scan
// (`curveTools` of src/scan.ts) gives the same scores, bit for bit, on random envelopes; the fits (`irls`
// of src/fit.ts) the same results on random picks; detections on synthetic radargrams are the same. The scores themselves are checked against their definition: the smaller of the
// two flanks' medians (the middle of the sorted values, or the mean of the two middle ones).
import { describe, expect, it } from 'vitest';
import { useKernels } from '@lamina/processing';
import { C_M_PER_NS, detectHyperbolas } from '../src';
import { apexCandidates } from '../src/detect';
import { kernelNormalised, kernelScan } from '../src/detect-wasm';
import { envelopeLevel } from '../src/noise-level';
import { fitHyperbola, hyperbolaTime, type FitOptions } from '../src/fit';
import { curveTools, type ScanLine } from '../src/scan';
import { rng as random, synthLine, type Diffractor } from './synth';

function scanLine(seed: number, nTraces: number, nSamples: number): ScanLine {
  const r = random(seed);
  const N = Float32Array.from({ length: nTraces * nSamples }, () => (r() < 0.05 ? 0 : 8 * r() ** 3));
  const along = new Float64Array(nTraces);
  for (let i = 1; i < nTraces; i++) along[i] = along[i - 1]! + 0.03 + 0.04 * r();
  const nV = 48;
  const velocities = Float64Array.from({ length: nV }, (_, k) => 0.03 * (0.45 / 0.03) ** (k / (nV - 1)));
  return { N, along, nTraces, nSamples, separationM: 0.15, spacing: along[nTraces - 1]! / (nTraces - 1), tanA: Math.tan(Math.PI / 3), maxApertureM: 4, dtNs: 0.1, timeZeroNs: 5, velocities, apexShift: 2 };
}

describe('the velocity scan in the detection kernels', () => {
  for (const [seed, nTraces, nSamples] of [[1, 200, 300], [2, 61, 500], [3, 400, 128]] as const) {
    it(`the JavaScript scores and offsets, bit for bit (seed ${seed}, ${nTraces} x ${nSamples})`, () => {
      const line = scanLine(seed, nTraces, nSamples);
      const js = curveTools(line);
      const wasm = kernelScan(line);
      expect(wasm).not.toBeNull();
      const r = random(seed + 100);
      const nV = line.velocities.length;
      for (let c = 0; c < 40; c++) {
        const ct = Math.floor(r() * nTraces);
        const t0 = 2 + r() * (nSamples * line.dtNs - 10);
        for (const floor of [1.5, -Infinity]) {
          const a = [new Float64Array(nV), new Float64Array(nV)] as const;
          const b = [new Float64Array(nV), new Float64Array(nV)] as const;
          js.scan(ct, t0, floor, a[0], a[1]);
          wasm!(ct, t0, floor, b[0], b[1]);
          // a fit between two scans (as detectHyperbolas runs them) leaves the scan's line as it was
          const off = Float64Array.from({ length: 30 }, (_, i) => i * 0.05);
          fitHyperbola(off, Float64Array.from(off, (x) => hyperbolaTime(x, 0.7, 0.5, 0.1, 0.15) + 0.01 * r()), { separationM: 0.15 });
          expect(Buffer.from(b[0].buffer).equals(Buffer.from(a[0].buffer))).toBe(true);
          expect(Buffer.from(b[1].buffer).equals(Buffer.from(a[1].buffer))).toBe(true);
        }
      }
    });
  }

  it('the normalised envelope (envelopeLevel, then the envelope over it as float32) bit for bit', () => {
    for (const [seed, nTraces, nSamples, smooth] of [[5, 300, 200, 6], [6, 97, 64, 0], [7, 1, 40, 3]] as const) {
      const r = random(seed);
      const E = Float32Array.from({ length: nTraces * nSamples }, () => (r() < 0.1 ? 0 : r() ** 4 * 100));
      const level = envelopeLevel(E, nTraces, nSamples, smooth, 3e-3);
      const js = Float32Array.from(E, (e, i) => e * Math.fround(1 / level[i % nSamples]!));
      const wasm = kernelNormalised(E, nTraces, nSamples, smooth, 3e-3, new Float32Array(E.length));
      expect(wasm).not.toBeNull();
      expect(Buffer.from(wasm!.buffer).equals(Buffer.from(js.buffer))).toBe(true);
    }
  });

  it('the apex candidates (local maxima with their ties) are the JavaScript\'s, in its order', () => {
    for (const [seed, nTraces, nSamples] of [[8, 120, 200], [9, 3, 50]] as const) {
      const r = random(seed);
      // few levels, so that ties between neighbours are common
      const N = Float32Array.from({ length: nTraces * nSamples }, () => Math.round(r() * r() * 12));
      for (const [sStart, sEnd, th, nbT, halfS] of [[5, nSamples - 5, 5, 2, 3], [0, nSamples, 0, 1, 1], [30, 10, 5, 2, 2]] as const) {
        useKernels(false);
        let js;
        try {
          js = apexCandidates(N, nTraces, nSamples, sStart, sEnd, th, nbT, halfS);
        } finally {
          useKernels(true);
        }
        expect(apexCandidates(N, nTraces, nSamples, sStart, sEnd, th, nbT, halfS)).toEqual(js);
      }
    }
  });

  it('a score is the smaller flank median of the envelope along the curve (sorted values)', () => {
    const line = scanLine(9, 150, 300);
    const { curveScore, traceRange, at } = curveTools(line);
    const x0 = line.along[70]!;
    const [z, v, ap] = [0.6, 0.1, 1.2];
    const [a, b] = traceRange(x0, ap);
    const stride = Math.max(1, Math.ceil((b - a + 1) / 120));
    const flanks: number[][] = [[], []];
    for (let j = a; j <= b; j += stride) {
      const d = line.along[j]! - x0;
      if (Math.abs(d) < 1.5 * line.spacing) continue;
      flanks[d < 0 ? 0 : 1]!.push(Math.fround(at(j, (hyperbolaTime(line.along[j]!, x0, z, v, line.separationM) + line.timeZeroNs) / line.dtNs)));
    }
    const med = (xs: number[]) => {
      const s = [...xs].sort((p, q) => p - q);
      const m = s.length >> 1;
      return s.length % 2 ? s[m]! : 0.5 * (s[m - 1]! + s[m]!);
    };
    expect(curveScore(x0, z, v, ap)).toBe(Math.min(med(flanks[0]!), med(flanks[1]!)));
  });

  it('fitHyperbola gives the same fits, bit for bit, with the kernels off and on (random picks, every option)', () => {
    const r = random(77);
    const gauss = () => Math.sqrt(-2 * Math.log(r() + 1e-300)) * Math.cos(2 * Math.PI * r());
    const optionSets: FitOptions[] = [
      { separationM: 0.15 },
      { separationM: 0 },
      { separationM: 0.3, robust: 'huber' },
      { separationM: 0.15, robust: 'none' },
      { separationM: 0.15, radius: 'point' },
      { separationM: 0.1, maxRadiusM: 0.2, radiusSignificance: 2 },
    ];
    let fits = 0;
    for (let trial = 0; trial < 60; trial++) {
      const n = 8 + Math.floor(r() * 60);
      const x0 = 5 * r();
      const z = 0.2 + 1.5 * r();
      const v = 0.05 + 0.15 * r();
      const R = r() < 0.5 ? 0 : 0.3 * r();
      const o = optionSets[trial % optionSets.length]!;
      const off = Float64Array.from({ length: n }, (_, i) => x0 - 1.5 + (3 * i) / n);
      const t = Float64Array.from(off, (x) => hyperbolaTime(x, x0, z, v, o.separationM ?? 0, R) + 0.05 * gauss() + (r() < 0.1 ? 3 * gauss() : 0));
      const options = { ...o, ...(trial % 3 === 0 ? { initial: { x0M: x0 + 0.1, t0Ns: t[n >> 1]!, velocityMPerNs: v * 1.2 } } : {}), ...(trial % 4 === 0 ? { pickWeights: Float64Array.from(off, () => r()) } : {}) };
      useKernels(false);
      let js;
      try {
        js = fitHyperbola(off, t, options);
      } finally {
        useKernels(true);
      }
      const wasm = fitHyperbola(off, t, options);
      if (js) fits++;
      // the same numbers, -0 and NaN included
      expect(JSON.stringify(wasm, (_, val) => (typeof val === 'number' ? (Object.is(val, -0) ? '-0' : String(val)) : val))).toBe(
        JSON.stringify(js, (_, val) => (typeof val === 'number' ? (Object.is(val, -0) ? '-0' : String(val)) : val)),
      );
    }
    expect(fits).toBeGreaterThan(40);
  });

  it('detectHyperbolas finds the same hyperbolas with the kernels off and on', () => {
    const targets: Diffractor[] = [
      { x0: 2.5, z: 0.5, v: C_M_PER_NS / 2, amp: 1 },
      { x0: 6, z: 1.1, v: 0.1, amp: 1 },
      { x0: 10.5, z: 0.7, v: C_M_PER_NS / 5, amp: 1 },
    ];
    const line = synthLine('L1', targets, { nTraces: 300, nSamples: 640, dtNs: 0.1, fMHz: 400, separationM: 0.15, flats: [[0.6, 4]], noise: 0.05, seed: 4 });
    const opts = { separationM: 0.15, frequencyMHz: 400 };
    useKernels(false);
    let js;
    try {
      js = detectHyperbolas(line, opts);
    } finally {
      useKernels(true);
    }
    const wasm = detectHyperbolas(line, opts);
    expect(js.length).toBeGreaterThanOrEqual(3);
    expect(wasm).toEqual(js);
  });
});
