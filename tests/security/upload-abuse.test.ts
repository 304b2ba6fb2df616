/**
 * Upload abuse through the real multipart route (POST /api/coverslips/:id/fields): hostile TIFF headers (IFD
 * loops, offsets past the end, huge declared size), more files than allowed, an oversize file, polyglots.
 * Each is refused with a 4xx and leaves nothing behind: no files / fields / cells row, no store object, no
 * temp file. (tests/images/{hostile,badfiles}.test.ts test the decoder and the named messages; this file
 * tests the route end to end with hand-built bytes.) Attack classes: OWASP WSTG v4.2 WSTG-BUSL-08/09
 * (unexpected file types, malicious files); TIFF structure per TIFF 6.0 (Adobe 1992).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { polyglots, tiffHugeDeclared, tiffIfdLoop, tiffIfdSelfLoop, tiffOffsetPastEnd, tiffPages, twoChannels } from './tiff.js';
import { storedState, uploadTiffs } from './stored.js';

let t: TestApp;
const MAX_FILES = 4;
const MAX_BYTES = 64 * 1024;
beforeAll(async () => {
  t = await makeTestApp({ MAX_FILES_PER_REQUEST: String(MAX_FILES), MAX_UPLOAD_BYTES: String(MAX_BYTES) });
});
afterAll(() => t?.close());

async function upload(files: { name: string; bytes: Buffer }[]) {
  return uploadTiffs(t, await t.login('microscopist'), files);
}

describe('upload abuse is refused and nothing is stored', () => {
  const cases: [string, () => { name: string; bytes: Buffer }[]][] = [
    ['IFD loop (two directories pointing at each other)', () => [{ name: 'loop.tif', bytes: tiffIfdLoop() }]],
    ['IFD pointing at itself', () => [{ name: 'self.tif', bytes: tiffIfdSelfLoop() }]],
    ['strip offset past the end of the file', () => [{ name: 'strip.tif', bytes: tiffOffsetPastEnd('strip') }]],
    ['first IFD offset past the end of the file', () => [{ name: 'ifd.tif', bytes: tiffOffsetPastEnd('ifd') }]],
    ['a 400-byte file declaring 1,000,000 × 1,000,000 pixels', () => [{ name: 'huge.tif', bytes: tiffHugeDeclared() }]],
    ['declared 65535 × 65535 (just under 2^32 pixels)', () => [{ name: 'huge2.tif', bytes: tiffHugeDeclared(65535, 65535) }]],
    ...polyglots()
      .filter((p) => p.name !== 'tiff-html-zip.tif')
      .map((p) => [`polyglot ${p.name}`, () => [p]] as [string, () => { name: string; bytes: Buffer }[]]),
  ];
  for (const [what, make] of cases) {
    it(what, async () => {
      const before = await storedState(t);
      const t0 = Date.now();
      const res = await upload(make());
      expect(Date.now() - t0).toBeLessThan(10_000); // no endless loop, no huge allocation
      expect(res.status, JSON.stringify(res.body)).toBeGreaterThanOrEqual(400);
      expect(res.status).toBeLessThan(500);
      expect(typeof res.body.error).toBe('string');
      expect(await storedState(t)).toEqual(before);
    });
  }

  // A valid TIFF followed by an HTML page and a ZIP archive is refused: nothing may follow the last byte its
  // directories refer to (server/images/tiff-header.ts checkTrailingData).
  it('polyglot tiff-html-zip.tif (a valid TIFF with HTML and a ZIP appended)', async () => {
    const before = await storedState(t);
    const res = await upload(polyglots().filter((p) => p.name === 'tiff-html-zip.tif'));
    const after = await storedState(t);
    if (res.status === 201) {
      // undo, so the rest of the file sees a clean world
      const agent = await t.login('microscopist');
      for (const r of res.body.results) await agent.delete(`/api/fields/${r.field.id}`);
    }
    expect(res.status).toBeGreaterThanOrEqual(400);
    expect(after).toEqual(before);
  });

  it(`more files than MAX_FILES_PER_REQUEST (${MAX_FILES + 1} small files) → 413`, async () => {
    const before = await storedState(t);
    const [a, c] = twoChannels(8, 8);
    const small = tiffPages(8, 8, [a, c]);
    const res = await upload(Array.from({ length: MAX_FILES + 1 }, (_, i) => ({ name: `s${i}.tif`, bytes: Buffer.concat([small, Buffer.from([i])]) })));
    expect(res.status).toBe(413);
    expect(await storedState(t)).toEqual(before);
  });

  it('a file over MAX_UPLOAD_BYTES → 413, and the partial temp file is gone', async () => {
    const before = await storedState(t);
    const [a, c] = twoChannels(128, 128); // 64 KiB of pixels per channel: over the 64 KiB limit
    const res = await upload([{ name: 'big.tif', bytes: tiffPages(128, 128, [a, c]) }]);
    expect(res.status).toBe(413);
    expect(await storedState(t)).toEqual(before);
  });

  it('a non-multipart body and a multipart body without files → 400, nothing stored', async () => {
    const before = await storedState(t);
    const agent = await t.login('microscopist');
    expect((await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).set('content-type', 'image/tiff').send(Buffer.from('II*\0'))).status).toBe(400);
    expect((await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', '[]')).status).toBe(400);
    expect(await storedState(t)).toEqual(before);
  });

  it('an anonymous or outside upload is refused before anything reaches the disk', async () => {
    const before = await storedState(t);
    const [a, c] = twoChannels(16, 16);
    const body = tiffPages(16, 16, [a, c]);
    const supertest = (await import('supertest')).default;
    expect((await supertest(t.app).post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', body, 'x.tif')).status).toBe(401);
    const outsider = await t.login('outsider');
    expect((await outsider.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', body, 'x.tif')).status).toBe(404);
    expect(await storedState(t)).toEqual(before);
  });

  it('control: the same builder makes a file that is accepted (so the refusals above are about the abuse)', async () => {
    const before = await storedState(t);
    const [a, c] = twoChannels(16, 16);
    const res = await upload([{ name: 'good.tif', bytes: tiffPages(16, 16, [a, c]) }]);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const after = await storedState(t);
    expect(after.temps).toEqual([]);
    expect(after.fields).toBe(before.fields + 1);
    expect(after.store).toBe(before.store + 1);
  });
});
