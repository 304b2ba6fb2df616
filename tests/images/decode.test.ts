/**
 * Every fixture decodes pixel-exactly against the values its writer (tifffile / libtiff tiffcp, see
 * tests/fixtures/images/generate.py) stored; metadata (sizes, channel names, pixel size, z) as written.
 */
import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { decodeChannel, decodeChannels, readTiffInfo, ImageInputError } from '../../server/images/decode.js';
import { expectedPlane, fixture, manifest } from './fixtures.js';

const good = manifest().filter((r) => r.dtype !== 'bad' && !r.name.startsWith('saturated') && !r.name.startsWith('labels'));

describe('fixture table decodes pixel-exactly (reference: tifffile / libtiff writers)', () => {
  it('has the whole table', () => {
    expect(good.length).toBeGreaterThanOrEqual(25);
  });
  for (const row of good) {
    it(`${row.name} — ${row.notes}`, async () => {
      const info = await readTiffInfo(fixture(row.name));
      expect(info.width).toBe(row.width);
      expect(info.height).toBe(row.height);
      expect(info.channelCount).toBe(row.channels);
      expect(info.sizeZ).toBe(row.sizeZ);
      expect(info.sampleFormat).toBe(row.dtype === 'float32' ? 'float' : 'uint');
      expect(info.bitsPerSample).toBe({ uint8: 8, uint16: 16, uint32: 32, float32: 32 }[row.dtype as 'uint8']);
      // single-channel files are channel formula c=1 for single_ch2 / single_8bit, else c=0
      const cOffset = row.name === 'single_ch2.tif' || row.name === 'single_8bit.tif' ? 1 : 0;
      // both paths: from a file path (bounded header reads) and from bytes in memory
      const bytes = new Uint8Array(fs.readFileSync(fixture(row.name)));
      for (let c = 1; c <= row.channels; c++) {
        const d = await decodeChannel(c % 2 ? fixture(row.name) : bytes, c);
        expect(d.slices.length).toBe(row.sizeZ);
        for (let z = 0; z < row.sizeZ; z++) {
          const got = Array.from(d.slices[z]);
          const want = expectedPlane(row.dtype, c - 1 + cOffset, z, row.width, row.height);
          expect(got.length).toBe(want.length);
          let mismatches = 0;
          for (let i = 0; i < want.length; i++) if (got[i] !== want[i]) mismatches++;
          expect(mismatches, `channel ${c} slice ${z}`).toBe(0);
        }
        const ctor = { uint8: Uint8Array, uint16: Uint16Array, uint32: Uint32Array, float32: Float32Array }[row.dtype as 'uint8'];
        expect(d.slices[0]).toBeInstanceOf(ctor);
      }
    });
  }
});

describe('metadata', () => {
  it('OME-TIFF: channel names, pixel size, DimensionOrder', async () => {
    const info = await readTiffInfo(fixture('ome_2ch.ome.tif'));
    expect(info.channels.map((c) => c.name)).toEqual(['Tubulin-488', 'Actin 568']);
    expect(info.pixelSizeUm).toBeCloseTo(0.065, 12);
    expect(info.format).toBe('ome-tiff');
  });
  it('OME z-stack: sizes, nm converted to µm, XYCZT order', async () => {
    const info = await readTiffInfo(fixture('ome_zstack.ome.tif'));
    expect(info).toMatchObject({ channelCount: 3, sizeZ: 5, sizeT: 1, dimensionOrder: 'XYCZT' });
    expect(info.channels.map((c) => c.name)).toEqual(['DAPI', 'GFP', 'mCherry']);
    expect(info.pixelSizeUm).toBeCloseTo(0.11, 12);
    const info2 = await readTiffInfo(fixture('ome_zstack_czyx.ome.tif'));
    expect(info2.dimensionOrder).toBe('XYZCT');
  });
  it('BigTIFF and byte order are recognised', async () => {
    expect((await readTiffInfo(fixture('uint16_bigtiff.tif'))).bigTiff).toBe(true);
    expect((await readTiffInfo(fixture('uint16_bigtiff_lzw.tif'))).compression).toBe('LZW');
    expect((await readTiffInfo(fixture('uint16_2page.tif'))).bigTiff).toBe(false);
  });
  it('RGB: samples are channels, named by colour; layout reported', async () => {
    const a = await readTiffInfo(fixture('rgb8_chunky.tif'));
    expect(a.channels.map((c) => c.name)).toEqual(['red', 'green', 'blue']);
    expect(a.planar).toBe('chunky');
    expect((await readTiffInfo(fixture('rgb16_planar.tif'))).planar).toBe('planar');
  });
  it('decodeChannels returns both channels and all slices', async () => {
    const d = await decodeChannels(fixture('ome_zstack.ome.tif'), [2, 3]);
    expect(d.ch1.length).toBe(5);
    expect(Array.from(d.ch2[4].subarray(0, 3))).toEqual(expectedPlane('uint16', 2, 4, 64, 48).slice(0, 3));
  });
});

describe('refusals before decoding', () => {
  const refuse = async (p: Promise<unknown>, status: number, re: RegExp) => {
    const e = await p.then(() => null, (x) => x);
    expect(e).toBeInstanceOf(ImageInputError);
    expect((e as ImageInputError).status).toBe(status);
    expect((e as Error).message).toMatch(re);
  };
  it('zero bytes', () => refuse(readTiffInfo(fixture('bad_empty.tif')), 422, /empty \(0 bytes\)/));
  it('not a TIFF (quotes the bytes)', () => refuse(readTiffInfo(fixture('bad_not_tiff.tif')), 415, /not a TIFF.*89 50 4e 47/));
  it('truncated', () => refuse(decodeChannels(fixture('bad_truncated.tif'), [1, 2]), 422, /truncated/));
  it('200000 × 200000 header, against the pixel budget', () => refuse(readTiffInfo(fixture('bad_huge_header.tif')), 413, /200000×200000.*limit/));
  it('budget is a setting', () => refuse(readTiffInfo(fixture('uint16_2page.tif'), { pixelBudget: 1000 }), 413, /64×48/));
  it('one channel only', () => refuse(decodeChannels(fixture('single_ch1.tif'), [1, 2]), 422, /only one channel/));
  it('channel that does not exist', () => refuse(decodeChannel(fixture('uint16_2page.tif'), 3), 422, /2 channels, so channel 3/));
  it('a loop of directories is refused, not followed', async () => {
    const b = new Uint8Array(fs.readFileSync(fixture('single_ch1.tif')));
    const dv = new DataView(b.buffer);
    const ifd = dv.getUint32(4, true);
    const n = dv.getUint16(ifd, true);
    dv.setUint32(ifd + 2 + n * 12, ifd, true); // next-IFD pointer back to itself
    await refuse(readTiffInfo(b), 422, /loop/);
  });
  it('an absurd directory entry count is refused without allocating', async () => {
    const b = new Uint8Array(fs.readFileSync(fixture('single_ch1.tif')));
    const dv = new DataView(b.buffer);
    dv.setUint16(dv.getUint32(4, true), 65535, true);
    await refuse(readTiffInfo(b), 422, /claims 65535 entries/);
  });
});
