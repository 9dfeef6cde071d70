import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { z } from 'zod';
import { lockFolder, writeFileAtomic } from '@lamina/atomic';
import { picksSchema, pickSchema, type PicksFile } from '@lamina/contracts';
import { classifyVelocity, fitHyperbola, parsePicks, permittivityFromVelocity } from '@lamina/velocity';
import { SerialQueue } from './queue';
import { HttpError } from './review-store';
import { radargramLine } from './radargram-line';

/** One hyperbola a client saves: a line and at least 5 picks (the picks file's own entry). */
export const pickInputSchema = z.object({ line: z.string().min(1).max(200), label: z.string().max(200).optional(), picks: z.array(pickSchema).min(5).max(400) }).strict();
export type PickInput = z.infer<typeof pickInputSchema>;

/**
 * picks.json of one output folder: the hand matches saved in the viewer, in the format
 * `lamina velocity --picks` reads and `lamina process` takes from its output folder. Each change is a
 * read-modify-write through one in-process queue under the folder's write lock, written atomically.
 */
export class PicksStore {
  private readonly queue = new SerialQueue();
  readonly path: string;

  constructor(readonly outDir: string) {
    this.path = join(outDir, 'picks.json');
  }

  private async load(): Promise<PicksFile> {
    let text: string;
    try {
      text = await readFile(this.path, 'utf8');
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') return { hyperbolas: [] };
      throw e;
    }
    return parsePicks(text, this.path);
  }

  read(): Promise<PicksFile> {
    return this.queue.run(() => this.load());
  }

  /**
   * Append one hyperbola after checking that its line has a radargram and that its picks fit a
   * hyperbola (the fitter of @lamina/velocity on their offsets along the line), so `lamina process`
   * will not stop on it. Returns the fit's velocity and verdict with the new count.
   */
  add(input: PickInput): Promise<{ count: number; fit: { velocityMPerNs: number; permittivity: number; origin: string; t0Ns: number } }> {
    return this.queue.run(async () => {
      const { line, along } = await radargramLine(this.outDir, input.line);
      const off: number[] = [];
      const tim: number[] = [];
      for (const p of input.picks) {
        let o: number;
        if (p.trace !== undefined) {
          const i = p.trace / (line.traceStep || 1);
          if (i > line.nTraces - 1) throw new HttpError(422, `pick trace ${p.trace} is beyond line ${line.id} (${line.nTraces * (line.traceStep || 1)} traces)`);
          const a = Math.floor(i);
          const b = Math.min(a + 1, line.nTraces - 1);
          o = along[a]! + (i - a) * (along[b]! - along[a]!);
        } else o = p.offsetM!;
        off.push(o);
        tim.push(p.timeNs);
      }
      const fit = fitHyperbola(off, tim, { separationM: line.separationM });
      // the test `fitManualPicks` makes when `lamina process` reads the file
      if (!fit || !Number.isFinite(fit.sigmaVelocity)) throw new HttpError(422, `expected picks along a diffraction hyperbola, found ${off.length} picks that do not fit one`);
      const lock = await lockFolder(this.outDir, { what: 'lamina view (a picks save)', waitMs: 120_000 });
      try {
        const file = await this.load();
        const next: PicksFile = picksSchema.parse({ hyperbolas: [...file.hyperbolas, { line: input.line, ...(input.label ? { label: input.label } : {}), picks: input.picks }] });
        await writeFileAtomic(this.path, JSON.stringify(next, null, 1) + '\n');
        return { count: next.hyperbolas.length, fit: { velocityMPerNs: fit.velocityMPerNs, permittivity: permittivityFromVelocity(fit.velocityMPerNs), origin: classifyVelocity(fit.velocityMPerNs).origin, t0Ns: fit.t0Ns } };
      } finally {
        await lock.release();
      }
    });
  }

  /** Remove the hyperbola at `index`. */
  remove(index: number): Promise<{ count: number }> {
    return this.queue.run(async () => {
      const lock = await lockFolder(this.outDir, { what: 'lamina view (a picks save)', waitMs: 120_000 });
      try {
        const file = await this.load();
        if (!(index >= 0 && index < file.hyperbolas.length)) throw new HttpError(404, `expected a hyperbola index 0..${file.hyperbolas.length - 1}, found ${index}`);
        const next = { hyperbolas: file.hyperbolas.filter((_, i) => i !== index) };
        await writeFileAtomic(this.path, JSON.stringify(next, null, 1) + '\n');
        return { count: next.hyperbolas.length };
      } finally {
        await lock.release();
      }
    });
  }
}
