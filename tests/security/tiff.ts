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
