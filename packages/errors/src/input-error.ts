/**
 * An error in something the user gave us: a file, a field in it, or a byte offset.
 * The CLI prints `message` as one line and exits non-zero; nothing is written.
 *
 * Message shape: `<file>: <where>: <what was expected>, <what was found>`
 * e.g. `lines/l01.sgy: byte 3225 (sample format code): expected 1, 2, 3, 5 or 8, found 4`.
 */
export interface InputErrorWhere {
  /** JSON path (`lines[2].file`), header field name, or CSV column. */
  field?: string;
  /** Byte offset in a binary file (0-based; the message shows the 1-based SEG-Y byte number if `segyByte` is set). */
  offset?: number;
  /** 1-based line number in a text file. */
  line?: number;
}

export class InputError extends Error {
  readonly file: string;
  readonly field: string | undefined;
  readonly offset: number | undefined;
  readonly line: number | undefined;
  readonly detail: string;

  constructor(file: string, detail: string, where: InputErrorWhere = {}) {
    // one line whatever the detail quotes (a JSON parser's snippet of a file can hold line breaks)
    detail = detail.replace(/\s*[\r\n]+\s*/g, ' ');
    const parts = [file];
    if (where.field !== undefined) parts.push(where.field);
    if (where.offset !== undefined) parts.push(`byte offset ${where.offset}`);
    if (where.line !== undefined) parts.push(`line ${where.line}`);
    super(`${parts.join(': ')}: ${detail}`);
    this.name = 'InputError';
    this.file = file;
    this.field = where.field;
    this.offset = where.offset;
    this.line = where.line;
    this.detail = detail;
  }
}

export function isInputError(e: unknown): e is InputError {
  return e instanceof Error && e.name === 'InputError';
}

/** One line for the terminal: input errors as they are, anything else as `internal error: ...`. */
export function formatError(e: unknown): string {
  if (isInputError(e)) return `error: ${e.message}`;
  if (e instanceof Error) return `internal error: ${e.message}`;
  return `internal error: ${String(e)}`;
}
