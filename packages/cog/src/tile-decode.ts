/**
 * Reading our tiles back faster with the `geotiff` package: its DEFLATE decoder (pako, JavaScript) and
 * floating-point predictor take most of a small COG's read; Node's zlib and the predictor's inverse
 * over whole rows give the same bytes.
 */
import { inflateSync } from 'node:zlib';
import { addDecoder, BaseDecoder } from 'geotiff';

/**
 * Undoes `floatPredict` (tile-encode.ts) in place and returns the little-endian Float32 bytes: per row
 * of `samplesPerRow` samples, the byte-wise horizontal differences with a stride of `stride` bytes are
 * summed, then the four byte planes (most significant first) are put back into samples.
 */
export function floatUnpredict(bytes: Uint8Array, rows: number, samplesPerRow: number, stride: number): Uint8Array {
  const rowBytes = samplesPerRow * 4;
  if (bytes.length !== rows * rowBytes) throw new Error(`expected ${rows} rows of ${rowBytes} bytes, found ${bytes.length} bytes`);
  const out = new Uint8Array(bytes.length);
  for (let r = 0; r < rows; r++) {
    const o = r * rowBytes;
    for (let i = o + stride; i < o + rowBytes; i++) bytes[i] = bytes[i]! + bytes[i - stride]!;
    const p1 = o + samplesPerRow, p2 = p1 + samplesPerRow, p3 = p2 + samplesPerRow;
    for (let i = 0; i < samplesPerRow; i++) {
      const s = o + i * 4;
      out[s + 3] = bytes[o + i]!;
      out[s + 2] = bytes[p1 + i]!;
      out[s + 1] = bytes[p2 + i]!;
      out[s] = bytes[p3 + i]!;
    }
  }
  return out;
}

class NodeDeflateDecoder extends BaseDecoder {
  override decodeBlock(buffer: ArrayBufferLike): ArrayBuffer {
    const b = inflateSync(new Uint8Array(buffer));
    return (b.byteOffset === 0 && b.length === b.buffer.byteLength ? b.buffer : b.buffer.slice(b.byteOffset, b.byteOffset + b.length)) as ArrayBuffer;
  }

  override async decode(buffer: ArrayBufferLike): Promise<ArrayBufferLike> {
    const { tileWidth, tileHeight, predictor, bitsPerSample, planarConfiguration } = this.parameters;
    const bits = typeof bitsPerSample === 'number' ? [bitsPerSample] : Array.from(bitsPerSample);
    // pixel-interleaved Float32 with the floating-point predictor (what encodeCog writes); the rest as geotiff does it
    if (predictor !== 3 || planarConfiguration !== 1 || !bits.every((b) => b === 32)) return super.decode(buffer);
    const bytes = new Uint8Array(this.decodeBlock(buffer));
    // a whole tile (a strip file's last strip is shorter: geotiff's way)
    if (bytes.length !== tileHeight * tileWidth * bits.length * 4) return super.decode(buffer);
    return floatUnpredict(bytes, tileHeight, tileWidth * bits.length, bits.length).buffer;
  }
}

/** Makes `geotiff` decode DEFLATE tiles (TIFF compression 8 and 32946) with `NodeDeflateDecoder`, for this process. */
export function useNodeInflate(): void {
  addDecoder([8, 32946], () => Promise.resolve(NodeDeflateDecoder));
}
