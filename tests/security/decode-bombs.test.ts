/**
 * Decompression bombs through the real routes (upload POST /api/coverslips/:id/fields and label import
 * POST /api/fields/:id/cells/import): every codec stops at the block's expected size (rows × row bytes) and
 * the file is refused with a 422 naming that size; nothing is stored. Genuine files written with the same
 * encoders decode to exactly the pixels put in. Formats: TIFF 6.0 (Adobe 1992) §9 PackBits, §13 LZW,
 * §14 predictor; Deflate RFC 1950/1951.
 */
import zlib from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { decodeChannel, decodeChannels, ImageInputError } from '../../server/images/decode.js';
import { unpackBits, unpackLzw } from '../../server/images/codecs.js';
import { differenceRows, lzwEncode, packBitsEncode, packBitsZeroRuns, tiffFromEntries, tiffPages, tiffStripPages, twoChannels } from './tiff.js';
import { storedState, uploadTiffs } from './stored.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t?.close());

async function upload(bytes: Buffer, name = 'bomb.tif') {
  return uploadTiffs(t, await t.login('microscopist'), [{ name, bytes }]);
}

const W = 64;
const H = 64;
/** 8 MB of zeros, LZW-encoded: about 7 KB that would unpack 2000 times past a 4096-byte strip */
const lzwZeros = () => lzwEncode(new Uint8Array(8 << 20));
const genuine8 = () => {
  const px = new Uint8Array(W * H);
  for (let i = 0; i < px.length; i++) px[i] = (i * 37 + (i >> 6) * 11) & 0xff;
  return px;
};

describe('LZW, PackBits and Deflate bombs are stopped at the strip size', () => {
  const bombs: [string, () => Buffer, RegExp][] = [
    ['LZW: two 64×64 8-bit pages whose strips unpack to 8 MB each', () => tiffStripPages({ width: W, height: H, bits: 8, compression: 5, pages: [[lzwZeros()], [lzwZeros()]] }), /LZW-compressed block unpacks to more than its declared 4096 bytes/],
    ['LZW with the horizontal predictor', () => tiffStripPages({ width: W, height: H, bits: 8, compression: 5, predictor: 2, pages: [[lzwZeros()], [lzwZeros()]] }), /LZW-compressed block unpacks to more than its declared 4096 bytes/],
    ['LZW, second page only (the first is genuine)', () => tiffStripPages({ width: W, height: H, bits: 8, compression: 5, pages: [[lzwEncode(genuine8())], [lzwZeros()]] }), /LZW-compressed block unpacks to more than its declared 4096 bytes/],
    ['PackBits: 100,000 repeat codes (12.8 MB) per 4096-byte strip', () => tiffStripPages({ width: W, height: H, bits: 8, compression: 32773, pages: [[packBitsZeroRuns(100_000)], [packBitsZeroRuns(100_000)]] }), /PackBits-compressed block unpacks to more than its declared 4096 bytes/],
    ['Deflate: 64 MB of zeros per 8192-byte 16-bit strip', () => tiffStripPages({ width: W, height: H, bits: 16, compression: 8, pages: [[zlib.deflateSync(Buffer.alloc(64 << 20))], [zlib.deflateSync(Buffer.alloc(64 << 20))]] }), /Deflate-compressed block unpacks to more than its declared 8192 bytes/],
    ['uncompressed: a strip byte count larger than the strip', () => tiffStripPages({ width: W, height: H, bits: 8, compression: 1, pages: [[new Uint8Array(W * H * 2)], [new Uint8Array(W * H)]] }), /uncompressed block holds 8192 bytes, but its strip\/tile has only 4096 bytes/],
  ];
  for (const [what, make, re] of bombs) {
    it(`upload: ${what} → 422, nothing stored`, async () => {
      const before = await storedState(t);
      const file = make();
      const t0 = performance.now();
      const res = await upload(file);
      const ms = performance.now() - t0;
      expect(res.status, JSON.stringify(res.body)).toBe(422);
      expect(res.body.error).toMatch(re);
      expect(ms).toBeLessThan(5000);
      expect(await storedState(t)).toEqual(before);
    });
  }

  it('label import: an LZW bomb is refused with 422 and no cell is created', async () => {
    const agent = await t.login('microscopist');
    const [a, c] = twoChannels(W, H);
    const up = await upload(tiffPages(W, H, [a, c]), 'field.tif');
    expect(up.status, JSON.stringify(up.body)).toBe(201);
    const fieldId = up.body.results[0].field.id;
    const before = await storedState(t);
    const bomb = tiffStripPages({ width: W, height: H, bits: 8, compression: 5, pages: [[lzwZeros()]] });
    const res = await agent.post(`/api/fields/${fieldId}/cells/import`).attach('file', bomb, { filename: 'labels.tif', contentType: 'image/tiff' });
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error).toMatch(/LZW-compressed block unpacks to more than its declared 4096 bytes/);
    expect(await storedState(t)).toEqual(before);
  });
});

