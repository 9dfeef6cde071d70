import { InputError } from '@lamina/errors';
import type { z } from 'zod';

/** One problem in an input file, at a JSON path such as `lines[2].start[0]`. */
export interface Problem {
  path: string;
  message: string;
}

/**
 * Several problems in one file, thrown as one `InputError`: the message names the file and the first
 * problem's JSON path, then counts and lists the rest, so a user fixes them all in one pass.
 */
export class InputProblems extends InputError {
  readonly problems: Problem[];

  constructor(file: string, problems: Problem[]) {
    const first = problems[0] ?? { path: '(top level)', message: 'invalid' };
    const rest = problems.slice(1);
    const shown = rest.slice(0, 8).map((p) => `${p.path}: ${p.message}`);
    if (rest.length > shown.length) shown.push(`...and ${rest.length - shown.length} more`);
    const tail = rest.length ? ` (${rest.length} more problem${rest.length > 1 ? 's' : ''}: ${shown.join('; ')})` : '';
    super(file, first.message + tail, { field: first.path });
    this.problems = problems;
  }
}

/** `lines[2].start[0]` from `['lines', 2, 'start', 0]`. */
export function jsonPath(path: readonly PropertyKey[]): string {
  let s = '';
  for (const k of path) {
    if (typeof k === 'number') s += `[${k}]`;
    else if (typeof k === 'string' && /^[A-Za-z_$][\w$]*$/.test(k)) s += s ? `.${k}` : k;
    else s += `[${JSON.stringify(String(k))}]`;
  }
  return s || '(top level)';
}

/** Zod issues as problems: unknown keys get their own path, "received undefined" reads "missing". */
export function zodProblems(error: z.ZodError, prefix: readonly PropertyKey[] = []): Problem[] {
  const out: Problem[] = [];
  for (const i of error.issues) {
    if (i.code === 'unrecognized_keys') {
      for (const k of i.keys) out.push({ path: jsonPath([...prefix, ...i.path, k]), message: 'unknown key (misspelt, or not part of the format)' });
      continue;
    }
    const m = /^Invalid input: expected (.+), received undefined$/.exec(i.message);
    out.push({ path: jsonPath([...prefix, ...i.path]), message: m ? `missing: expected ${m[1]}` : i.message });
  }
  return out;
}

/** Parse JSON text; a syntax error becomes an `InputError` with the 1-based line number. */
export function parseJson(text: string, file: string): unknown {
  try {
    return JSON.parse(text);
  } catch (e) {
    const msg = e instanceof Error ? e.message : String(e);
    const pos = /position (\d+)/.exec(msg);
    const line = pos ? text.slice(0, Number(pos[1])).split('\n').length : undefined;
    const where = line !== undefined ? { line } : {};
    throw new InputError(file, `expected valid JSON, found a syntax error (${msg.replace(/^JSON\.parse: /, '')})`, where);
  }
}

/** A type name for messages: `found a string`, `found null`. */
export function describe(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return 'an array';
  if (typeof v === 'object') return 'an object';
  if (typeof v === 'string') return `"${v.length > 40 ? v.slice(0, 40) + '...' : v}"`;
  return String(v);
}
