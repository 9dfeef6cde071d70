import { axisDiffDeg, fitNoiseLaw, noiseScores, type Anomaly3D } from '@lamina/anomalies';
import type { SliceStack } from '@lamina/slices';

/** The slices of one direction of a survey in two directions, gridded from its own lines alone (same grid). */
export interface DirectionStack {
  /** Azimuth of its lines, degrees clockwise from north, in [0, 180). */
  azimuthDeg: number;
  stack: SliceStack;
}

export interface CrossingOptions {
  /** Score a crossing line's cell must reach to count as seeing the object (the extraction's growth threshold). */
  lowThreshold: number;
  /** Share of the anomaly's cells the crossing lines must see. @default 0.5 */
  minShare?: number;
  /** Least angle between the anomaly and the crossing lines, degrees. @default 45 */
  minAngleDeg?: number;
}

/**
 * Is an anomaly that runs along one set of lines of a survey in two directions also recorded by the
 * lines that cross it? An object buried along a line is crossed by every line of the other direction,
 * and each records its reflection where it crosses; an artefact of one line (its background removal
 * leaving a piece of layer, a change of coupling or of time-zero along it) is on that line's data
 * alone. Seen: at least `minShare` of the anomaly's cells, slice by slice, score at least
 * `lowThreshold` in the slices gridded from the crossing lines alone, under each such slice's own noise
 * law (`fitNoiseLaw`). Undefined when no direction crosses the anomaly (one-direction surveys).
 */
export class CrossingLines {
  private readonly scores = new Map<string, Float32Array | null>();

  constructor(
    private readonly stacks: readonly DirectionStack[],
    private readonly options: CrossingOptions,
  ) {}

  seen(a: Anomaly3D): boolean | undefined {
    const minAngle = this.options.minAngleDeg ?? 45;
    const k = this.stacks.findIndex((d) => axisDiffDeg(a.shape.directionDeg, d.azimuthDeg) >= minAngle);
    if (k < 0) return undefined;
    let seen = 0;
    let total = 0;
    for (const m of a.members) {
      const z = this.scoresOf(k, this.stacks[k]!.stack, m.slice);
      if (!z) continue;
      for (const c of m.cells) {
        total++;
        if ((z[c] as number) >= this.options.lowThreshold) seen++;
      }
    }
    return total > 0 && seen >= (this.options.minShare ?? 0.5) * total;
  }

  /** Scores of slice `si` of direction `k` under its own noise law (null when no law fits). */
  private scoresOf(k: number, stack: SliceStack, si: number): Float32Array | null {
    const key = `${k}:${si}`;
    let z = this.scores.get(key);
    if (z === undefined) {
      const slice = stack.slices[si];
      const law = slice ? fitNoiseLaw(slice.values, stack.grid.nodata) : null;
      z = law && slice ? noiseScores(slice.values, stack.grid.nodata, law) : null;
      this.scores.set(key, z);
    }
    return z;
  }
}
