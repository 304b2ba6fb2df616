/**
 * Minimal uncompressed little-endian TIFF writer for synthetic test/bench images (one strip per page,
 * one sample per pixel, uint16). TIFF 6.0 baseline layout (Adobe 1992); the decoder is checked against
 * tifffile/libtiff-written fixtures elsewhere, this writer only makes large inputs quickly.
 */
export function writeTiffU16(pages: Uint16Array[], width: number, height: number): Buffer {
  const n = pages.length;
  const planeBytes = width * height * 2;
  const entries = 9;
  const ifdSize = 2 + entries * 12 + 4;
  const header = 8;
  const total = header + n * (ifdSize + planeBytes);
  const buf = Buffer.alloc(total);
  buf.write('II', 0, 'latin1');
  buf.writeUInt16LE(42, 2);
  let off = header;
  buf.writeUInt32LE(off, 4);
  for (let p = 0; p < n; p++) {
    const ifd = off;
    const data = ifd + ifdSize;
    let e = ifd + 2;
    buf.writeUInt16LE(entries, ifd);
    const put = (tag: number, type: number, value: number) => {
      buf.writeUInt16LE(tag, e);
      buf.writeUInt16LE(type, e + 2);
      buf.writeUInt32LE(1, e + 4);
      if (type === 3) buf.writeUInt16LE(value, e + 8);
      else buf.writeUInt32LE(value, e + 8);
      e += 12;
    };
    put(256, 4, width);
    put(257, 4, height);
    put(258, 3, 16);
    put(259, 3, 1);
    put(262, 3, 1);
    put(273, 4, data);
    put(277, 3, 1);
    put(278, 4, height);
    put(279, 4, planeBytes);
    const next = p === n - 1 ? 0 : data + planeBytes;
    buf.writeUInt32LE(next, e);
    Buffer.from(pages[p].buffer, pages[p].byteOffset, planeBytes).copy(buf, data);
    off = data + planeBytes;
  }
  return buf;
}
