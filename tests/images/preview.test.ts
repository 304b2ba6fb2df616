/**
 * Previews of large fields (pyramid levels), fields of every sample type over /pixels, and the helpers behind previews.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { binHalf, percentiles, renderCompositePng } from '../../server/images/preview.js';
import { writeTiffU16 } from './tiffwrite.js';
import { expectedPlane, fixture } from './fixtures.js';
import { decodePixels, PIXELS_HEADER_BYTES } from '../../shared/pixels/codec.js';

let t: TestApp;
let tmp: string;
beforeAll(async () => {
  t = await makeTestApp();
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-prev-'));
});
afterAll(async () => {
  await t.close();
  fs.rmSync(tmp, { recursive: true, force: true });
});

const binary = (res: any, cb: (e: Error | null, b: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};

describe('helpers', () => {
  it('nearest-rank percentiles (common practice: value at rank ceil(p/100·n))', () => {
    const a = new Uint16Array([5, 1, 4, 2, 3, 10, 9, 8, 7, 6]);
    expect(percentiles(a, [0.1, 10, 50, 99.9, 100])).toEqual([1, 1, 5, 10, 10]);
    // float data: NaN pixels take no part (else the top of the display range would be NaN)
    const fl = Float32Array.from([NaN, 3, 1, NaN, 2, 4, NaN, 5, 6, 7, 8, 9, 10, NaN]);
    expect(percentiles(fl, [0.1, 10, 50, 99.9, 100])).toEqual([1, 1, 5, 10, 10]);
    const f = new Float32Array([0.5, -1, 2.25, 7]);
    expect(percentiles(f, [25, 75])).toEqual([-1, 2.25]);
  });
  it('2×2 mean binning, odd edges averaged over what exists', () => {
    const a = [1, 2, 3, 4, 5, 6, 7, 8, 9]; // 3×3
    const b = binHalf(a, 3, 3);
    expect([b.width, b.height]).toEqual([2, 2]);
    expect(Array.from(b.data)).toEqual([(1 + 2 + 4 + 5) / 4, (3 + 3 + 6 + 6) / 4, (7 + 8 + 7 + 8) / 4, 9]);
  });
});

describe('large fields get a downscaled level by default', () => {
  it('a 4096-pixel-wide field previews at 2048 wide, from 2×2 means', async () => {
    const W = 4096;
    const H = 16;
    const a = new Uint16Array(W * H).map((_, i) => (i % W) * 16);
    const b = new Uint16Array(W * H).map((_, i) => Math.floor(i / W) * 4000);
    const file = path.join(tmp, 'wide.tif');
    fs.writeFileSync(file, writeTiffU16([a, b], W, H));
    const agent = await t.login('microscopist');
    const up = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', file);
    expect(up.status).toBe(201);
    const id = up.body.results[0].field.id;
    const res = await agent.get(`/api/fields/${id}/preview.png?view=ch1&lo1=0&hi1=65535`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['x-syntopy-preview-size']).toBe('2048,8');
    const { data, info } = await sharp(res.body as Buffer).extractChannel(0).raw().toBuffer({ resolveWithObject: true });
    expect([info.width, info.height]).toEqual([2048, 8]);
    // level-1 pixel x = mean of source columns 2x and 2x+1 → (2x + 0.5)·16
    for (const x of [0, 100, 2047]) expect(data[x]).toBe(Math.floor((((2 * x + 0.5) * 16) * 255) / 65535 + 0.5));
    const full = await agent.get(`/api/fields/${id}/preview.png?view=ch2&max=4096`);
    expect(full.headers['x-syntopy-preview-size']).toBe('4096,16');
    const small = await agent.get(`/api/fields/${id}/preview.png?max=300`);
    expect(small.headers['x-syntopy-preview-size']).toBe('300,1');
  });
});

describe('float fields over /pixels', () => {
  it('float32 samples, so the header and the client agree on the sample type', async () => {
    const agent = await t.login('microscopist');
    const up = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('float32_deflate_fpred.tif'));
    expect(up.status, JSON.stringify(up.body)).toBe(201);
    const f = up.body.results[0].field;
    expect(f).toMatchObject({ bitDepth: 32, sampleFormat: 'float' });
    expect(f.facts.ch1.saturatedFraction).toBe(0);
    const res = await agent.get(`/api/fields/${f.id}/pixels`).buffer(true).parse(binary);
    const b = res.body as Buffer;
    // header: float32 (code 4), 32 bits, 64 × 48 × 1
    expect([b.subarray(0, 4).toString('latin1'), b[5], b[7], b.readUInt32LE(8), b.readUInt32LE(12), b.readUInt32LE(16)]).toEqual(['SYPX', 4, 32, 64, 48, 1]);
    const want1 = expectedPlane('float32', 0, 0, 64, 48);
    const want2 = expectedPlane('float32', 1, 0, 64, 48);
    for (const i of [0, 77, 3071]) {
      expect(b.readFloatLE(PIXELS_HEADER_BYTES + 4 * i)).toBe(want1[i]);
      expect(b.readFloatLE(PIXELS_HEADER_BYTES + 4 * (3072 + i))).toBe(want2[i]);
    }
    const px = decodePixels(new Uint8Array(b));
    expect(px.sampleType).toBe('float32');
    expect(px.ch1[77]).toBe(want1[77]);
    const prev = await agent.get(`/api/fields/${f.id}/preview.png`);
    expect(prev.status).toBe(200);
  });
  it('every sample type travels in its own type, values exact (uint32 is not squeezed into float32)', async () => {
    const agent = await t.login('microscopist');
    for (const [file, type, bits] of [['uint8_2page.tif', 'uint8', 8], ['uint16_2page.tif', 'uint16', 16], ['uint32_2page.tif', 'uint32', 32], ['float32_2page.tif', 'float32', 32]] as const) {
      const up = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture(file));
      expect(up.status, `${file}: ${JSON.stringify(up.body)}`).toBe(201);
      const res = await agent.get(`/api/fields/${up.body.results[0].field.id}/pixels`).buffer(true).parse(binary);
      expect(res.status).toBe(200);
      const px = decodePixels(new Uint8Array(res.body as Buffer));
      expect([file, px.sampleType, px.bitDepth, px.width, px.height, px.depth]).toEqual([file, type, bits, 64, 48, 1]);
      expect(Array.from(px.ch1)).toEqual(expectedPlane(type, 0, 0, 64, 48));
      expect(Array.from(px.ch2)).toEqual(expectedPlane(type, 1, 0, 64, 48));
    }
  });
  it('renderCompositePng (used by reports) gives a PNG of the asked size', async () => {
    const agent = await t.login('microscopist');
    const up = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('uint16_lzw_pred.tif'));
    const png = await renderCompositePng(t.ctx, up.body.results[0].field.id, { max: 32 });
    const m = await sharp(png).metadata();
    expect([m.format, m.width, m.height, m.channels]).toEqual(['png', 32, 24, 3]);
  });
  it('z out of range is a 400 naming the slices', async () => {
    const agent = await t.login('microscopist');
    const up = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }])).attach('files', fixture('ome_zstack_czyx.ome.tif'));
    const id = up.body.results[0].field.id;
    const bad = await agent.get(`/api/fields/${id}/pixels?z=7`);
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/0–2/);
    const ok = await agent.get(`/api/fields/${id}/pixels?z=2`).buffer(true).parse(binary);
    expect(ok.headers['x-syntopy-z']).toBe('slice 3 of 3');
    const z2 = decodePixels(new Uint8Array(ok.body as Buffer));
    expect([z2.sampleType, z2.depth]).toEqual(['float32', 1]);
    expect(Array.from(z2.ch1)).toEqual(Array.from(expectedPlane('float32', 0, 2, 64, 48)));
    expect(Array.from(z2.ch2)).toEqual(Array.from(expectedPlane('float32', 1, 2, 64, 48)));
  });
});

describe('preview disk cache', () => {
  it('is pruned oldest first down to the limit', async () => {
    const { prunePreviewCache } = await import('../../server/images/preview.js');
    const dir = path.join(tmp, 'cache');
    fs.mkdirSync(dir, { recursive: true });
    for (let i = 0; i < 5; i++) {
      fs.writeFileSync(path.join(dir, `k${i}.png`), Buffer.alloc(1000));
      fs.writeFileSync(path.join(dir, `k${i}.json`), '{}');
      fs.utimesSync(path.join(dir, `k${i}.png`), new Date(1e12 + i * 1000), new Date(1e12 + i * 1000));
    }
    await prunePreviewCache(dir, 2500);
    expect(fs.readdirSync(dir).sort()).toEqual(['k3.json', 'k3.png', 'k4.json', 'k4.png']);
  });
});
