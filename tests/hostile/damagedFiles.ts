/**
 * Damaged image files for the hostile-input tests, made from valid files of our own: a striped TIFF
 * whose directory comes first (as many camera and acquisition programs write them) cut to a third,
 * and PNGs with a flipped byte in a chunk checksum.
 */
import { deflateSync, crc32 } from 'node:zlib';

/** An 8-bit grey TIFF, directory first, `rowsPerStrip` rows per uncompressed strip. */
export function tiffDirectoryFirst(width: number, height: number, samples: ArrayLike<number>, rowsPerStrip = 16): Buffer {
  const strips = Math.ceil(height / rowsPerStrip);
  const nTags = 10;
  const ifd = 8;
  const ifdBytes = 2 + nTags * 12 + 4;
  const offsArr = ifd + ifdBytes;
  const countsArr = offsArr + 4 * strips;
  const data0 = countsArr + 4 * strips;
  const b = Buffer.alloc(data0 + width * height);
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  b.writeUInt32LE(ifd, 4);
  b.writeUInt16LE(nTags, ifd);
  const tags: [number, number, number, number][] = [
    [256, 4, 1, width],
    [257, 4, 1, height],
    [258, 3, 1, 8],
    [259, 3, 1, 1],
    [262, 3, 1, 1],
    [273, 4, strips, strips === 1 ? data0 : offsArr],
    [277, 3, 1, 1],
    [278, 4, 1, rowsPerStrip],
    [279, 4, strips, strips === 1 ? width * height : countsArr],
    [284, 3, 1, 1],
  ];
  tags.forEach(([tag, type, count, value], k) => {
    const e = ifd + 2 + 12 * k;
    b.writeUInt16LE(tag, e);
    b.writeUInt16LE(type, e + 2);
    b.writeUInt32LE(count, e + 4);
    if (type === 3) b.writeUInt16LE(value, e + 8);
    else b.writeUInt32LE(value, e + 8);
  });
  b.writeUInt32LE(0, ifd + 2 + nTags * 12);
  for (let s = 0; s < strips; s++) {
    const rows = Math.min(rowsPerStrip, height - s * rowsPerStrip);
    b.writeUInt32LE(data0 + s * rowsPerStrip * width, offsArr + 4 * s);
    b.writeUInt32LE(rows * width, countsArr + 4 * s);
  }
  for (let i = 0; i < width * height; i++) b[data0 + i] = samples[i]!;
  return b;
}

function chunk(type: string, data: Uint8Array): Buffer {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type, 'latin1'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td) >>> 0);
  return Buffer.concat([len, td, crc]);
}

/** An 8-bit grey PNG (one IDAT). */
export function png8(width: number, height: number, samples: ArrayLike<number>): Buffer {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8;
  ihdr[9] = 0;
  const raw = Buffer.alloc(height * (width + 1));
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) raw[y * (width + 1) + 1 + x] = samples[x + y * width]!;
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(raw)), chunk('IEND', new Uint8Array(0))]);
}

/** Byte offset of the CRC of the first chunk of `type` in a PNG. */
export function pngCrcOffset(png: Buffer, type: string): number {
  let off = 8;
  while (off + 8 <= png.length) {
    const len = png.readUInt32BE(off);
    if (png.toString('latin1', off + 4, off + 8) === type) return off + 8 + len;
    off += 12 + len;
  }
  throw new Error(`no ${type} chunk`);
}

/** A copy of `png` with one bit of the checksum of chunk `type` flipped. */
export function pngBadCrc(png: Buffer, type: 'IHDR' | 'IDAT'): Buffer {
  const b = Buffer.from(png);
  b[pngCrcOffset(b, type)]! ^= 0x01;
  return b;
}
