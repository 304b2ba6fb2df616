/** Test helpers for the workspace tests: a field row without pixels, and a minimal TIFF writer. */
import crypto from 'node:crypto';
import type { AppContext } from '../../server/context.js';
import { fields, files } from '../../server/db/schema.js';

/** Inserts a ready field (and a placeholder file row) of the given size; pixels are not stored. */
export function insertField(ctx: AppContext, coverslipId: number, width: number, height: number, extra: Partial<typeof fields.$inferInsert> = {}) {
  const sha = crypto.randomBytes(32).toString('hex');
  ctx.db.insert(files).values({ sha256: sha, size: 1, storeKey: `${sha.slice(0, 2)}/${sha}.tif`, originalName: 'none.tif' }).run();
  const facts = { min: 0, max: 0, mean: 0, saturatedFraction: 0, plateauFraction: null };
  return ctx.db
    .insert(fields)
    .values({ coverslipId, name: `field ${width}x${height}`, file1Sha: sha, file2Sha: sha, channel1: 1, channel2: 2, channelNames: [null, null], fileSize: 1, width, height, bitDepth: 16, sampleFormat: 'uint', facts: { ch1: facts, ch2: facts }, ...extra })
    .returning()
    .get();
}

/**
 * A baseline TIFF (TIFF 6.0, Adobe 1992: one strip, no compression, little-endian) of one or more
 * single-sample pages. bits: 8, 16 or 32 (unsigned integer; with format 'float' 32-bit IEEE 754). Common practice.
 */
export function writeTiff(pages: ArrayLike<number>[], width: number, height: number, bits: 8 | 16 | 32 = 16, format: 'uint' | 'float' = 'uint'): Buffer {
  if (format === 'float' && bits !== 32) throw new Error(`float pages are 32-bit, got ${bits}`);
  const bpp = bits / 8;
  const entries = 10;
  const ifdSize = 2 + entries * 12 + 4;
  const dataSize = width * height * bpp;
  const pageSize = ifdSize + dataSize;
  const buf = Buffer.alloc(8 + pages.length * pageSize);
  buf.write('II', 0, 'latin1');
  buf.writeUInt16LE(42, 2);
  buf.writeUInt32LE(8, 4);
  pages.forEach((px, p) => {
    const ifd = 8 + p * pageSize;
    const data = ifd + ifdSize;
    let o = ifd;
    buf.writeUInt16LE(entries, o);
    o += 2;
    const tag = (t: number, type: number, v: number) => {
      buf.writeUInt16LE(t, o);
      buf.writeUInt16LE(type, o + 2);
      buf.writeUInt32LE(1, o + 4);
      if (type === 3) buf.writeUInt16LE(v, o + 8);
      else buf.writeUInt32LE(v, o + 8);
      o += 12;
    };
    tag(256, 4, width); // ImageWidth
    tag(257, 4, height); // ImageLength
    tag(258, 3, bits); // BitsPerSample
    tag(259, 3, 1); // Compression: none
    tag(262, 3, 1); // Photometric: BlackIsZero
    tag(273, 4, data); // StripOffsets
    tag(277, 3, 1); // SamplesPerPixel
    tag(278, 4, height); // RowsPerStrip
    tag(279, 4, dataSize); // StripByteCounts
    tag(339, 3, format === 'float' ? 3 : 1); // SampleFormat: IEEE float or unsigned integer
    buf.writeUInt32LE(p + 1 < pages.length ? 8 + (p + 1) * pageSize : 0, o);
    for (let i = 0; i < width * height; i++) {
      const v = px[i];
      if (bits === 8) buf.writeUInt8(v, data + i);
      else if (bits === 16) buf.writeUInt16LE(v, data + 2 * i);
      else if (format === 'float') buf.writeFloatLE(v, data + 4 * i);
      else buf.writeUInt32LE(v, data + 4 * i);
    }
  });
  return buf;
}

/** Pixel-centre disk test used to build synthetic images (centre (x+0.5, y+0.5) strictly inside radius r). */
export const inDisk = (x: number, y: number, cx: number, cy: number, r: number) => (x + 0.5 - cx) ** 2 + (y + 0.5 - cy) ** 2 < r * r;
