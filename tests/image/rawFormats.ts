/**
 * Minimal PNG and TIFF writers for the loader tests, written from the format specifications
 * (PNG: W3C/ISO 15948 "Portable Network Graphics Specification", 2003; TIFF: Adobe "TIFF Revision
 * 6.0", 1992) and independent of sharp/libvips, so the loader is checked against files it did not
 * write itself.
 */
import { writeFileSync } from 'node:fs';
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

function crc32(buf: Uint8Array): number {
  let c = 0xffffffff;
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xff]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

function chunk(type: string, body: Uint8Array): Buffer {
  const out = Buffer.alloc(12 + body.length);
  out.writeUInt32BE(body.length, 0);
  out.write(type, 4, 'ascii');
  Buffer.from(body).copy(out, 8);
  out.writeUInt32BE(crc32(out.subarray(4, 8 + body.length)), 8 + body.length);
  return out;
}

/**
 * Write a PNG. `colorType` 0 = grey (1 sample), 2 = RGB (3 samples); samples row-major, interleaved.
 */
export function writePng(path: string, width: number, height: number, bitDepth: 8 | 16, colorType: 0 | 2, samples: ArrayLike<number>): Buffer {
  const spp = colorType === 2 ? 3 : 1;
  const bps = bitDepth / 8;
  const rowBytes = 1 + width * spp * bps;
  const raw = Buffer.alloc(rowBytes * height);
  for (let y = 0; y < height; y++) {
    raw[y * rowBytes] = 0; // filter: none
    for (let i = 0; i < width * spp; i++) {
      const v = samples[y * width * spp + i]!;
      const o = y * rowBytes + 1 + i * bps;
      if (bps === 2) raw.writeUInt16BE(v, o);
      else raw[o] = v;
    }
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = bitDepth;
  ihdr[9] = colorType;
  const file = Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', deflateSync(raw)),
    chunk('IEND', new Uint8Array(0)),
  ]);
  writeFileSync(path, file);
  return file;
}

/**
 * Write an uncompressed little-endian grey TIFF with one page per entry of `pages`.
 * `kind`: 'u16' (BitsPerSample 16, SampleFormat 1) or 'f32' (BitsPerSample 32, SampleFormat 3).
 */
export function writeTiff(path: string, width: number, height: number, pages: ArrayLike<number>[], kind: 'u16' | 'f32'): void {
  const bytesPer = kind === 'u16' ? 2 : 4;
  const pageBytes = width * height * bytesPer;
  const nTags = 10;
  const ifdBytes = 2 + nTags * 12 + 4;
  const total = 8 + pages.length * (pageBytes + ifdBytes + 2);
  const b = Buffer.alloc(total);
  b.write('II', 0, 'ascii');
  b.writeUInt16LE(42, 2);
  let off = 8;
  let prevNextPtr = 4;
  for (const page of pages) {
    const dataOff = off;
    for (let i = 0; i < width * height; i++) {
      if (kind === 'u16') b.writeUInt16LE(page[i]!, dataOff + 2 * i);
      else b.writeFloatLE(page[i]!, dataOff + 4 * i);
    }
    off += pageBytes;
    if (off % 2) off++;
    b.writeUInt32LE(off, prevNextPtr);
    const ifd = off;
    b.writeUInt16LE(nTags, ifd);
    const tags: [number, number, number][] = [
      [256, 4, width],
      [257, 4, height],
      [258, 3, bytesPer * 8],
      [259, 3, 1],
      [262, 3, 1],
      [273, 4, dataOff],
      [277, 3, 1],
      [278, 4, height],
      [279, 4, pageBytes],
      [339, 3, kind === 'u16' ? 1 : 3],
    ];
    tags.forEach(([tag, type, value], k) => {
      const e = ifd + 2 + 12 * k;
      b.writeUInt16LE(tag, e);
      b.writeUInt16LE(type, e + 2);
      b.writeUInt32LE(1, e + 4);
      if (type === 3) b.writeUInt16LE(value, e + 8);
      else b.writeUInt32LE(value, e + 8);
    });
    prevNextPtr = ifd + 2 + nTags * 12;
    b.writeUInt32LE(0, prevNextPtr);
    off = prevNextPtr + 4;
  }
  writeFileSync(path, b.subarray(0, off));
}
