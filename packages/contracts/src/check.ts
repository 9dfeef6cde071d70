import type { z } from 'zod';
import { InputError } from '@lamina/errors';

/** A JSON path as InputError shows it: `features[2].properties.depthTopM`. */
export function jsonPath(path: readonly PropertyKey[], prefix = ''): string {
  let s = prefix;
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s === '' ? String(p) : `.${String(p)}`;
  return s === '' ? '(root)' : s;
}

function valueAt(json: unknown, path: readonly PropertyKey[]): unknown {
  let v = json;
  for (const k of path) v = v !== null && typeof v === 'object' ? (v as Record<PropertyKey, unknown>)[k] : undefined;
  return v;
}

/** zod's own wording turned into ours ("expected ..."); a schema's own `error` text wins over this. */
const wording = (iss: z.core.$ZodRawIssue): string | undefined => {
  if (iss.code === 'invalid_type') return `expected ${iss.expected === 'number' ? 'a finite number' : `a value of type ${iss.expected}`}`;
  if (iss.code === 'invalid_value') return `expected ${iss.values.map((v) => JSON.stringify(v)).join(' or ')}`;
  if (iss.code === 'unrecognized_keys') return `expected no key ${iss.keys.map((k) => JSON.stringify(k)).join(', ')}`;
  return undefined;
};

export interface CheckOptions {
  /** Path of `json` inside the file, for errors on a part of it (`features[3]`). @default '' */
  at?: string;
}

/**
 * `json` checked against a contract schema, returned as it is (same object, key order and extra keys
 * kept, so a reader passes on exactly what was written). The first problem throws an InputError that
 * names the file and the field, says what was expected and shows what was found.
 */
export function checkContract<S extends z.ZodType>(schema: S, json: unknown, file: string, options: CheckOptions = {}): z.output<S> {
  const r = schema.safeParse(json, { error: wording });
  if (r.success) return json as z.output<S>;
  const issue = r.error.issues[0]!;
  const more = r.error.issues.length > 1 ? ` (and ${r.error.issues.length - 1} more problems)` : '';
  const found = issue.code === 'unrecognized_keys' ? undefined : valueAt(json, issue.path);
  const shown = issue.code === 'unrecognized_keys' ? '' : `, found ${found === undefined ? 'nothing' : (JSON.stringify(found) ?? String(found)).slice(0, 80)}`;
  throw new InputError(file, `${issue.message}${shown}${more}`, { field: jsonPath(issue.path, options.at ?? '') });
}

/** JSON text parsed, or an InputError naming the file. */
export function parseJsonText(text: string, file: string): unknown {
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(file, `expected JSON, found a parse error (${(e as Error).message})`);
  }
}
