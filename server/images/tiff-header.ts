/**
 * A small, bounded TIFF / BigTIFF directory walker used for the checks made BEFORE any pixel is decoded:
 * magic bytes, page count, declared sizes, sample layout, compression, and where the image data lies.
 * It never allocates more than a few kilobytes per page, whatever the header claims.
 *
 * Format: TIFF 6.0 specification (Adobe, 1992), sections 2 (structure) and 8 (tags); BigTIFF layout as
 * documented by the libtiff project (version 43, 8-byte offsets, 20-byte directory entries).
 */
import fsp from 'node:fs/promises';

import { ImageInputError as TiffHeaderError } from './errors.js';

/** Random-access reader over a buffer or a file, with bounded reads. */
export interface ByteReader {
  size: number;
  read(offset: number, length: number): Promise<Uint8Array>;
  close(): Promise<void>;
}

export function bufferReader(buf: Uint8Array): ByteReader {
  return {
    size: buf.byteLength,
    async read(offset, length) {
      return buf.subarray(offset, Math.min(buf.byteLength, offset + length));
    },
    async close() {},
  };
}

/** Small reads are served from one 64 KiB read-ahead block: walking 10,000 directories costs ~100 reads, not 30,000. */
const READ_AHEAD = 64 * 1024;

export async function fileReader(path: string): Promise<ByteReader> {
  const fh = await fsp.open(path, 'r');
  const { size } = await fh.stat();
  let blockAt = -1;
  let block = new Uint8Array(0);
  return {
    size,
    async read(offset, length) {
      const n = Math.max(0, Math.min(length, size - offset));
      if (n === 0) return new Uint8Array(0);
      if (blockAt >= 0 && offset >= blockAt && offset + n <= blockAt + block.length) return block.subarray(offset - blockAt, offset - blockAt + n);
      if (n > READ_AHEAD / 2) {
        const out = new Uint8Array(n);
        await fh.read(out, 0, n, offset);
        return out;
      }
      // a fresh block each time (never overwritten), so earlier subarrays stay valid
      const next = new Uint8Array(Math.min(READ_AHEAD, size - offset));
      await fh.read(next, 0, next.length, offset);
      block = next;
      blockAt = offset;
      return block.subarray(0, n);
    },
    close: () => fh.close(),
  };
}

const TYPE_SIZE: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4, 16: 8, 17: 8, 18: 8 };

interface RawEntry {
  type: number;
  count: number;
  /** inline bytes when they fit in the value field, else null */
  inline: Uint8Array | null;
  offset: number;
}

export interface PageHeader {
  index: number;
  width: number;
  height: number;
  samplesPerPixel: number;
  bitsPerSample: number[];
  /** 1 uint, 2 int, 3 float (TIFF tag 339) */
  sampleFormat: number[];
  compression: number;
  predictor: number;
  planar: 1 | 2;
  photometric: number;
  newSubfileType: number;
  tiled: boolean;
  tileWidth: number;
  tileHeight: number;
  rowsPerStrip: number;
  /** raw entries kept so data extents can be checked on demand */
  entries: Map<number, RawEntry>;
}

export interface TiffHeader {
  littleEndian: boolean;
  bigTiff: boolean;
  fileSize: number;
  pages: PageHeader[];
  /** ImageDescription of the first page (OME-XML lives here), null when absent */
  description: string | null;
  /** the last byte + 1 that the header, the directories and their out-of-line values refer to */
  structureEnd: number;
}

/**
 * Most pages (image directories) in one file. 10,000 covers, e.g., 4 channels × 50 z slices × 50 time
 * points; every directory is walked and kept (a few hundred bytes each) before anything is decoded, so
 * the limit keeps a small file of empty pages from costing seconds and megabytes.
 */
export const MAX_PAGES = 10_000;
/** Most samples per pixel of one page (a 200-byte header must not make us allocate 2^32 entries). */
export const MAX_SAMPLES_PER_PIXEL = 256;
/** Most image planes (pages × samples per pixel) in one file: each becomes a channel entry. */
export const MAX_PLANES = 10_000;
const MAX_ENTRIES = 4096;
/** The tags the walker reads; other entries only count for the file's extent and are not kept. */
const KEPT_TAGS = new Set([254, 256, 257, 258, 259, 262, 270, 273, 277, 278, 279, 284, 317, 322, 323, 324, 325, 339]);
const MAX_DESCRIPTION = 64 * 1024 * 1024;

class Walker {
  constructor(private r: ByteReader, private le: boolean, private big: boolean) {}

