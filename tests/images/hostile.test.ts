/**
 * Hostile inputs built byte by byte: decompression bombs, absurd strip tables, damaged tiles. Each is
 * refused with ImageInputError before memory is committed to what the header claims.
 */
import zlib from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { decodeChannel, ImageInputError, readTiffInfo } from '../../server/images/decode.js';
import { readLabelImage, checkMaskSize } from '../../server/images/mask.js';
import { writeTiffStrips } from './tiffwrite.js';
import { fixture } from './fixtures.js';

const refused = async (p: Promise<unknown>, re: RegExp) => {
  const e = await p.then(() => null, (x) => x);
  expect(e).toBeInstanceOf(ImageInputError);
  expect((e as Error).message).toMatch(re);
};

describe('hostile files', () => {
  it('a Deflate strip that unpacks to 64 MB in a 64×48 image (decompression bomb) is stopped at the declared size', async () => {
    const bomb = zlib.deflateSync(Buffer.alloc(64 * 2 ** 20));
    expect(bomb.length).toBeLessThan(200_000);
    const file = writeTiffStrips({ width: 64, height: 48, bits: 16, compression: 8, strips: [bomb] });
    const before = process.memoryUsage().arrayBuffers;
    await refused(decodeChannel(new Uint8Array(file), 1), /unpacks to more than its declared 6144 bytes/);
    expect(process.memoryUsage().arrayBuffers - before).toBeLessThan(32 * 2 ** 20);
  });
  it('a genuine Deflate strip written here decodes (the bounded decoder is the one in use)', async () => {
    const px = new Uint16Array(64 * 48).map((_, i) => i * 3);
    const file = writeTiffStrips({ width: 64, height: 48, bits: 16, compression: 8, strips: [zlib.deflateSync(Buffer.from(px.buffer))] });
    const d = await decodeChannel(new Uint8Array(file), 1);
    expect(Array.from(d.slices[0])).toEqual(Array.from(px));
  });
  it('millions of one-row strips are refused before their tables are read', async () => {
    const file = writeTiffStrips({ width: 1, height: 200_000_000, bits: 8, compression: 1, rowsPerStrip: 1, strips: [new Uint8Array(1)] });
    await refused(decodeChannel(new Uint8Array(file), 1, { pixelBudget: 2 ** 30 }), /cut into 200000000 strips/);
  });
  it('a strip table pointing past the end of the file is "truncated"', async () => {
    const file = writeTiffStrips({ width: 64, height: 48, bits: 16, compression: 1, strips: [new Uint8Array(100)] });
    await refused(decodeChannel(new Uint8Array(file), 1), /strip 1 .* holds 100 bytes, expected 6144|truncated/);
  });
  it('unsupported pixel types and compression are named', async () => {
    const f12 = writeTiffStrips({ width: 4, height: 4, bits: 12, compression: 1, strips: [new Uint8Array(24)] });
    await refused(decodeChannel(new Uint8Array(f12), 1), /12-bit pixels/);
    const jpeg = writeTiffStrips({ width: 4, height: 4, bits: 8, compression: 7, strips: [new Uint8Array(16)] });
    await refused(decodeChannel(new Uint8Array(jpeg), 1), /JPEG compression, which Syntopy does not read/);
  });
  it('BigTIFF with a directory claiming 2^40 entries is refused without allocating', async () => {
    const b = Buffer.alloc(64);
    b.write('II', 0, 'latin1');
    b.writeUInt16LE(43, 2);
    b.writeUInt16LE(8, 4);
    b.writeBigUInt64LE(16n, 8);
    b.writeBigUInt64LE(2n ** 40n, 16);
    await refused(readTiffInfo(new Uint8Array(b)), /claims 1099511627776 entries/);
  });
});

describe('mask / label image check (for the cells label import)', () => {
  it('a label image of the wrong size names both sizes', async () => {
    await refused(readLabelImage(fixture('labels_32x32.tif'), { width: 64, height: 48 }), /label image is 32×32 but the field is 64×48/);
    expect(() => checkMaskSize({ width: 3, height: 4 }, { width: 3, height: 4 })).not.toThrow();
  });
  it('a matching label image is read', async () => {
    const m = await readLabelImage(fixture('labels_32x32.tif'), { width: 32, height: 32 });
    expect(m.labels[5 * 32 + 5]).toBe(1); // generate.py: lab[4:12, 4:12] = 1
    expect(m.labels[20 * 32 + 10]).toBe(2); // lab[16:28, 6:20] = 2
    expect(m.labels[0]).toBe(0);
  });
  it('a two-channel file is not a label image', async () => {
    await refused(readLabelImage(fixture('uint16_2page.tif'), { width: 64, height: 48 }), /2 channels/);
  });
});
