import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { envelopeLevel } from '../src';

// Reference: numpy on Debian's /usr/bin/python3: np.median over every `every`-th trace at each sample,
// the mean over the +-smooth samples inside the record, floored at floorFraction times the maximum.
function numpyLevel(env: Float32Array, nT: number, nS: number, smooth: number, floorFraction: number): number[] {
  const code = [
    'import sys,json,numpy as np',
    'd=json.load(sys.stdin); nT,nS,h,ff=d["nT"],d["nS"],d["smooth"],d["ff"]',
    'e=np.array(d["env"],dtype=np.float32).reshape(nT,nS)',
    'every=max(1,-(-nT//128)); lv=np.median(e[::every,:].astype(np.float64),axis=0)',
    'out=[max(lv[max(0,s-h):min(nS,s+h+1)].mean(), max(float(e.max())*ff, 5e-324)) for s in range(nS)]',
    'print(json.dumps(out))',
  ].join('\n');
  return JSON.parse(execFileSync('/usr/bin/python3', ['-c', code], { input: JSON.stringify({ env: Array.from(env), nT, nS, smooth, ff: floorFraction }) }).toString()) as number[];
}

describe('envelopeLevel against numpy', () => {
  // 300 traces: every third one (at most 128 of them), an odd count; 129 traces: every second, 65
  for (const nT of [300, 129, 7]) {
    it(`${nT} traces`, () => {
      const nS = 57;
      const env = new Float32Array(nT * nS);
      let r = nT;
      for (let i = 0; i < env.length; i++) {
        r = (r * 16807) % 2147483647;
        env[i] = (r / 2147483647) * (1 + (i % nS) / 10);
      }
      const got = envelopeLevel(env, nT, nS, 3, 1e-3);
      const want = numpyLevel(env, nT, nS, 3, 1e-3);
      // the same medians; the smoothing sums in another order: 1e-12 relative
      got.forEach((g, s) => expect(Math.abs(g - want[s]!)).toBeLessThan(1e-12 * Math.abs(want[s]!)));
    });
  }
});