  private view(b: Uint8Array) {
    return new DataView(b.buffer, b.byteOffset, b.byteLength);
  }
  // plain byte arithmetic: a DataView per field read made walking 10,000 directories garbage-bound
  u16(b: Uint8Array, o: number) {
    if (o + 2 > b.length) throw new RangeError(`offset ${o} is outside the buffer`);
    return this.le ? b[o] | (b[o + 1] << 8) : (b[o] << 8) | b[o + 1];
  }
  u32(b: Uint8Array, o: number) {
    if (o + 4 > b.length) throw new RangeError(`offset ${o} is outside the buffer`);
    return this.le ? (b[o] | (b[o + 1] << 8) | (b[o + 2] << 16) | (b[o + 3] << 24)) >>> 0 : ((b[o] << 24) | (b[o + 1] << 16) | (b[o + 2] << 8) | b[o + 3]) >>> 0;
  }
  u64(b: Uint8Array, o: number) {
    const v = this.view(b).getBigUint64(o, this.le);
    if (v > BigInt(Number.MAX_SAFE_INTEGER)) return Number.MAX_SAFE_INTEGER;
    return Number(v);
  }

  async readExact(offset: number, length: number, what: string) {
    if (offset + length > this.r.size) {
      throw new TiffHeaderError(`the file is truncated or damaged: its ${what} lies at byte ${offset}–${offset + length}, but the file has only ${this.r.size} bytes`);
    }
    return this.r.read(offset, length);
  }

  /** furthest byte + 1 referred to by what was read so far (directories and out-of-line values) */
  extent = 0;
  /** bytes of directory entries read so far */
  directoryBytes = 0;

  async readIfd(offset: number): Promise<{ entries: Map<number, RawEntry>; next: number }> {
    const cntSize = this.big ? 8 : 2;
    const entSize = this.big ? 20 : 12;
    const cb = await this.readExact(offset, cntSize, 'image directory');
    const count = this.big ? this.u64(cb, 0) : this.u16(cb, 0);
    if (count === 0 || count > MAX_ENTRIES) throw new TiffHeaderError(`the file is damaged: an image directory claims ${count} entries`);
    // directories of a genuine file do not overlap, so together they fit in the file
    this.directoryBytes += count * entSize;
    if (this.directoryBytes > this.r.size) {
      throw new TiffHeaderError(`the file is damaged: its image directories claim ${this.directoryBytes} bytes of entries, more than the file's ${this.r.size} bytes`);
    }
    const body = await this.readExact(offset + cntSize, count * entSize + (this.big ? 8 : 4), 'image directory');
    const entries = new Map<number, RawEntry>();
    const valSize = this.big ? 8 : 4;
    for (let i = 0; i < count; i++) {
      const o = i * entSize;
      const tag = this.u16(body, o);
      const type = this.u16(body, o + 2);
      const n = this.big ? this.u64(body, o + 4) : this.u32(body, o + 4);
      const vo = o + (this.big ? 12 : 8);
      const ts = TYPE_SIZE[type];
      if (!ts) continue; // unknown type: skip, as the spec asks readers to
      const bytes = ts * n;
      const inline = bytes <= valSize ? body.slice(vo, vo + bytes) : null;
      const off = inline ? 0 : this.big ? this.u64(body, vo) : this.u32(body, vo);
      if (KEPT_TAGS.has(tag)) entries.set(tag, { type, count: n, inline, offset: off });
      if (!inline) this.extent = Math.max(this.extent, off + bytes);
    }
    this.extent = Math.max(this.extent, offset + cntSize + count * entSize + (this.big ? 8 : 4));
    const no = count * entSize;
    const next = this.big ? this.u64(body, no) : this.u32(body, no);
    return { entries, next };
  }

  /** Reads up to `max` numbers of an entry (bounded). */
  async numbers(e: RawEntry | undefined, max = 1 << 22): Promise<number[]> {
    if (!e) return [];
    if (e.count > max) throw new TiffHeaderError(`the file is damaged: a directory entry claims ${e.count} values`);
    const ts = TYPE_SIZE[e.type];
    const b = e.inline ?? (await this.readExact(e.offset, ts * e.count, 'directory values'));
    const out = new Array<number>(e.count);
    const v = this.view(b);
    for (let i = 0; i < e.count; i++) {
      switch (e.type) {
        case 1: case 6: case 7: out[i] = b[i]; break;
        case 3: case 8: out[i] = v.getUint16(i * 2, this.le); break;
        case 4: case 9: case 13: out[i] = v.getUint32(i * 4, this.le); break;
        case 16: case 17: case 18: out[i] = this.u64(b, i * 8); break;
        case 11: out[i] = v.getFloat32(i * 4, this.le); break;
        case 12: out[i] = v.getFloat64(i * 8, this.le); break;
        case 5: case 10: out[i] = v.getUint32(i * 8, this.le) / (v.getUint32(i * 8 + 4, this.le) || 1); break;
        default: out[i] = 0;
      }
    }
    return out;
  }

