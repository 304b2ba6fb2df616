/**
 * Upload through the HTTP API (Supertest): a real two-channel file becomes a field whose facts and preview
 * pixels are right; pairs of single-channel files; several fields per request; identical files stored once;
 * permissions; delete (hard, and soft while measurements refer to the field).
 */
import fs from 'node:fs';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { allowConsoleError } from '../utils/setup.js';
import { FieldDetail, UploadResponse } from '../../shared/schemas/fields.js';
import { cells, measurements, recipes, runs } from '../../server/db/schema.js';
import { loadFieldPixels, clearPixelCache, ingestField } from '../../server/images/intake.js';
import { expectedPlane, fixture } from './fixtures.js';
import { decodePixels, PIXELS_CONTENT_TYPE, PIXELS_HEADER_BYTES } from '../../shared/pixels/codec.js';
import { snapshot } from './helpers.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t.close());

const W = 64;
const H = 48;
const ch1 = expectedPlane('uint16', 0, 0, W, H);
const ch2 = expectedPlane('uint16', 1, 0, W, H);

/** binary body parser for supertest */
const binary = (res: any, cb: (e: Error | null, b: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};

describe('upload of a two-channel 16-bit file', () => {
  let fieldId: number;
  it('creates a field with the right facts', async () => {
    const agent = await t.login('microscopist');
    const res = await agent
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ name: 'Field one', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]))
      .attach('files', fixture('uint16_2page.tif'));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const body = UploadResponse.parse(res.body);
    const r = body.results[0];
    if (!r.ok) throw new Error(r.error);
    fieldId = r.field.id;
    expect(r.field).toMatchObject({ name: 'Field one', width: 64, height: 48, bitDepth: 16, sampleFormat: 'uint', sizeZ: 1, saturated: false });
    // facts recomputed from the generator's formula (tests/fixtures/images/generate.py)
    const stats = (a: number[]) => ({ min: Math.min(...a), max: Math.max(...a), mean: a.reduce((s, v) => s + v, 0) / a.length });
    expect(r.field.facts.ch1.min).toBe(stats(ch1).min);
    expect(r.field.facts.ch1.max).toBe(stats(ch1).max);
    expect(r.field.facts.ch1.mean).toBeCloseTo(stats(ch1).mean, 9);
    expect(r.field.facts.ch2.max).toBe(stats(ch2).max);
    expect(r.field.facts.ch1.saturatedFraction).toBe(0);
    expect(r.field.facts.ch1.plateauFraction).toBeNull();
  });

  it('GET /api/fields/:id gives the detail with the stored file', async () => {
    const agent = await t.login('collaborator');
    const res = await agent.get(`/api/fields/${fieldId}`);
    expect(res.status).toBe(200);
    const d = FieldDetail.parse(res.body);
    expect(d.files[0].sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(d.files[0].sha256).toBe(d.files[1].sha256);
    expect(d.files.map((f) => f.channel)).toEqual([1, 2]);
    expect(d.canEdit).toBe(false);
    expect(d.studyId).toBe(t.world.studyA);
    // the stored object is the uploaded file, byte for byte
    const stored = await t.ctx.store.get(`${d.files[0].sha256.slice(0, 2)}/${d.files[0].sha256}.tif`);
    expect(Buffer.compare(stored, fs.readFileSync(fixture('uint16_2page.tif')))).toBe(0);
  });

  it('composite preview: ch1 green, ch2 magenta, pixels at known positions (fixed range)', async () => {
    const agent = await t.login('microscopist');
    const res = await agent.get(`/api/fields/${fieldId}/preview.png?view=composite&lo1=0&hi1=65535&lo2=0&hi2=65535`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('image/png');
    const { data, info } = await sharp(res.body as Buffer).raw().toBuffer({ resolveWithObject: true });
    expect([info.width, info.height, info.channels]).toEqual([64, 48, 3]);
    const byte = (v: number) => Math.floor((v * 255) / 65535 + 0.5);
    for (const [x, y] of [[0, 0], [5, 7], [63, 47], [31, 20], [12, 40]]) {
      const i = y * W + x;
      expect([data[i * 3], data[i * 3 + 1], data[i * 3 + 2]], `(${x},${y})`).toEqual([byte(ch2[i]), byte(ch1[i]), byte(ch2[i])]);
    }
  });

  it('grey preview with the default 0.1–99.9 % range, and a thumbnail', async () => {
    const agent = await t.login('microscopist');
    const res = await agent.get(`/api/fields/${fieldId}/preview.png?view=ch1`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    const [lo, hi] = String(res.headers['x-syntopy-range']).split(';')[0].split(',').map(Number);
    // nearest-rank percentiles of the formula values (common practice)
    const sorted = [...ch1].sort((a, b) => a - b);
    const n = sorted.length;
    expect(lo).toBe(sorted[Math.ceil(0.001 * n) - 1]);
    expect(hi).toBe(sorted[Math.ceil(0.999 * n) - 1]);
    expect((await sharp(res.body as Buffer).metadata()).channels).toBe(1); // a greyscale PNG
    const { data } = await sharp(res.body as Buffer).extractChannel(0).raw().toBuffer({ resolveWithObject: true });
    const i = 20 * W + 10;
    const want = Math.min(255, Math.max(0, Math.floor(((ch1[i] - lo) * 255) / (hi - lo) + 0.5)));
    expect(data[i]).toBe(want);
    const thumb = await agent.get(`/api/fields/${fieldId}/preview.png?max=32`).buffer(true).parse(binary);
    const m = await sharp(thumb.body as Buffer).metadata();
    expect([m.width, m.height]).toEqual([32, 24]);
    // second request is served from the disk cache
    const again = await agent.get(`/api/fields/${fieldId}/preview.png?max=32`).buffer(true).parse(binary);
    expect(Buffer.compare(again.body as Buffer, thumb.body as Buffer)).toBe(0);
  });

  it('GET /pixels returns the pixel header then ch1 then ch2 as little-endian Uint16', async () => {
    const agent = await t.login('collaborator');
    const res = await agent.get(`/api/fields/${fieldId}/pixels`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toContain(PIXELS_CONTENT_TYPE);
    const b = res.body as Buffer;
    // header: "SYPX", version 1, uint16 (code 2), 2 channels, 16 bits, 64 × 48 × 1
    expect(b.subarray(0, 4).toString('latin1')).toBe('SYPX');
    expect([b[4], b[5], b[6], b[7], b.readUInt32LE(8), b.readUInt32LE(12), b.readUInt32LE(16)]).toEqual([1, 2, 2, 16, 64, 48, 1]);
    expect(b.length).toBe(PIXELS_HEADER_BYTES + 2 * 2 * W * H);
    for (const i of [0, 1, 100, 3071]) {
      expect(b.readUInt16LE(PIXELS_HEADER_BYTES + 2 * i)).toBe(ch1[i]);
      expect(b.readUInt16LE(PIXELS_HEADER_BYTES + 2 * (W * H + i))).toBe(ch2[i]);
    }
    const px = decodePixels(new Uint8Array(b));
    expect([px.width, px.height, px.depth, px.bitDepth, px.sampleType]).toEqual([64, 48, 1, 16, 'uint16']);
    expect(Array.from(px.ch2)).toEqual(ch2);
  });

  it('loadFieldPixels decodes from the store after the cache is cleared', async () => {
    clearPixelCache();
    const px = await loadFieldPixels(t.ctx, fieldId);
    expect(Array.from(px.ch2)).toEqual(ch2);
    expect(px.zLabel).toBe('single plane');
  });

  it('other labs get 404, collaborators 403 on writes', async () => {
    const outsider = await t.login('outsider');
    expect((await outsider.get(`/api/fields/${fieldId}`)).status).toBe(404);
    expect((await outsider.get(`/api/fields/${fieldId}/preview.png`)).status).toBe(404);
    expect((await outsider.get(`/api/coverslips/${t.world.coverslipA}/fields`)).status).toBe(404);
    const collab = await t.login('collaborator');
    const up = await collab.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('uint16_2page.tif'));
    expect(up.status).toBe(403);
    expect((await collab.delete(`/api/fields/${fieldId}`)).status).toBe(403);
  });
});

describe('pairs, several fields, duplicates, z-stacks', () => {
  it('ingestField called directly (as the demo seed does) copies, never moves, its source files', async () => {
    const src = fixture('uint16_tiled_deflate.tif');
    const f = await ingestField(t.ctx, {
      coverslipId: t.world.coverslipA,
      userId: null,
      name: 'seeded',
      sources: [
        { path: src, originalName: 'seeded.tif', channel: 2 },
        { path: src, originalName: 'seeded.tif', channel: 1 },
      ],
    });
    expect(fs.existsSync(src)).toBe(true);
    expect(f).toMatchObject({ name: 'seeded', channel1: 2, channel2: 1, width: 64, height: 48 });
    const px = await loadFieldPixels(t.ctx, f.id);
    expect(Array.from(px.ch1)).toEqual(ch2);
  });

  it('UTF-8 file names survive the upload', async () => {
    const agent = await t.login('microscopist');
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('uint8_2page.tif'), 'Zelle µ1 – Kontrolle.tif');
    expect(res.status).toBe(201);
    expect(res.body.results[0].name).toBe('Zelle µ1 – Kontrolle');
  });

  it('two single-channel files paired as channel 1 and 2', async () => {
    const agent = await t.login('microscopist');
    const res = await agent
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 1, channel: 1 } }]))
      .attach('files', fixture('single_ch1.tif'))
      .attach('files', fixture('single_ch2.tif'));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const r = res.body.results[0];
    expect(r.name).toBe('single_ch1 + single_ch2');
    const px = await loadFieldPixels(t.ctx, r.field.id);
    expect(Array.from(px.ch1)).toEqual(ch1);
    expect(Array.from(px.ch2)).toEqual(ch2);
  });

  it('several fields in one request, each with its own result; a bad one does not stop the others', async () => {
    const before = await snapshot(t);
    const agent = await t.login('microscopist');
    const res = await agent
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field(
        'plan',
        JSON.stringify([
          { name: 'ome', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } },
          { name: 'bad pair', ch1: { file: 1, channel: 1 }, ch2: { file: 2, channel: 1 } },
          { name: 'stack', ch1: { file: 3, channel: 2 }, ch2: { file: 3, channel: 3 } },
        ]),
      )
      .attach('files', fixture('ome_2ch.ome.tif'))
      .attach('files', fixture('single_ch1.tif'))
      .attach('files', fixture('single_32x32.tif'))
      .attach('files', fixture('ome_zstack.ome.tif'));
    expect(res.status).toBe(207);
    const [a, b, c] = res.body.results;
    expect(a.ok).toBe(true);
    expect(a.field.channelNames).toEqual(['Tubulin-488', 'Actin 568']);
    expect(a.field.pixelSizeUm).toBeCloseTo(0.065, 12);
    expect(b).toMatchObject({ ok: false, status: 422 });
    expect(b.error).toContain('channel 2 is 32×32 but channel 1 is 64×48');
    expect(c.ok).toBe(true);
    expect(c.field).toMatchObject({ sizeZ: 5, channelNames: ['GFP', 'mCherry'] });
    const after = await snapshot(t);
    expect(after.rows.fields - before.rows.fields).toBe(2);
    expect(after.temps).toEqual([]);
    // z choices for analysis: slice, range (volume), maximum-intensity projection
    const id = c.field.id;
    const s3 = await loadFieldPixels(t.ctx, id, { z: 3 });
    expect(Array.from(s3.ch1)).toEqual(expectedPlane('uint16', 1, 3, W, H));
    expect(s3.zLabel).toBe('slice 4 of 5');
    const dflt = await loadFieldPixels(t.ctx, id);
    expect(dflt.z).toBe(2);
    const vol = await loadFieldPixels(t.ctx, id, { z: { from: 1, to: 3 } });
    expect(vol.depth).toBe(3);
    expect(Array.from(vol.ch2.subarray(2 * W * H))).toEqual(expectedPlane('uint16', 2, 3, W, H));
    const mip = await loadFieldPixels(t.ctx, id, { z: 'mip' });
    const planes = [0, 1, 2, 3, 4].map((z) => expectedPlane('uint16', 1, z, W, H));
    expect(Array.from(mip.ch1)).toEqual(planes[0].map((_, i) => Math.max(...planes.map((p) => p[i]))));
    const prev = await agent.get(`/api/fields/${id}/preview.png?z=mip&max=20`);
    expect(prev.status).toBe(200);
  });

  it('identical files are stored once', async () => {
    const agent = await t.login('microscopist');
    const before = await snapshot(t);
    const res = await agent
      .post(`/api/coverslips/${t.world.coverslipA}/fields`)
      .field('plan', JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }, { ch1: { file: 1, channel: 2 }, ch2: { file: 1, channel: 1 } }]))
      .attach('files', fixture('uint16_2page.tif'))
      .attach('files', fixture('uint16_2page.tif'));
    expect(res.status).toBe(201);
    const after = await snapshot(t);
    expect(after.rows.fields - before.rows.fields).toBe(2);
    expect(after.rows.files).toBe(before.rows.files);
    expect(after.store).toEqual(before.store);
    expect(after.temps).toEqual([]);
  });

  it('saturation: at the ceiling and at a plateau below it', async () => {
    const agent = await t.login('microscopist');
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('saturated.tif'));
    expect(res.status).toBe(201);
    const f = res.body.results[0].field;
    // generate.py: ch1 has 100 of 3072 pixels at 65535; ch2 has 200 pixels at 4095 (its maximum)
    expect(f.facts.ch1.saturatedFraction).toBeCloseTo(100 / 3072, 12);
    expect(f.facts.ch2.saturatedFraction).toBe(0);
    expect(f.facts.ch2.max).toBe(4095);
    expect(f.facts.ch2.plateauFraction).toBeCloseTo(200 / 3072, 12);
    expect(f.saturated).toBe(true);
  });

  it('study and coverslip listings', async () => {
    const agent = await t.login('biologist');
    const a = await agent.get(`/api/coverslips/${t.world.coverslipA}/fields`);
    const b = await agent.get(`/api/studies/${t.world.studyA}/fields`);
    expect(a.status).toBe(200);
    expect(b.body.fields.length).toBe(a.body.fields.length);
    expect(b.body.fields[0].conditionId).toBe(t.world.conditionA);
  });
});

