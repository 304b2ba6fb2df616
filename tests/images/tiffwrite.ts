/**
 * TIFF writers for synthetic test/bench images. Plain uint16 pages are written by the server's own writer
 * (server/images/tiff-write.ts, used for label exports); the decoder is checked against tifffile/libtiff-written
 * fixtures elsewhere, these only make large or hostile inputs quickly.
 */
import { writeGrayTiff } from '../../server/images/tiff-write.js';

export const writeTiffU16 = (pages: Uint16Array[], width: number, height: number): Buffer => writeGrayTiff(pages, width, height);

/**
 * A one-page little-endian TIFF with caller-supplied strip bytes and tag values (for hostile-file tests).
 */
export function writeTiffStrips(o: { width: number; height: number; bits: number; compression: number; predictor?: number; rowsPerStrip?: number; strips: Uint8Array[] }): Buffer {
  const tags: [number, number, number][] = [
    [256, 4, o.width],
    [257, 4, o.height],
    [258, 3, o.bits],
    [259, 3, o.compression],
    [262, 3, 1],
    [273, 4, 0], // patched
    [277, 3, 1],
    [278, 4, o.rowsPerStrip ?? o.height],
    [279, 4, 0], // patched
    [317, 3, o.predictor ?? 1],
  ];
  const n = o.strips.length;
  const ifdSize = 2 + tags.length * 12 + 4;
  const arrays = n > 1 ? 8 * n : 0;
  let dataStart = 8 + ifdSize + arrays;
  const offsets: number[] = [];
  for (const s of o.strips) {
    offsets.push(dataStart);
    dataStart += s.length;
  }
  const buf = Buffer.alloc(dataStart);
  buf.write('II', 0, 'latin1');
  buf.writeUInt16LE(42, 2);
  buf.writeUInt32LE(8, 4);
  buf.writeUInt16LE(tags.length, 8);
  let e = 10;
  const arrOff = 8 + ifdSize;
  for (const [tag, type, value] of tags) {
    buf.writeUInt16LE(tag, e);
    buf.writeUInt16LE(type, e + 2);
    if ((tag === 273 || tag === 279) && n > 1) {
      buf.writeUInt32LE(n, e + 4);
      buf.writeUInt32LE(tag === 273 ? arrOff : arrOff + 4 * n, e + 8);
    } else {
      buf.writeUInt32LE(1, e + 4);
      const v = tag === 273 ? offsets[0] : tag === 279 ? o.strips[0].length : value;
      if (type === 3) buf.writeUInt16LE(v, e + 8);
      else buf.writeUInt32LE(v, e + 8);
    }
    e += 12;
  }
  buf.writeUInt32LE(0, e);
  if (n > 1) {
    offsets.forEach((off, i) => buf.writeUInt32LE(off, arrOff + 4 * i));
    o.strips.forEach((s, i) => buf.writeUInt32LE(s.length, arrOff + 4 * n + 4 * i));
  }
  o.strips.forEach((s, i) => Buffer.from(s).copy(buf, offsets[i]));
  return buf;
}

/**
 * A plain multi-page uint16 TIFF whose first page carries an ImageDescription (e.g. stated sizes
 * "channels=2\nslices=10", pages channel fastest, then slice): uncompressed, one strip per page.
 */
export function writeTiffU16Described(pages: Uint16Array[], width: number, height: number, description: string): Buffer {
  const desc = Buffer.from(`${description}\0`, 'latin1');
  const planeBytes = width * height * 2;
  const entries = (p: number) => (p === 0 ? 11 : 10);
  const ifdSize = (p: number) => 2 + entries(p) * 12 + 4;
  let total = 8 + desc.length;
  for (let p = 0; p < pages.length; p++) total += ifdSize(p) + planeBytes;
  const buf = Buffer.alloc(total);
  buf.write('II', 0, 'latin1');
  buf.writeUInt16LE(42, 2);
  const descAt = 8;
  desc.copy(buf, descAt);
  let off = 8 + desc.length;
  buf.writeUInt32LE(off, 4);
  for (let p = 0; p < pages.length; p++) {
    if (pages[p].length !== width * height) throw new RangeError(`page ${p} has ${pages[p].length} pixels, expected ${width * height}`);
    const ifd = off, data = ifd + ifdSize(p);
    let e = ifd + 2;
    buf.writeUInt16LE(entries(p), ifd);
    const put = (tag: number, type: number, count: number, value: number) => {
      buf.writeUInt16LE(tag, e);
      buf.writeUInt16LE(type, e + 2);
      buf.writeUInt32LE(count, e + 4);
      if (type === 3 && count === 1) buf.writeUInt16LE(value, e + 8);
      else buf.writeUInt32LE(value, e + 8);
      e += 12;
    };
    put(256, 4, 1, width);
    put(257, 4, 1, height);
    put(258, 3, 1, 16);
    put(259, 3, 1, 1);
    put(262, 3, 1, 1);
    if (p === 0) put(270, 2, desc.length, descAt);
    put(273, 4, 1, data);
    put(277, 3, 1, 1);
    put(278, 4, 1, height);
    put(279, 4, 1, planeBytes);
    put(339, 3, 1, 1);
    buf.writeUInt32LE(p === pages.length - 1 ? 0 : data + planeBytes, e);
    Buffer.from(pages[p].buffer, pages[p].byteOffset, planeBytes).copy(buf, data);
    off = data + planeBytes;
  }
  return buf;
}
