/**
 * Minimal uncompressed little-endian TIFF writer: one strip per page, one unsigned-integer sample per pixel
 * (16 or 32 bits), TIFF 6.0 baseline layout (Adobe Developers Association 1992, "TIFF Revision 6.0": tags
 * ImageWidth 256, ImageLength 257, BitsPerSample 258, Compression 259 = 1, PhotometricInterpretation 262 = 1
 * (BlackIsZero), StripOffsets 273, SamplesPerPixel 277, RowsPerStrip 278, StripByteCounts 279,
 * SampleFormat 339 = 1 (unsigned)). Used for label-image exports; read back by server/images/decode.ts.
 */
export function writeGrayTiff(pages: (Uint16Array | Uint32Array)[], width: number, height: number): Buffer {
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0)) throw new RangeError(`image size must be positive integers, received ${width} × ${height}`);
  if (pages.length === 0) throw new RangeError('a TIFF needs at least one page');
  const bytes = pages[0].BYTES_PER_ELEMENT;
  for (const p of pages) {
    if (p.length !== width * height) throw new RangeError(`a page has ${p.length} pixels, expected ${width * height}`);
    if (p.BYTES_PER_ELEMENT !== bytes) throw new RangeError('every page must have the same sample size');
  }
  const n = pages.length;
  const planeBytes = width * height * bytes;
  const entries = 10;
  const ifdSize = 2 + entries * 12 + 4;
  const header = 8;
  const buf = Buffer.alloc(header + n * (ifdSize + planeBytes));
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
    put(258, 3, bytes * 8);
    put(259, 3, 1);
    put(262, 3, 1);
    put(273, 4, data);
    put(277, 3, 1);
    put(278, 4, height);
    put(279, 4, planeBytes);
    put(339, 3, 1);
    buf.writeUInt32LE(p === n - 1 ? 0 : data + planeBytes, e);
    const page = pages[p];
    Buffer.from(page.buffer, page.byteOffset, planeBytes).copy(buf, data);
    off = data + planeBytes;
  }
  return buf;
}
