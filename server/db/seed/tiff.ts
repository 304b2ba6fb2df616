/**
 * A tiny baseline TIFF writer (TIFF 6.0, Adobe 1992, Part 1 "Baseline TIFF"): one uncompressed 16-bit
 * grayscale image, little-endian, one strip. Enough for the demo seed; intake decodes it like any upload.
 */
export function writeTiff16(width: number, height: number, pixels: Uint16Array, description?: string): Uint8Array {
  if (pixels.length !== width * height) throw new RangeError(`expected ${width * height} pixels, received ${pixels.length}`);
  const desc = description ? new TextEncoder().encode(description + '\0') : null;
  const entries: [tag: number, type: number, count: number, value: number][] = [];
  const header = 8;
  const dataBytes = width * height * 2;
  const dataOff = header;
  let extraOff = dataOff + dataBytes;
  const descOff = extraOff;
  if (desc) extraOff += desc.length + (desc.length % 2);
  const ifdOff = extraOff;
  // tags in ascending order (TIFF 6.0 §2 requires it)
  entries.push([256, 4, 1, width]); // ImageWidth (LONG)
  entries.push([257, 4, 1, height]); // ImageLength
  entries.push([258, 3, 1, 16]); // BitsPerSample
  entries.push([259, 3, 1, 1]); // Compression: none
  entries.push([262, 3, 1, 1]); // PhotometricInterpretation: BlackIsZero
  if (desc) entries.push([270, 2, desc.length, descOff]); // ImageDescription (ASCII)
  entries.push([273, 4, 1, dataOff]); // StripOffsets
  entries.push([277, 3, 1, 1]); // SamplesPerPixel
  entries.push([278, 4, 1, height]); // RowsPerStrip
  entries.push([279, 4, 1, dataBytes]); // StripByteCounts
  entries.push([284, 3, 1, 1]); // PlanarConfiguration: chunky
  entries.push([339, 3, 1, 1]); // SampleFormat: unsigned integer
  const total = ifdOff + 2 + entries.length * 12 + 4;
  const buf = new ArrayBuffer(total);
  const dv = new DataView(buf);
  const u8 = new Uint8Array(buf);
  u8[0] = 0x49;
  u8[1] = 0x49; // "II" little-endian
  dv.setUint16(2, 42, true);
  dv.setUint32(4, ifdOff, true);
  for (let i = 0; i < pixels.length; i++) dv.setUint16(dataOff + 2 * i, pixels[i], true);
  if (desc) u8.set(desc, descOff);
  dv.setUint16(ifdOff, entries.length, true);
  entries.forEach(([tag, type, count, value], k) => {
    const o = ifdOff + 2 + k * 12;
    dv.setUint16(o, tag, true);
    dv.setUint16(o + 2, type, true);
    dv.setUint32(o + 4, count, true);
    if (type === 3 && count === 1) dv.setUint16(o + 8, value, true);
    else dv.setUint32(o + 8, value, true);
  });
  dv.setUint32(ifdOff + 2 + entries.length * 12, 0, true); // no next IFD
  return u8;
}
