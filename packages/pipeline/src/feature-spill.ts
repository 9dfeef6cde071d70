import { closeSync, mkdtempSync, openSync, readSync, rmSync, writeSync } from 'node:fs';
import { join } from 'node:path';

/**
 * GeoJSON features held on disk while a site is screened band by band: each feature's JSON goes to a
 * file as it comes, and only its sort keys and place in the file stay in memory (24 bytes a feature).
 * `sorted()` reads them back one at a time in the order of the keys.
 */
export class FeatureSpill<F> {
  private readonly dir: string;
  private readonly fd: number;
  private readonly keys: number[] = [];
  private readonly where: number[] = [];
  private bytes = 0;

  constructor(parent: string) {
    this.dir = mkdtempSync(join(parent, 'lamina-features-'));
    this.fd = openSync(join(this.dir, 'features.ndjson'), 'w+');
  }

  get length(): number {
    return this.where.length / 2;
  }

  /** Keeps `feature` with two sort keys (ascending; the first decides, then the second). */
  add(feature: F, key1: number, key2: number): void {
    const b = Buffer.from(JSON.stringify(feature));
    writeSync(this.fd, b, 0, b.length, this.bytes);
    this.where.push(this.bytes, b.length);
    this.keys.push(key1, key2);
    this.bytes += b.length;
  }

  /** The features in key order (stable: equal keys keep the order they were added in). */
  *sorted(): Generator<F> {
    const k = this.keys;
    const order = Array.from({ length: this.length }, (_, i) => i).sort((p, q) => k[2 * p]! - k[2 * q]! || k[2 * p + 1]! - k[2 * q + 1]! || p - q);
    for (const i of order) {
      const b = Buffer.alloc(this.where[2 * i + 1]!);
      readSync(this.fd, b, 0, b.length, this.where[2 * i]!);
      yield JSON.parse(b.toString('utf8')) as F;
    }
  }

  remove(): void {
    try {
      closeSync(this.fd);
    } catch {
      // already closed
    }
    rmSync(this.dir, { recursive: true, force: true });
  }
}
