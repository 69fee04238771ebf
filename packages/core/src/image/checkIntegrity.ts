/**
 * File-level integrity checks run before an image is decoded. The decoder (libvips through sharp)
 * does not catch every damaged file: it ignores PNG chunk checksums, and a TIFF whose strips or tiles
 * lie beyond the end of the file (a file cut short by a failed copy) decodes with the missing part
 * filled with zeros. Both are checked here from the file bytes:
 *
 * - PNG (ISO/IEC 15948, W3C PNG 2nd edition §5.3): every chunk's CRC-32 (over type and data) must
 *   match the stored one, and the chunk sequence must reach IEND within the file.
 * - TIFF (TIFF 6.0 §2, §15; BigTIFF): every IFD and every tag value stored outside its entry must lie
 *   inside the file, and for every page each strip (StripOffsets + StripByteCounts) or tile
 *   (TileOffsets + TileByteCounts) must end within the file.
 * JPEG is left to the decoder (`failOn: 'truncated'` catches a cut JPEG).
 *
 * Files are read piecewise through a file handle (1 MiB at a time), never as a whole.
 */
import { open, type FileHandle } from 'node:fs/promises';
import { crc32 } from 'node:zlib';
import { inputError } from '../util/errors.js';

const PNG_SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a] as const;
const PIECE = 1 << 20;
/** Most IFDs (pages) followed before the file is called damaged (a loop or garbage chain). */
const MAX_IFDS = 100_000;

function damaged(path: string, what: string): Error {
  return inputError(`${path} is damaged: ${what}; copy or export the image again`);
}

async function readExact(fh: FileHandle, buf: Buffer, length: number, position: number): Promise<number> {
  let got = 0;
  while (got < length) {
    const { bytesRead } = await fh.read(buf, got, length - got, position + got);
    if (bytesRead === 0) break;
    got += bytesRead;
  }
  return got;
}

/**
 * Sequential reads through a 1 MiB window: PNG files hold many small chunks (libvips writes 8 KiB IDAT
 * chunks), and one read per chunk header would cost more than the checksums.
 */
class WindowReader {
  private readonly buf = Buffer.alloc(PIECE);
  private start = 0;
  private length = 0;
  constructor(private readonly fh: FileHandle) {}
  /** Bytes [pos, pos + n) of the file, n ≤ 1 MiB; shorter at the end of the file. */
  async at(pos: number, n: number): Promise<Buffer> {
    if (pos < this.start || pos + n > this.start + this.length) {
      this.start = pos;
      this.length = await readExact(this.fh, this.buf, PIECE, pos);
    }
    return this.buf.subarray(pos - this.start, Math.min(pos - this.start + n, this.length));
  }
}

/** Walk the PNG chunks, verifying each CRC-32; stops at IEND. */
async function checkPng(fh: FileHandle, path: string, size: number): Promise<void> {
  const r = new WindowReader(fh);
  const sig = await r.at(0, 8);
  if (sig.length < 8 || PNG_SIGNATURE.some((b, i) => sig[i] !== b)) throw damaged(path, 'bad PNG signature');
  let pos = 8;
  let first = true;
  for (;;) {
    if (pos + 12 > size) throw damaged(path, `the file ends at byte ${size} before the PNG end chunk (truncated)`);
    const head = await r.at(pos, 8);
    const length = head.readUInt32BE(0);
    const type = head.toString('latin1', 4, 8);
    if (!/^[A-Za-z]{4}$/.test(type)) throw damaged(path, `unreadable PNG chunk at byte ${pos}`);
    if (first && type !== 'IHDR') throw damaged(path, 'the PNG does not start with its header chunk');
    first = false;
    if (length > 0x7fffffff || pos + 12 + length > size) throw damaged(path, `PNG chunk ${type} at byte ${pos} runs past the end of the file (truncated)`);
    let crc = crc32(head.subarray(4, 8));
    let left = length;
    let at = pos + 8;
    while (left > 0) {
      const piece = await r.at(at, Math.min(left, PIECE));
      if (piece.length === 0) throw damaged(path, `PNG chunk ${type} at byte ${pos} runs past the end of the file (truncated)`);
      crc = crc32(piece, crc);
      left -= piece.length;
      at += piece.length;
    }
    const tail = await r.at(at, 4);
    if (tail.length < 4) throw damaged(path, `PNG chunk ${type} at byte ${pos} runs past the end of the file (truncated)`);
    if (tail.readUInt32BE(0) !== crc >>> 0) throw damaged(path, `checksum of PNG chunk ${type} at byte ${pos} does not match`);
    pos = at + 4;
    if (type === 'IEND') return;
  }
}

interface TiffReader {
  readonly big: boolean;
  readonly le: boolean;
  u16(b: Buffer, o: number): number;
  u32(b: Buffer, o: number): number;
  u64(b: Buffer, o: number): number;
}

const TYPE_SIZE: Readonly<Record<number, number>> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4, 16: 8, 17: 8, 18: 8 };