describe('delete', () => {
  const uploadOne = async (file: string) => {
    const agent = await t.login('microscopist');
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture(file));
    expect(res.status).toBe(201);
    return res.body.results[0].field.id as number;
  };
  it('hard delete removes the row, and the stored file when nothing else uses it', async () => {
    const before = await snapshot(t);
    const id = await uploadOne('uint8_2page.tif');
    const agent = await t.login('microscopist');
    const res = await agent.delete(`/api/fields/${id}`);
    expect(res.body).toEqual({ ok: true, soft: false });
    const after = await snapshot(t);
    expect(after.store).toEqual(before.store);
    expect(after.rows.fields).toBe(before.rows.fields);
    expect((await agent.get(`/api/fields/${id}`)).status).toBe(404);
  });
  it('soft delete while measurements refer to the field', async () => {
    const id = await uploadOne('uint32_2page.tif');
    const db = t.ctx.db;
    const recipe = db.insert(recipes).values({ name: 'r', version: 1, settings: {} }).returning().get();
    const run = db.insert(runs).values({ studyId: t.world.studyA, recipeId: recipe.id, scopeKind: 'field', scopeId: id }).returning().get();
    const cell = db.insert(cells).values({ fieldId: id, name: 'c', geometry: { kind: 'rect', x: 0, y: 0, width: 4, height: 4 } }).returning().get();
    db.insert(measurements).values({ runId: run.id, cellId: cell.id, fieldId: id, pixels: 16, provenance: {} }).run();
    const agent = await t.login('microscopist');
    const res = await agent.delete(`/api/fields/${id}`);
    expect(res.body).toEqual({ ok: true, soft: true });
    const list = await agent.get(`/api/coverslips/${t.world.coverslipA}/fields`);
    expect(list.body.fields.some((f: { id: number }) => f.id === id)).toBe(false);
    // measurements can still read its pixels
    const px = await loadFieldPixels(t.ctx, id);
    expect(px.bitDepth).toBe(32);
  });
  void allowConsoleError;
});
