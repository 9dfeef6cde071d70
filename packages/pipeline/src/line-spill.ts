import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { rm } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import type { RadarLine } from '@lamina/radar-data';

/**
 * Pass 1's processed line kept for pass 2 (which then only runs the steps that need the velocity), one
 * file per line in the stage folder, removed as pass 2 reads it, so memory holds one line at a time.
 * Layout (the machine's byte order: the same process writes and reads it): uint32 header length, the
 * JSON header `{ id, nSamples, nTraces, dtNs, timeZeroNs, before }` padded with spaces so that the arrays
 * start at a multiple of 8 bytes, x and y (Float64, per trace), data (Float32, trace-major), then the line
 * just before background removal (Float32) when `before`.
 */
const folder = (stageDir: string) => join(stageDir, 'pass1-lines');

export function lineSpillPath(stageDir: string, line: number): string {
  return join(folder(stageDir), `${line}.bin`);
}

export async function writeLineSpill(path: string, line: RadarLine, before: RadarLine | undefined): Promise<void> {
  const head = { id: line.id, nSamples: line.nSamples, nTraces: line.nTraces, dtNs: line.dtNs, timeZeroNs: line.timeZeroNs, before: before !== undefined };
  let json = JSON.stringify(head);
  json += ' '.repeat((8 - ((4 + Buffer.byteLength(json)) % 8)) % 8);
  const len = Buffer.alloc(4);
  len.writeUInt32LE(Buffer.byteLength(json));
  const parts: Uint8Array[] = [len, Buffer.from(json), bytes(line.x), bytes(line.y), bytes(line.data)];
  if (before) parts.push(bytes(before.data));
  // synchronous, on a line worker with nothing else to do meanwhile (as the radargram, outputs.ts)
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, Buffer.concat(parts));
}

/** The line and its copy before background removal (undefined when none was kept); the file is removed. */
export async function readLineSpill(path: string): Promise<{ line: RadarLine; before: RadarLine | undefined }> {
  const buf = readFileSync(path);
  rmSync(path, { force: true });
  const n = buf.readUInt32LE(0);
  const head = JSON.parse(buf.subarray(4, 4 + n).toString('utf8')) as { id: string; nSamples: number; nTraces: number; dtNs: number; timeZeroNs: number; before: boolean };
  let o = 4 + n;
  // views on the file's buffer where aligned (the header padding sees to it when the buffer is)
  const take = <T>(Kind: { new (b: ArrayBuffer, offset: number, length: number): T; new (b: ArrayBuffer): T }, count: number, size: number): T => {
    const at = buf.byteOffset + o;
    o += count * size;
    return at % size === 0 ? new Kind(buf.buffer, at, count) : new Kind(buf.buffer.slice(at, at + count * size));
  };
  // positions copied: they go back to the main thread, and a view would take the whole buffer along
  const x = take(Float64Array, head.nTraces, 8).slice();
  const y = take(Float64Array, head.nTraces, 8).slice();
  const nd = head.nTraces * head.nSamples;
  const data = take(Float32Array, nd, 4);
  const line: RadarLine = { id: head.id, nSamples: head.nSamples, nTraces: head.nTraces, dtNs: head.dtNs, timeZeroNs: head.timeZeroNs, x, y, data };
  const before = head.before ? { ...line, data: take(Float32Array, nd, 4) } : undefined;
  return { line, before };
}

/** Removes what is left of the spill (after a run that kept lines). */
export async function removeLineSpills(stageDir: string): Promise<void> {
  await rm(folder(stageDir), { recursive: true, force: true });
}

function bytes(a: Float32Array | Float64Array): Uint8Array {
  return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
}
