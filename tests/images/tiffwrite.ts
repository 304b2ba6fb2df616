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
