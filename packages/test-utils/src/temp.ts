import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** A fresh folder under the system's temp folder (the caller removes it). */
export function tempDir(prefix = 'lamina-test-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}
