/**
 * A small synchronous PNG encoder for 8-bit RGB or RGBA rasters (W3C/ISO 15948, "Portable Network
 * Graphics (PNG) Specification", 2nd ed., 2003): signature, IHDR, one zlib IDAT (filter 0 per row),
 * IEND, CRC-32 per chunk. Used to embed field rasters in figure SVGs as data URIs without an
 * asynchronous round trip through sharp.
 */
import { deflateSync } from 'node:zlib';

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

function crc32(buf: Uint8Array, start: number, end: number): number {
  let c = 0xffffffff;
  for (let i = start; i < end; i++) c = CRC_TABLE[(c ^ buf[i]!) & 0xff]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

function chunk(type: string, body: Uint8Array): Buffer {
  const out = Buffer.alloc(12 + body.length);
  out.writeUInt32BE(body.length, 0);
  out.write(type, 4, 'ascii');
  out.set(body, 8);
  out.writeUInt32BE(crc32(out, 4, 8 + body.length), 8 + body.length);
  return out;
}

/**
 * Encode an 8-bit raster as PNG bytes.
 * @param pixels interleaved samples, row-major, `channels` per pixel (3 = RGB, 4 = RGBA).
 * @param width columns; @param height rows.
 * @param level zlib compression level 0–9 (default 6); the image is the same at every level.
 */
export function encodePng(pixels: Uint8Array, width: number, height: number, channels: 3 | 4, level = 6): Buffer {
  const stride = width * channels;
  const raw = Buffer.alloc((stride + 1) * height);
  for (let y = 0; y < height; y++) {
    raw[y * (stride + 1)] = 0;
    raw.set(pixels.subarray(y * stride, (y + 1) * stride), y * (stride + 1) + 1);
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8;
  ihdr[9] = channels === 4 ? 6 : 2;
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', deflateSync(raw, { level })),
    chunk('IEND', new Uint8Array(0)),
  ]);
}

/** PNG bytes as a `data:image/png;base64,…` URI. */
export function pngDataUri(png: Uint8Array): string {
  return 'data:image/png;base64,' + Buffer.from(png).toString('base64');
}