  async ascii(e: RawEntry | undefined): Promise<string | null> {
    if (!e || e.type !== 2) return null;
    if (e.count > MAX_DESCRIPTION) throw new TiffHeaderError(`the file's description text claims ${e.count} bytes, more than the ${MAX_DESCRIPTION}-byte limit`);
    const b = e.inline ?? (await this.readExact(e.offset, e.count, 'description text'));
    let end = b.indexOf(0);
    if (end < 0) end = b.length;
    return new TextDecoder('utf-8').decode(b.subarray(0, end));
  }
}

const first = async (w: Walker, e: RawEntry | undefined, dflt: number) => (e ? ((await w.numbers(e, 16))[0] ?? dflt) : dflt);

/** Parses the header and every page directory with bounded reads. Throws TiffHeaderError for anything wrong. */
export async function readTiffHeader(r: ByteReader): Promise<TiffHeader> {
  if (r.size === 0) throw new TiffHeaderError('the file is empty (0 bytes)');
  const head = await r.read(0, 16);
  if (head.length < 8) throw new TiffHeaderError(`the file is too short to be a TIFF image (${r.size} bytes)`);
  const bo = String.fromCharCode(head[0], head[1]);
  if (bo !== 'II' && bo !== 'MM') {
    const hex = Array.from(head.subarray(0, 4), (b) => b.toString(16).padStart(2, '0')).join(' ');
    throw new TiffHeaderError(`this is not a TIFF image: it starts with bytes ${hex}, not "II" or "MM"`, 415);
  }
  const le = bo === 'II';
  const dv = new DataView(head.buffer, head.byteOffset, head.byteLength);
  const version = dv.getUint16(2, le);
  if (version !== 42 && version !== 43) throw new TiffHeaderError(`this is not a TIFF image: version number ${version}, expected 42 (TIFF) or 43 (BigTIFF)`, 415);
  const big = version === 43;
  if (big && head.length < 16) throw new TiffHeaderError(`the file is truncated: ${r.size} bytes is too short for a BigTIFF header`);
  const w = new Walker(r, le, big);
  let offset = big ? w.u64(head, 8) : w.u32(head, 4);
  const pages: PageHeader[] = [];
  const seen = new Set<number>();
  let planes = 0;
  let description: string | null = null;
  while (offset !== 0) {
    if (seen.has(offset)) throw new TiffHeaderError('the file is damaged: its image directories form a loop');
    if (pages.length >= MAX_PAGES) throw new TiffHeaderError(`the file has more than ${MAX_PAGES} pages (image directories), the most Syntopy reads from one file; export only the planes to analyse`, 413);
    seen.add(offset);
    const { entries, next } = await w.readIfd(offset);
    const get = (t: number) => entries.get(t);
    const spp = await first(w, get(277), 1);
    if (!Number.isInteger(spp) || spp < 1 || spp > MAX_SAMPLES_PER_PIXEL) {
      throw new TiffHeaderError(`page ${pages.length + 1} declares ${spp} samples per pixel; Syntopy reads 1 to ${MAX_SAMPLES_PER_PIXEL}`, spp > MAX_SAMPLES_PER_PIXEL ? 413 : 422);
    }
    planes += spp;
    if (planes > MAX_PLANES) throw new TiffHeaderError(`the file holds more than ${MAX_PLANES} image planes (pages × samples per pixel), the most Syntopy reads from one file`, 413);
    const bps = get(258) ? await w.numbers(get(258), MAX_SAMPLES_PER_PIXEL) : [1];
    const sf = get(339) ? await w.numbers(get(339), MAX_SAMPLES_PER_PIXEL) : [1];
    const tiled = entries.has(322);
    const width = await first(w, get(256), 0);
    const height = await first(w, get(257), 0);
    const page: PageHeader = {
      index: pages.length,
      width,
      height,
      samplesPerPixel: spp,
      bitsPerSample: Array.from({ length: spp }, (_, i) => bps[i] ?? bps[0] ?? 1),
      sampleFormat: Array.from({ length: spp }, (_, i) => sf[i] ?? sf[0] ?? 1),
      compression: await first(w, get(259), 1),
      predictor: await first(w, get(317), 1),
      planar: (await first(w, get(284), 1)) === 2 ? 2 : 1,
      photometric: await first(w, get(262), 1),
      newSubfileType: await first(w, get(254), 0),
      tiled,
      tileWidth: tiled ? await first(w, get(322), 0) : width,
      tileHeight: tiled ? await first(w, get(323), 0) : 0,
      rowsPerStrip: Math.min(height || 1, await first(w, get(278), height || 1)) || 1,
      entries,
    };
    if (pages.length === 0) description = await w.ascii(get(270));
    pages.push(page);
    offset = next;
  }
  if (pages.length === 0) throw new TiffHeaderError('the file contains no images');
  return { littleEndian: le, bigTiff: big, fileSize: r.size, pages, description, structureEnd: Math.max(w.extent, big ? 16 : 8) };
}

