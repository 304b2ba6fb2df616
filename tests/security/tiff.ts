/**
 * Byte-level TIFF builders for the security and fault tests (TIFF 6.0, Adobe 1992, Part 1 §2 "TIFF Structure":
 * 8-byte header, IFDs of 12-byte entries in ascending tag order, 4-byte next-IFD offset).
 */

interface Entry {
  tag: number;
  type: 3 | 4; // SHORT, LONG
  value: number;
}

/** One IFD at `at` in `b`; returns the offset right after it. */
function writeIfd(b: Buffer, at: number, entries: Entry[], next: number) {
  b.writeUInt16LE(entries.length, at);
  let q = at + 2;
  for (const e of [...entries].sort((x, y) => x.tag - y.tag)) {
    b.writeUInt16LE(e.tag, q);
    b.writeUInt16LE(e.type, q + 2);
    b.writeUInt32LE(1, q + 4);
    if (e.type === 3) b.writeUInt16LE(e.value, q + 8);
    else b.writeUInt32LE(e.value, q + 8);
    q += 12;
  }
  b.writeUInt32LE(next, q);
  return q + 4;
}

const baseEntries = (width: number, height: number, dataOff: number, bytes: number): Entry[] => [
  { tag: 256, type: 4, value: width },
  { tag: 257, type: 4, value: height },
  { tag: 258, type: 3, value: 16 },
  { tag: 259, type: 3, value: 1 },
  { tag: 262, type: 3, value: 1 },
  { tag: 273, type: 4, value: dataOff },
  { tag: 277, type: 3, value: 1 },
  { tag: 278, type: 4, value: height },
  { tag: 279, type: 4, value: bytes },
  { tag: 339, type: 3, value: 1 },
];
const IFD_BYTES = 2 + 10 * 12 + 4;

/** A valid little-endian, uncompressed 16-bit grey TIFF with one page per array (e.g. two channels). */
export function tiffPages(width: number, height: number, pages: Uint16Array[]): Buffer {
  const pageBytes = width * height * 2;
  const b = Buffer.alloc(8 + pages.length * (pageBytes + IFD_BYTES));
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  let off = 8;
  b.writeUInt32LE(off + pageBytes, 4);
  pages.forEach((px, p) => {
    for (let i = 0; i < px.length; i++) b.writeUInt16LE(px[i], off + 2 * i);
    const ifd = off + pageBytes;
    const next = p + 1 < pages.length ? ifd + IFD_BYTES + pageBytes : 0;
    writeIfd(b, ifd, baseEntries(width, height, off, pageBytes), next);
    off = ifd + IFD_BYTES;
  });
  return b;
}

/** Two correlated channels with a few bright blobs (deterministic). */
export function twoChannels(width: number, height: number): [Uint16Array, Uint16Array] {
  const a = new Uint16Array(width * height);
  const c = new Uint16Array(width * height);
  for (let y = 0; y < height; y++)
    for (let x = 0; x < width; x++) {
      const blob = 3000 * Math.exp(-(((x % 24) - 12) ** 2 + ((y % 24) - 12) ** 2) / 30);
      const n = ((x * 7919 + y * 104729) % 97) / 97;
      a[y * width + x] = Math.round(200 + blob + 150 * n);
      c[y * width + x] = Math.round(150 + 0.6 * blob + 150 * (1 - n));
    }
  return [a, c];
}

/** Two IFDs whose next-IFD pointers point at each other: a reader that follows them never ends. */
export function tiffIfdLoop(): Buffer {
  const w = 8, h = 8, bytes = w * h * 2;
  const b = Buffer.alloc(8 + bytes + 2 * IFD_BYTES);
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  const ifd1 = 8 + bytes;
  const ifd2 = ifd1 + IFD_BYTES;
  b.writeUInt32LE(ifd1, 4);
  writeIfd(b, ifd1, baseEntries(w, h, 8, bytes), ifd2);
  writeIfd(b, ifd2, baseEntries(w, h, 8, bytes), ifd1);
  return b;
}

/** An IFD that points at itself. */
export function tiffIfdSelfLoop(): Buffer {
  const w = 8, h = 8, bytes = w * h * 2;
  const b = Buffer.alloc(8 + bytes + IFD_BYTES);
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  const ifd = 8 + bytes;
  b.writeUInt32LE(ifd, 4);
  writeIfd(b, ifd, baseEntries(w, h, 8, bytes), ifd);
  return b;
}

/** Strip offset (or the first IFD) beyond the end of the file. */
export function tiffOffsetPastEnd(which: 'strip' | 'ifd'): Buffer {
  const w = 16, h = 16, bytes = w * h * 2;
  const b = Buffer.alloc(8 + IFD_BYTES);
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  if (which === 'ifd') {
    b.writeUInt32LE(0x7ffffff0, 4);
    return b;
  }
  b.writeUInt32LE(8, 4);
  writeIfd(b, 8, baseEntries(w, h, 10_000_000, bytes), 0);
  return b;
}

