import { formatError, isInputError } from '@lamina/errors';
import { SingleBar, Presets } from 'cli-progress';

/** Exit codes: 0 ok, 2 bad input (one line naming file and field), 1 anything else. */
export function action<A extends unknown[]>(fn: (...args: A) => Promise<void>): (...args: A) => Promise<void> {
  return async (...args: A) => {
    try {
      await fn(...args);
    } catch (e) {
      process.stderr.write(formatError(e) + '\n');
      if (!isInputError(e) && process.env.LAMINA_DEBUG && e instanceof Error) process.stderr.write(`${e.stack}\n`);
      process.exit(isInputError(e) ? 2 : 1);
    }
  };
}

export interface Progress {
  start(label: string, total: number): void;
  update(done: number): void;
  stop(): void;
}

/**
 * A progress bar on stderr that appears only once a task has run for a second, and never when stderr is
 * not a TTY unless LAMINA_PROGRESS=1, nor with `quiet`.
 */
export function progress(options: { quiet?: boolean } = {}): Progress {
  let bar: SingleBar | undefined;
  let startedAt = 0;
  let label = '';
  let total = 0;
  const enabled = !options.quiet && (process.stderr.isTTY || process.env.LAMINA_PROGRESS === '1');
  return {
    start(l, t) {
      this.stop();
      label = l;
      total = t;
      startedAt = Date.now();
    },
    update(done) {
      if (!enabled) return;
      if (!bar && Date.now() - startedAt > 1000) {
        bar = new SingleBar({ format: `${label.padEnd(18)} [{bar}] {percentage}% {value}/{total} {eta_formatted}`, stream: process.stderr }, Presets.shades_classic);
        bar.start(total, done);
      }
      bar?.update(done);
    },
    stop() {
      bar?.stop();
      bar = undefined;
    },
  };
}
