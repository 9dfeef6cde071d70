import { execFileSync } from 'node:child_process';

/**
 * Debian's Python with numpy, scipy, segyio and GDAL's bindings: the reference libraries of the tests.
 * Not the `python3` first on PATH, which may be another interpreter without them.
 */
export const PYTHON = '/usr/bin/python3';

/** Runs a Python script (`-c`) with arguments and optional stdin; returns its stdout. */
export function runPython(script: string, args: string[] = [], options: { input?: string | Uint8Array } = {}): string {
  return execFileSync(PYTHON, ['-c', script, ...args], { input: options.input, encoding: 'utf8', maxBuffer: 1 << 28 });
}
