/**
 * Orthogonal sections for the workspace's XZ and YZ views (issue 16): `GET /api/fields/:id/pixels?section=xz|yz&at=`
 * answers one row (xz) or column (yz) of every slice in the one pixel format (shared/pixels/codec.ts), row k =
 * slice k. Checked against the slices the same endpoint gives one by one (`?z=k`, themselves checked against
 * tifffile in tests/images), for both OME dimension orders; refusals quote the value received.
 */
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { UploadResponse } from '../../shared/schemas/fields.js';
import { decodePixels, PIXELS_CONTENT_TYPE } from '../../shared/pixels/codec.js';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
let t: TestApp;
let mic: Awaited<ReturnType<TestApp['login']>>;
const ids: Record<string, number> = {};

const binary = (res: import('superagent').Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};
const get = (url: string) => mic.get(url).buffer(true).parse(binary);

beforeAll(async () => {
  t = await makeTestApp();
  mic = await t.login('microscopist');
  for (const file of ['u16.xyzct.ome.tif', 'f32.xyczt.ome.tif']) {
    const plan = JSON.stringify([{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]);
    const r = UploadResponse.parse((await mic.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', dir + file)).body).results[0];
    if (!r.ok) throw new Error(r.error);
    ids[file] = r.field.id;
  }
}, 60_000);
afterAll(() => t?.close());

describe('GET /api/fields/:id/pixels?section=', () => {
  for (const file of ['u16.xyzct.ome.tif', 'f32.xyczt.ome.tif']) {
    it(`${file}: XZ through a row and YZ through a column are those pixels of every slice`, async () => {
      const id = ids[file];
      const slices: ReturnType<typeof decodePixels>[] = [];
      for (let k = 0; k < 5; k++) slices.push(decodePixels((await get(`/api/fields/${id}/pixels?z=${k}`)).body));
      const { width: W, height: H } = slices[0];
      const y = 7, x = 13;
      const xz = await get(`/api/fields/${id}/pixels?section=xz&at=${y}`);
      expect(xz.status).toBe(200);
      expect(xz.headers['content-type']).toBe(PIXELS_CONTENT_TYPE);
      expect(xz.headers['x-syntopy-z']).toBe('section through row y = 7, x across, slices 1 to 5 top to bottom');
      const a = decodePixels(xz.body);
      expect([a.width, a.height, a.depth, a.sampleType]).toEqual([W, 5, 1, slices[0].sampleType]);
      const b = decodePixels((await get(`/api/fields/${id}/pixels?section=yz&at=${x}`)).body);
      expect([b.width, b.height]).toEqual([H, 5]);
      for (let k = 0; k < 5; k++) {
        for (const ch of ['ch1', 'ch2'] as const) {
          expect(Array.from(a[ch].subarray(k * W, (k + 1) * W))).toEqual(Array.from(slices[k][ch].subarray(y * W, (y + 1) * W)));
          expect(Array.from(b[ch].subarray(k * H, (k + 1) * H))).toEqual(Array.from({ length: H }, (_, yy) => slices[k][ch][yy * W + x]));
        }
      }
    });
  }

  it('refuses a position outside the field, a missing or stray "at", a z beside a section and an unknown section, quoting each', async () => {
    const id = ids['u16.xyzct.ome.tif'];
    const cases: [string, RegExp][] = [
      ['section=xz&at=18', /at=18 is outside the field: the rows run 0–17/],
      ['section=yz&at=22', /at=22 is outside the field: the columns run 0–21/],
      ['section=xz', /a xz section needs "at": the row y it passes through/],
      ['section=yz&at=2&z=1', /a section runs through every slice; leave out z \(got 1\)/],
      ['at=3', /"at" \(got 3\) belongs to a section/],
      ['section=xy&at=1', /section must be "xz" or "yz", got "xy"/],
      ['section=xz&at=-1', /at must be 0 or more, got -1/],
      ['section=xz&at=1.5', /at must be a whole pixel position, got 1.5/],
    ];
    for (const [q, msg] of cases) {
      const res = await mic.get(`/api/fields/${id}/pixels?${q}`);
      expect(res.status, q).toBe(400);
      expect(res.body.error, q).toMatch(msg);
    }
  });
});