/** A small file whose header declares a gigantic image (huge declared size). */
export function tiffHugeDeclared(width = 1_000_000, height = 1_000_000): Buffer {
  const b = Buffer.alloc(8 + IFD_BYTES + 64);
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  b.writeUInt32LE(8, 4);
  writeIfd(b, 8, baseEntries(width, height, 8 + IFD_BYTES, 0xfffffff0), 0);
  return b;
}

/** Polyglots: HTML first with a TIFF after it; a ZIP local header first; a TIFF with HTML and a ZIP appended. */
export function polyglots(): { name: string; bytes: Buffer }[] {
  const [a, c] = twoChannels(16, 16);
  const tif = tiffPages(16, 16, [a, c]);
  const html = Buffer.from('<!doctype html><html><body><script>alert(document.cookie)</script></body></html>\n');
  const zipLocal = Buffer.concat([Buffer.from([0x50, 0x4b, 0x03, 0x04]), Buffer.alloc(26), Buffer.from('evil.html'), html]);
  const zipEnd = Buffer.concat([Buffer.from([0x50, 0x4b, 0x05, 0x06]), Buffer.alloc(18)]);
  return [
    { name: 'html-first.tif', bytes: Buffer.concat([html, tif]) },
    { name: 'zip-first.tif', bytes: Buffer.concat([zipLocal, tif, zipEnd]) },
    { name: 'tiff-html-zip.tif', bytes: Buffer.concat([tif, html, zipLocal, zipEnd]) },
  ];
}

/**
 * TIFF LZW encoder (TIFF 6.0 §13): MSB-first codes from 9 to 12 bits, the width growing one code early and
 * a Clear code when the table is full, as libtiff writes them. Used to build genuine LZW files and bombs.
 */
export function lzwEncode(data: Uint8Array): Uint8Array {
  const out: number[] = [];
  let acc = 0;
  let accBits = 0;
  let width = 9;
  const put = (code: number) => {
    acc = (acc << width) | code;
    accBits += width;
    while (accBits >= 8) {
      out.push((acc >>> (accBits - 8)) & 0xff);
      accBits -= 8;
    }
    acc &= (1 << accBits) - 1;
  };
  let dict = new Map<number, number>();
  let next = 258;
  put(256);
  if (data.length === 0) {
    put(257);
    if (accBits > 0) out.push((acc << (8 - accBits)) & 0xff);
    return Uint8Array.from(out);
  }
  const grow = () => {
    next++;
    if (next === 4094) {
      put(256);
      dict = new Map();
      next = 258;
      width = 9;
    } else if (next > (1 << width) - 1) width++;
  };
  let w = data[0];
  for (let i = 1; i < data.length; i++) {
    const c = data[i];
    const key = w * 256 + c;
    const hit = dict.get(key);
    if (hit !== undefined) {
      w = hit;
      continue;
    }
    put(w);
    dict.set(key, next);
    grow();
    w = c;
  }
  put(w);
  grow();
  put(257);
  if (accBits > 0) out.push((acc << (8 - accBits)) & 0xff);
  return Uint8Array.from(out);
}

/** PackBits (TIFF 6.0 §9) "bomb": `runs` repeat codes of 128 zero bytes each (2 bytes of input per 128 out). */
export function packBitsZeroRuns(runs: number): Uint8Array {
  const b = new Uint8Array(2 * runs);
  for (let i = 0; i < runs; i++) b[2 * i] = 0x81; // −127: repeat the next byte 128 times
  return b;
}

/** PackBits encoder (literal runs only, or repeat runs of ≥ 3 equal bytes): genuine compressed files. */
export function packBitsEncode(data: Uint8Array): Uint8Array {
  const out: number[] = [];
  let i = 0;
  while (i < data.length) {
    let run = 1;
    while (i + run < data.length && run < 128 && data[i + run] === data[i]) run++;
    if (run >= 3) {
      out.push(257 - run, data[i]);
      i += run;
      continue;
    }
    let lit = 0;
    while (i + lit < data.length && lit < 128 && !(i + lit + 2 < data.length && data[i + lit] === data[i + lit + 1] && data[i + lit] === data[i + lit + 2])) lit++;
    out.push(lit - 1);
    for (let k = 0; k < lit; k++) out.push(data[i + k]);
    i += lit;
  }
  return Uint8Array.from(out);
}

/**
 * A multi-page little-endian grey TIFF whose pages carry caller-supplied (compressed) strips:
 * `pages[p][s]` is strip s of page p. Tags in ascending order; strip tables out of line when a page has
 * more than one strip.
 */
