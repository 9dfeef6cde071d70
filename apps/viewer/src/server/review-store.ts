import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { z } from 'zod';
import { exportTargets, readReview, writeReview, upsertDecision } from '@lamina/targets';
import { anomaliesSchema, checkContract, decisionSchema, siteIdentitySchema, UTILITY_TYPES, type Decision, type Review, type SiteIdentity } from '@lamina/contracts';
import { InputError } from '@lamina/errors';
import { lockFolder } from '@lamina/atomic';
import { SerialQueue } from './queue';
import { anomalyAnchorLonLat, type FeatureLike } from './anchor';

/** What a client may send to change one decision; omitted fields keep their value, null clears it. */
export const decisionInputSchema = z
  .object({
    anomalyId: z.string().min(1).max(200),
    decision: z.enum(['accept', 'reject', 'undecided']).optional(),
    origin: z.enum(['subsurface', 'above-ground']).nullable().optional(),
    utilityType: z.enum(UTILITY_TYPES).nullable().optional(),
    label: z.string().max(200).nullable().optional(),
    note: z.string().max(4000).nullable().optional(),
    by: z.string().max(200).nullable().optional(),
  })
  .strict();
export type DecisionInput = z.infer<typeof decisionInputSchema>;

/** An error the HTTP layer turns into a status code with a JSON message. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
  }
}

export interface ExportResult {
  ok: boolean;
  [k: string]: unknown;
}

/**
 * review.json of one output folder. Every read-modify-write and every export runs through one
 * in-process queue, so concurrent clients never overwrite each other's decisions; each write is atomic
 * (writeReview: temp file + rename) and validated against the schema of @lamina/contracts.
 */
export class ReviewStore {
  private readonly queue = new SerialQueue();
  readonly reviewPath: string;

  constructor(readonly outDir: string) {
    this.reviewPath = join(outDir, 'review.json');
  }

  async identity(): Promise<SiteIdentity> {
    const file = join(this.outDir, 'run.json');
    let json: unknown;
    try {
      json = JSON.parse(await readFile(file, 'utf8'));
    } catch (e) {
      throw new InputError(file, `expected the run.json of a processed output folder, found ${(e as Error).message}`);
    }
    return checkContract(siteIdentitySchema, (json as { identity?: unknown } | null)?.identity, file, { at: 'identity' });
  }

  read(): Promise<Review> {
    return this.queue.run(async () => readReview(this.reviewPath, await this.identity()));
  }

  private async anomaly(id: string): Promise<FeatureLike> {
    const file = join(this.outDir, 'anomalies.geojson');
    let json: unknown;
    try {
      json = JSON.parse(await readFile(file, 'utf8'));
    } catch (e) {
      throw new InputError(file, `expected the anomalies.geojson of a processed output folder, found ${(e as Error).message}`);
    }
    const fc = checkContract(anomaliesSchema, json, file);
    const f = fc.features.find((x) => x.properties.id === id);
    if (!f) throw new HttpError(404, `anomaly "${id}" is not in anomalies.geojson`);
    return f;
  }

  /** Merge `input` into the decision for its anomaly and save review.json. */
  apply(input: DecisionInput, now: () => Date = () => new Date()): Promise<{ decision: Decision; review: Review }> {
    return this.queue.run(async () => {
      // the folder's write lock: a `process` about to replace the folder finishes first, and then this
      // save lands in the new folder rather than in the old one it is about to drop
      const lock = await lockFolder(this.outDir, { what: 'lamina view (a review save)', waitMs: 120_000 });
      try {
        return await this.applyLocked(input, now);
      } finally {
        await lock.release();
      }
    });
  }

  private async applyLocked(input: DecisionInput, now: () => Date): Promise<{ decision: Decision; review: Review }> {
    const site = await this.identity();
    const review = await readReview(this.reviewPath, site);
    const f = await this.anomaly(input.anomalyId);
    const lonLat = anomalyAnchorLonLat(f);
    const p = f.properties ?? {};
    const top = Number(p.depthTopM);
    const bottom = Number(p.depthBottomM);
    if (!lonLat || !Number.isFinite(top) || !Number.isFinite(bottom)) {
      throw new HttpError(422, `anomaly "${input.anomalyId}" has no plan position or depth range to anchor a decision`);
    }
    const prev = review.decisions.find((d) => d.anomalyId === input.anomalyId);
    const merged: Record<string, unknown> = {
      ...(prev ?? { decision: 'undecided' }),
      anomalyId: input.anomalyId,
      anchor: { lon: lonLat[0], lat: lonLat[1], depthTopM: top, depthBottomM: bottom },
      updatedAt: now().toISOString(),
    };
    for (const k of ['decision', 'origin', 'utilityType', 'label', 'note', 'by'] as const) {
      const v = input[k];
      if (v === null) delete merged[k];
      else if (v !== undefined) merged[k] = v;
    }
    const decision = decisionSchema.parse(merged);
    const next = upsertDecision(review, decision);
    await writeReview(this.reviewPath, next);
    return { decision, review: next };
  }

  /** Run exportTargets(outDir) after every queued write has landed. */
  export(): Promise<unknown> {
    return this.queue.run(() => exportTargets(this.outDir));
  }
}