/** Read the integer values of one IFD entry (SHORT, LONG, LONG8 or IFD types). */
async function entryValues(fh: FileHandle, r: TiffReader, entry: Buffer, size: number, path: string, tag: number): Promise<number[]> {
  const type = r.u16(entry, 2);
  const count = r.big ? r.u64(entry, 4) : r.u32(entry, 4);
  const unit = TYPE_SIZE[type] ?? 0;
  if (unit === 0 || ![3, 4, 13, 16, 18].includes(type)) throw damaged(path, `TIFF tag ${tag} has the unexpected type ${type}`);
  const bytes = count * unit;
  const inline = r.big ? 8 : 4;
  const valueAt = r.big ? 12 : 8;
  let buf: Buffer;
  if (bytes <= inline) buf = entry.subarray(valueAt, valueAt + inline);
  else {
    const off = r.big ? r.u64(entry, 12) : r.u32(entry, 8);
    if (off + bytes > size) throw damaged(path, `TIFF tag ${tag} points past the end of the file (truncated)`);
    if (bytes > 64 * PIECE) throw damaged(path, `TIFF tag ${tag} holds an implausible ${count} values`);
    buf = Buffer.alloc(bytes);
    await readExact(fh, buf, bytes, off);
  }
  const out = new Array<number>(count);
  for (let i = 0; i < count; i++) out[i] = unit === 2 ? r.u16(buf, 2 * i) : unit === 4 ? r.u32(buf, 4 * i) : r.u64(buf, 8 * i);
  return out;
}

/** Follow the IFD chain; every strip or tile must end inside the file. */
async function checkTiff(fh: FileHandle, path: string, size: number): Promise<void> {
  const head = Buffer.alloc(16);
  if ((await readExact(fh, head, 16, 0)) < 8) throw damaged(path, 'TIFF header cut short');
  const le = head[0] === 0x49;
  const u16 = (b: Buffer, o: number) => (le ? b.readUInt16LE(o) : b.readUInt16BE(o));
  const u32 = (b: Buffer, o: number) => (le ? b.readUInt32LE(o) : b.readUInt32BE(o));
  const u64 = (b: Buffer, o: number) => Number(le ? b.readBigUInt64LE(o) : b.readBigUInt64BE(o));
  const magic = u16(head, 2);
  if (magic !== 42 && magic !== 43) throw damaged(path, 'bad TIFF header');
  const big = magic === 43;
  const r: TiffReader = { big, le, u16, u32, u64 };
  let ifd = big ? u64(head, 8) : u32(head, 4);
  const entrySize = big ? 20 : 12;
  const seen = new Set<number>();
  let page = 0;
  while (ifd !== 0) {
    if (seen.has(ifd) || seen.size >= MAX_IFDS) throw damaged(path, 'the TIFF page chain loops');
    seen.add(ifd);
    const countBytes = big ? 8 : 2;
    if (ifd + countBytes > size) throw damaged(path, `TIFF page ${page} directory lies past the end of the file (truncated)`);
    const cb = Buffer.alloc(8);
    await readExact(fh, cb, countBytes, ifd);
    const n = big ? u64(cb, 0) : u16(cb, 0);
    const tableBytes = n * entrySize + (big ? 8 : 4);
    if (ifd + countBytes + tableBytes > size) throw damaged(path, `TIFF page ${page} directory runs past the end of the file (truncated)`);
    const table = Buffer.alloc(tableBytes);
    await readExact(fh, table, tableBytes, ifd + countBytes);
    const found: Record<number, number[]> = {};
    for (let k = 0; k < n; k++) {
      const e = table.subarray(k * entrySize, (k + 1) * entrySize);
      const tag = u16(e, 0);
      if (tag === 273 || tag === 279 || tag === 324 || tag === 325) found[tag] = await entryValues(fh, r, e, size, path, tag);
      else {
        // any other value stored outside the entry must lie inside the file too (unknown types are skipped)
        const unit = TYPE_SIZE[u16(e, 2)] ?? 0;
        const bytes = unit * (big ? u64(e, 4) : u32(e, 4));
        const off = big ? u64(e, 12) : u32(e, 8);
        if (bytes > (big ? 8 : 4) && off + bytes > size) throw damaged(path, `TIFF page ${page} tag ${tag} points past the end of the file (truncated)`);
      }
    }
    for (const [offTag, countTag, what] of [[273, 279, 'strip'], [324, 325, 'tile']] as const) {
      const offs = found[offTag];
      const counts = found[countTag];
      if (!offs || !counts) continue;
      if (offs.length !== counts.length) throw damaged(path, `TIFF page ${page} has ${offs.length} ${what} offsets but ${counts.length} ${what} sizes`);
      for (let i = 0; i < offs.length; i++) {
        if (offs[i]! + counts[i]! > size) {
          throw damaged(path, `TIFF page ${page} ${what} ${i} ends at byte ${offs[i]! + counts[i]!} but the file has ${size} bytes (truncated)`);
        }
      }
    }
    const nextAt = n * entrySize;
    ifd = big ? u64(table, nextAt) : u32(table, nextAt);
    page++;
  }
}

/**
 * Check that a PNG or TIFF file is complete and its checksums match (see the module comment).
 *
 * @param path the image file.
 * @param size its size in bytes.
 * @throws RhofieldError (input) naming the file: "is damaged (…); copy or export the image again".
 */
export async function checkImageIntegrity(path: string, size: number): Promise<void> {
  const fh = await open(path, 'r');
  try {
    const sig = Buffer.alloc(4);
    await readExact(fh, sig, 4, 0);
    if (sig[0] === 0x89 && sig[1] === 0x50 && sig[2] === 0x4e && sig[3] === 0x47) await checkPng(fh, path, size);
    else if ((sig[0] === 0x49 && sig[1] === 0x49) || (sig[0] === 0x4d && sig[1] === 0x4d)) await checkTiff(fh, path, size);
  } finally {
    await fh.close();
  }
}