export function tiffStripPages(o: { width: number; height: number; bits: 8 | 16 | 32; compression: number; predictor?: number; rowsPerStrip?: number; sampleFormat?: number; pages: Uint8Array[][] }): Buffer {
  const tagsOf = (): [number, number, number][] => [
    [256, 4, o.width],
    [257, 4, o.height],
    [258, 3, o.bits],
    [259, 3, o.compression],
    [262, 3, 1],
    [273, 4, 0],
    [277, 3, 1],
    [278, 4, o.rowsPerStrip ?? o.height],
    [279, 4, 0],
    [317, 3, o.predictor ?? 1],
    [339, 3, o.sampleFormat ?? 1],
  ];
  const nTags = tagsOf().length;
  const ifdSize = 2 + nTags * 12 + 4;
  let off = 8;
  const layout = o.pages.map((strips) => {
    const ifd = off;
    off += ifdSize;
    const tables = strips.length > 1 ? off : 0;
    if (strips.length > 1) off += 8 * strips.length;
    const offsets = strips.map((s) => {
      const at = off;
      off += s.length;
      return at;
    });
    return { ifd, tables, offsets, strips };
  });
  const b = Buffer.alloc(off);
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  b.writeUInt32LE(8, 4);
  layout.forEach((l, p) => {
    b.writeUInt16LE(nTags, l.ifd);
    let e = l.ifd + 2;
    const n = l.strips.length;
    for (const [tag, type, value] of tagsOf()) {
      b.writeUInt16LE(tag, e);
      b.writeUInt16LE(type, e + 2);
      if ((tag === 273 || tag === 279) && n > 1) {
        b.writeUInt32LE(n, e + 4);
        b.writeUInt32LE(tag === 273 ? l.tables : l.tables + 4 * n, e + 8);
      } else {
        b.writeUInt32LE(1, e + 4);
        const v = tag === 273 ? l.offsets[0] : tag === 279 ? l.strips[0].length : value;
        if (type === 3) b.writeUInt16LE(v, e + 8);
        else b.writeUInt32LE(v, e + 8);
      }
      e += 12;
    }
    b.writeUInt32LE(p + 1 < layout.length ? layout[p + 1].ifd : 0, e);
    if (n > 1) {
      l.offsets.forEach((x, i) => b.writeUInt32LE(x, l.tables + 4 * i));
      l.strips.forEach((s, i) => b.writeUInt32LE(s.length, l.tables + 4 * n + 4 * i));
    }
    l.strips.forEach((s, i) => Buffer.from(s).copy(b, l.offsets[i]));
  });
  return b;
}

/** Horizontal differencing (TIFF 6.0 §14, predictor 2) of one 8-bit or 16-bit grey image, row by row. */
export function differenceRows(px: Uint8Array | Uint16Array, width: number): Uint8Array {
  const d = px.slice();
  for (let i = d.length - 1; i >= 0; i--) if (i % width !== 0) d[i] = (px[i] - px[i - 1]) & (px instanceof Uint8Array ? 0xff : 0xffff);
  return new Uint8Array(d.buffer, d.byteOffset, d.byteLength);
}

/**
 * One-page little-endian TIFF from raw directory entries (tag, type, count, value-or-offset), for headers
 * no writer would produce. `blob` is appended after the directory; an entry whose value is 'blob' points at it.
 */
export function tiffFromEntries(entries: [number, number, number, number | 'blob'][], blob: Uint8Array = new Uint8Array(0), pixels: Uint8Array = new Uint8Array(0)): Buffer {
  const ifdSize = 2 + entries.length * 12 + 4;
  const blobAt = 8 + ifdSize;
  const pixAt = blobAt + blob.length;
  const b = Buffer.alloc(pixAt + pixels.length);
  b.write('II', 0, 'latin1');
  b.writeUInt16LE(42, 2);
  b.writeUInt32LE(8, 4);
  b.writeUInt16LE(entries.length, 8);
  let q = 10;
  for (const [tag, type, count, value] of [...entries].sort((x, y) => x[0] - y[0])) {
    b.writeUInt16LE(tag, q);
    b.writeUInt16LE(type, q + 2);
    b.writeUInt32LE(count >>> 0, q + 4);
    const v = value === 'blob' ? blobAt : value === -1 ? pixAt : value;
    if (type === 3 && count === 1) b.writeUInt16LE(v, q + 8);
    else b.writeUInt32LE(v >>> 0, q + 8);
    q += 12;
  }
  b.writeUInt32LE(0, q);
  Buffer.from(blob).copy(b, blobAt);
  Buffer.from(pixels).copy(b, pixAt);
  return b;
}
