import { describe, expect, it } from 'vitest';
import { combine, type Evidence } from '../src/evidence';
import { piecesOfBuried } from '../src/inside-buried';
import type { ScreenedAnomaly } from '../src/screened';

// Hand-made anomalies: only what piecesOfBuried reads (cells, members' slices, depth, shape, evidence).
function anomaly(cells: number[], slices: number[], evidence: Evidence[], lengthM = 1): ScreenedAnomaly {
  const a = {
    id: 'A',
    cells: Int32Array.from(cells),
    members: slices.map((slice) => ({ slice })),
    depthTopM: 0.1 * Math.min(...slices),
    depthBottomM: 0.1 * (Math.max(...slices) + 1),
    shape: { kind: 'linear', lengthM, widthM: 0.3, directionDeg: 90, elongation: 3 },
  };
  return { anomaly: a as unknown as ScreenedAnomaly['anomaly'], evidence, verdict: combine(evidence) };
}

// one member on a feature's locus: prior -1 + move-out 2, P = 0.73 (above-ground)
const onLocus: Evidence = { test: 'move-out', featureId: 'post-1', measured: 2, expected: 2, tolerance: 0.3, units: 'm', passed: true, weight: 2, slice: 5, detail: '' };
const pipeCells = Array.from({ length: 40 }, (_, i) => 1000 + i);

describe('piecesOfBuried', () => {
  const noLayer = () => false;

  it('takes back a flagged piece lying in a buried object\'s footprint at its depth (continuity, -3)', () => {
    const pipe = anomaly(pipeCells, [4, 5, 6], [], 4);
    const piece = anomaly([1010, 1011, 1012, 1013], [5], [onLocus]);
    expect(piece.verdict.origin).toBe('above-ground');
    const list = [pipe, piece];
    expect(piecesOfBuried(list, noLayer)).toBe(1);
    const e = list[1]!.evidence.find((x) => x.test === 'continuity')!;
    expect(e.weight).toBe(-3);
    expect(e.measured).toBe(1);
    expect(list[1]!.verdict.origin).toBe('subsurface');
    // -1 + 2 - 3 = -2: P = 1 / (1 + e^2)
    expect(list[1]!.verdict.pAboveGround).toBeCloseTo(1 / (1 + Math.exp(2)), 12);
  });

  it('reaches one slice up or down, no further', () => {
    const pipe = anomaly(pipeCells, [6, 7], [], 4);
    const next = [pipe, anomaly([1010, 1011], [5], [onLocus])];
    expect(piecesOfBuried(next, noLayer)).toBe(1);
    const far = [pipe, anomaly([1010, 1011], [3], [onLocus])];
    expect(piecesOfBuried(far, noLayer)).toBe(0);
    expect(far[1]!.verdict.origin).toBe('above-ground');
  });

  it('leaves an anomaly alone that lies mostly outside the footprint, spans more than two slices, or whose host is a layer', () => {
    const pipe = anomaly(pipeCells, [4, 5, 6], [], 4);
    const outside = anomaly([1038, 1039, 2000, 2001, 2002], [5], [onLocus]);
    expect(piecesOfBuried([pipe, outside], noLayer)).toBe(0);
    const thick = anomaly([1010, 1011], [4, 5, 6], [onLocus]);
    expect(piecesOfBuried([pipe, thick], noLayer)).toBe(0);
    const piece = anomaly([1010, 1011], [5], [onLocus]);
    expect(piecesOfBuried([pipe, piece], (s) => s === pipe)).toBe(0);
  });

  it('takes no above-ground anomaly as a host', () => {
    const ring = anomaly(pipeCells, [4, 5, 6], [onLocus], 4);
    const piece = anomaly([1010, 1011], [5], [onLocus]);
    expect(piecesOfBuried([ring, piece], noLayer)).toBe(0);
  });
});