describe('genuine compressed files decode to the pixels written', () => {
  const [a16, c16] = twoChannels(W, H);
  const bytes16 = (px: Uint16Array) => new Uint8Array(px.buffer, px.byteOffset, px.byteLength);
  const cases: [string, Buffer, 8 | 16][] = [
    ['LZW 16-bit, 4 strips of 16 rows', tiffStripPages({ width: W, height: H, bits: 16, compression: 5, rowsPerStrip: 16, pages: [a16, c16].map((px) => [0, 1, 2, 3].map((s) => lzwEncode(bytes16(px.subarray(s * 16 * W, (s + 1) * 16 * W)))))}), 16],
    ['LZW 16-bit with the horizontal predictor', tiffStripPages({ width: W, height: H, bits: 16, compression: 5, predictor: 2, pages: [[lzwEncode(differenceRows(a16, W))], [lzwEncode(differenceRows(c16, W))]] }), 16],
    ['PackBits 16-bit', tiffStripPages({ width: W, height: H, bits: 16, compression: 32773, pages: [[packBitsEncode(bytes16(a16))], [packBitsEncode(bytes16(c16))]] }), 16],
    ['Deflate 16-bit with the horizontal predictor', tiffStripPages({ width: W, height: H, bits: 16, compression: 8, predictor: 2, pages: [[zlib.deflateSync(differenceRows(a16, W))], [zlib.deflateSync(differenceRows(c16, W))]] }), 16],
  ];
  for (const [what, file, bits] of cases) {
    it(what, async () => {
      const d = await decodeChannels(new Uint8Array(file), [1, 2]);
      expect(bits).toBe(16);
      expect(d.ch1[0]).toBeInstanceOf(Uint16Array);
      expect(Array.from(d.ch1[0])).toEqual(Array.from(a16));
      expect(Array.from(d.ch2[0])).toEqual(Array.from(c16));
    });
  }
  it('a genuine LZW upload is stored (201) with the facts of the pixels written', async () => {
    const px = genuine8();
    const other = px.map((v) => 255 - v);
    const res = await upload(tiffStripPages({ width: W, height: H, bits: 8, compression: 5, pages: [[lzwEncode(px)], [lzwEncode(other)]] }), 'genuine-lzw.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const f = res.body.results[0].field;
    expect([f.width, f.height, f.bitDepth]).toEqual([W, H, 8]);
    expect(f.facts.ch1.max).toBe(Math.max(...px));
    expect(f.facts.ch2.min).toBe(255 - Math.max(...px));
  });
});

/** A 32×32 8-bit LZW page in four 16×16 tiles; `tile(k)` gives the uncompressed bytes of tile k. */
function tiledLzw(tile: (k: number) => Uint8Array) {
  const tiles = [0, 1, 2, 3].map((k) => lzwEncode(tile(k)));
  const blobAt = 8 + 2 + 11 * 12 + 4;
  const tables = new Uint8Array(32);
  const dv = new DataView(tables.buffer);
  let at = blobAt + 32;
  tiles.forEach((t, k) => {
    dv.setUint32(4 * k, at, true);
    dv.setUint32(16 + 4 * k, t.length, true);
    at += t.length;
  });
  const blob = new Uint8Array(32 + tiles.reduce((a, t) => a + t.length, 0));
  blob.set(tables);
  let o = 32;
  for (const t of tiles) {
    blob.set(t, o);
    o += t.length;
  }
  return tiffFromEntries([[256, 4, 1, 32], [257, 4, 1, 32], [258, 3, 1, 8], [259, 3, 1, 5], [262, 3, 1, 1], [277, 3, 1, 1], [284, 3, 1, 1], [322, 3, 1, 16], [323, 3, 1, 16], [324, 4, 4, blobAt], [325, 4, 4, blobAt + 16]], blob);
}

describe('tiled files', () => {
  it('a genuine LZW-tiled page decodes to its pixels; a tile that unpacks past 16×16 bytes is refused', async () => {
    const tileBytes = (k: number) => new Uint8Array(256).map((_, i) => k * 50 + (i % 16) + (i >> 4));
    const d = await decodeChannel(new Uint8Array(tiledLzw(tileBytes)), 1);
    const px = d.slices[0];
    // pixel (x, y) lies in tile (x >> 4) + 2 (y >> 4) at (x & 15, y & 15)
    for (const [x, y] of [[0, 0], [17, 3], [5, 20], [31, 31]]) expect(px[y * 32 + x]).toBe(((x >> 4) + 2 * (y >> 4)) * 50 + (x & 15) + (y & 15));
    const e = await decodeChannel(new Uint8Array(tiledLzw((k) => (k === 2 ? new Uint8Array(1 << 20) : tileBytes(k)))), 1).then(() => null, (x) => x);
    expect(e).toBeInstanceOf(ImageInputError);
    expect((e as Error).message).toMatch(/LZW-compressed block unpacks to more than its declared 256 bytes/);
  });
});

describe('the bounded decoders themselves', () => {
  it('LZW stops at exactly the expected size: a stream of n bytes decodes into n, refuses n − 1', () => {
    const data = new Uint8Array(10_000).map((_, i) => (i * 7) % 13);
    const enc = lzwEncode(data);
    expect(Array.from(unpackLzw(enc, data.length))).toEqual(Array.from(data));
    expect(() => unpackLzw(enc, data.length - 1)).toThrow(/more than its declared 9999 bytes/);
  });
  it('LZW: a last strip shorter than the block decodes to its own length', () => {
    const data = new Uint8Array(100).fill(9);
    expect(unpackLzw(lzwEncode(data), 4096).length).toBe(100);
  });
  it('LZW: a code used before it is defined is "damaged", not a crash', () => {
    // 9-bit codes Clear (256), 300: 100000000 100101100
    expect(() => unpackLzw(Uint8Array.from([0x80, 0x4b, 0x00]), 100)).toThrow(/starts with code 300, which is not a literal; the file is damaged/);
    // Clear, 65, 300 (the next free code is 258): 100000000 001000001 100101100
    expect(() => unpackLzw(Uint8Array.from([0x80, 0x10, 0x65, 0x80]), 100)).toThrow(/holds code 300 before it is defined \(next free code 258\)/);
  });
  it('PackBits: −128 is a no-op and a repeat run past the end is refused', () => {
    expect(Array.from(unpackBits(Uint8Array.from([0x80, 0xfe, 7, 0x00, 5]), 10))).toEqual([7, 7, 7, 5]);
    expect(() => unpackBits(Uint8Array.from([0xfe, 7]), 2)).toThrow(/more than its declared 2 bytes/);
  });
  it('an 8 MB LZW bomb is refused quickly and without growing memory', () => {
    const bomb = lzwZeros();
    const before = process.memoryUsage().rss;
    const t0 = performance.now();
    expect(() => unpackLzw(bomb, 4096)).toThrow(/declared 4096 bytes/);
    expect(performance.now() - t0).toBeLessThan(200);
    expect(process.memoryUsage().rss - before).toBeLessThan(16 << 20);
  });
});