/** Trailing bytes tolerated after the last referenced byte (writers may pad); anything more is refused. */
export const MAX_TRAILING_BYTES = 4096;
const EMBEDDED_SIGNATURES: [string, RegExp][] = [
  ['a ZIP archive', /PK\x03\x04|PK\x05\x06/],
  ['an HTML or SVG document', /<\s*(html|script|!doctype|svg|body|iframe)/i],
];

/**
 * Refuses a file that carries data after everything its directories refer to (e.g. a TIFF with an HTML page
 * or a ZIP archive appended: a "polyglot"). Such bytes are never image data, so nothing is lost by refusing.
 */
export async function checkTrailingData(r: ByteReader, h: TiffHeader): Promise<void> {
  let end = h.structureEnd;
  for (const p of h.pages) {
    const { offsets, counts } = await pageBlocks(r, h, p);
    for (let i = 0; i < offsets.length; i++) end = Math.max(end, offsets[i] + (counts[i] ?? 0));
  }
  const trailing = h.fileSize - end;
  if (trailing <= 0) return;
  const tail = await r.read(end, Math.min(trailing, 64 * 1024));
  let text = '';
  for (let i = 0; i < tail.length; i++) text += String.fromCharCode(tail[i]);
  for (const [what, re] of EMBEDDED_SIGNATURES) {
    if (re.test(text)) throw new TiffHeaderError(`the file carries ${what} after its image data (${trailing} extra bytes); upload the plain TIFF image`, 422);
  }
  if (trailing > MAX_TRAILING_BYTES) {
    throw new TiffHeaderError(`the file has ${trailing} bytes after the end of its image data, which no TIFF writer adds; upload the plain TIFF image`, 422);
  }
}

/**
 * Checks that the strips or tiles of one page lie inside the file, so a truncated file is refused
 * with a clear message before any decoding.
 */
export async function checkPageExtents(r: ByteReader, h: TiffHeader, p: PageHeader): Promise<void> {
  const w = new Walker(r, h.littleEndian, h.bigTiff);
  const offTag = p.tiled ? 324 : 273;
  const cntTag = p.tiled ? 325 : 279;
  const across = p.tiled ? Math.ceil(p.width / (p.tileWidth || 1)) : 1;
  const down = p.tiled ? Math.ceil(p.height / (p.tileHeight || 1)) : Math.ceil(p.height / p.rowsPerStrip);
  const expected = across * down * (p.planar === 2 ? p.samplesPerPixel : 1);
  const offs = await w.numbers(p.entries.get(offTag), expected + 16);
  const cnts = await w.numbers(p.entries.get(cntTag), expected + 16);
  if (offs.length < expected || cnts.length < offs.length) {
    throw new TiffHeaderError(`the file is damaged: page ${p.index + 1} should have ${expected} ${p.tiled ? 'tiles' : 'strips'} but lists ${Math.min(offs.length, cnts.length)}`);
  }
  let end = 0;
  for (let i = 0; i < expected; i++) end = Math.max(end, offs[i] + cnts[i]);
  if (end > h.fileSize) {
    throw new TiffHeaderError(`the file is truncated: it has ${h.fileSize} bytes, but the image data of page ${p.index + 1} runs to byte ${end}`);
  }
}

/** Offsets and byte counts of a page's strips or tiles (bounded by the count the page's size implies). */
export async function pageBlocks(r: ByteReader, h: TiffHeader, p: PageHeader): Promise<{ offsets: number[]; counts: number[]; perSample: number }> {
  const w = new Walker(r, h.littleEndian, h.bigTiff);
  const across = p.tiled ? Math.ceil(p.width / (p.tileWidth || 1)) : 1;
  const down = p.tiled ? Math.ceil(p.height / (p.tileHeight || 1)) : Math.ceil(p.height / p.rowsPerStrip);
  const perSample = across * down;
  const expected = perSample * (p.planar === 2 ? p.samplesPerPixel : 1);
  const offsets = await w.numbers(p.entries.get(p.tiled ? 324 : 273), expected + 16);
  const counts = await w.numbers(p.entries.get(p.tiled ? 325 : 279), expected + 16);
  return { offsets, counts, perSample };
}
