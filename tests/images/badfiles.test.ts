/**
 * The bad-file table, each through the HTTP API: a specific 4xx with a message a microscopist understands,
 * and afterwards no new object in the store, no new database row and no temp file left behind.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { allowConsoleError } from '../utils/setup.js';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { fixture } from './fixtures.js';
import { snapshot } from './helpers.js';

let t: TestApp;
let fieldId: number;
beforeAll(async () => {
  t = await makeTestApp();
  const agent = await t.login('microscopist');
  const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('uint16_2page.tif'));
  if (res.status !== 201) throw new Error(JSON.stringify(res.body));
  fieldId = res.body.results[0].field.id;
});
afterAll(() => t.close());

type Who = 'microscopist' | 'outsider';
interface Case {
  what: string;
  who?: Who;
  files: string[];
  plan?: unknown;
  url?: (w: TestApp['world']) => string;
  fieldName?: string;
  status: number;
  message: RegExp;
}

const cases: Case[] = [
  { what: 'truncated file', files: ['bad_truncated.tif'], status: 422, message: /truncated/ },
  { what: 'zero bytes', files: ['bad_empty.tif'], status: 422, message: /empty \(0 bytes\)/ },
  { what: 'not a TIFF', files: ['bad_not_tiff.tif'], status: 415, message: /not a TIFF image/ },
  { what: 'header claiming 200000 × 200000', files: ['bad_huge_header.tif'], status: 413, message: /200000×200000 pixels .* more than the limit of 268435456 pixels per plane/ },
  {
    what: 'mismatched channel sizes',
    files: ['single_ch1.tif', 'single_32x32.tif'],
    plan: [{ ch1: { file: 0, channel: 1 }, ch2: { file: 1, channel: 1 } }],
    status: 422,
    message: /channel 2 is 32×32 but channel 1 is 64×48/,
  },
  {
    what: 'mismatched pixel types',
    files: ['single_ch1.tif', 'single_8bit.tif'],
    plan: [{ ch1: { file: 0, channel: 1 }, ch2: { file: 1, channel: 1 } }],
    status: 422,
    message: /channel 2 is 8-bit integer but channel 1 is 16-bit integer/,
  },
  { what: 'one channel only', files: ['single_ch1.tif'], status: 422, message: /has only one channel; a field needs two/ },
  {
    what: 'a channel the file does not have',
    files: ['uint16_2page.tif'],
    plan: [{ ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 5 } }],
    status: 422,
    message: /2 channels, so channel 5 does not exist/,
  },
  {
    what: 'a mask (label image) of the wrong size',
    files: ['labels_32x32.tif'],
    url: () => `/api/fields/${fieldId}/cells/import`,
    fieldName: 'file',
    status: 422,
    message: /32 ?× ?32.*64 ?× ?48/,
  },
  { what: 'upload to a coverslip of another lab (lab B member → lab A coverslip)', who: 'outsider', files: ['uint16_2page.tif'], status: 404, message: /no coverslip/ },
  { what: 'upload to a coverslip of another lab (lab A member → lab B coverslip)', files: ['uint16_2page.tif'], url: (w) => `/api/coverslips/${w.coverslipB}/fields`, status: 404, message: /no coverslip/ },
  { what: 'plan naming a file that was not sent', files: ['uint16_2page.tif'], plan: [{ ch1: { file: 0, channel: 1 }, ch2: { file: 3, channel: 1 } }], status: 400, message: /refers to file 3/ },
  { what: 'no files at all', files: [], status: 400, message: /no files were uploaded/ },
];

describe('bad-file table through the HTTP API', () => {
  for (const c of cases) {
    it(`${c.what} → ${c.status}`, async () => {
      const before = await snapshot(t);
      const agent = await t.login(c.who ?? 'microscopist');
      let req = agent.post(c.url ? c.url(t.world) : `/api/coverslips/${t.world.coverslipA}/fields`);
      if (c.plan) req = req.field('plan', JSON.stringify(c.plan));
      if (c.files.length === 0) req = req.field('note', 'nothing');
      for (const f of c.files) req = req.attach(c.fieldName ?? 'files', fixture(f));
      const res = await req;
      expect(res.status, JSON.stringify(res.body)).toBe(c.status);
      expect(res.body.error).toMatch(c.message);
      expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts:\d+/); // no stack trace
      const after = await snapshot(t);
      expect(after.store).toEqual(before.store);
      expect(after.rows).toEqual(before.rows);
      expect(after.temps).toEqual([]);
    });
  }
});

describe('upload limits are settings', () => {
  let small: TestApp;
  beforeAll(async () => {
    small = await makeTestApp({ MAX_UPLOAD_BYTES: '10000', MAX_FILES_PER_REQUEST: '2' });
  });
  afterAll(() => small.close());
  it('a file over MAX_UPLOAD_BYTES → 413, nothing kept', async () => {
    const before = await snapshot(small);
    const agent = await small.login('microscopist');
    const res = await agent.post(`/api/coverslips/${small.world.coverslipA}/fields`).attach('files', fixture('uint16_2page.tif'));
    expect(res.status).toBe(413);
    expect(res.body.error).toMatch(/10000-byte upload limit/);
    expect(await snapshot(small)).toEqual(before);
  });
  it('more files than MAX_FILES_PER_REQUEST → 413, nothing kept', async () => {
    const before = await snapshot(small);
    const agent = await small.login('microscopist');
    const res = await agent
      .post(`/api/coverslips/${small.world.coverslipA}/fields`)
      .attach('files', fixture('single_ch1.tif'))
      .attach('files', fixture('single_ch2.tif'))
      .attach('files', fixture('single_ch1.tif'));
    expect(res.status).toBe(413);
    expect(res.body.error).toMatch(/at most 2/);
    expect(await snapshot(small)).toEqual(before);
  });
});

describe('failures after the file reached the store leave nothing behind', () => {
  it('a database failure while writing the rows removes the new store object (500, logged)', async () => {
    allowConsoleError();
    const before = await snapshot(t);
    const spy = vi.spyOn(t.ctx.db, 'transaction').mockImplementationOnce(() => {
      throw new Error('disk I/O error (injected)');
    });
    const agent = await t.login('microscopist');
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('uint16_tiled.tif'));
    spy.mockRestore();
    expect(res.status).toBe(500);
    expect(res.body.error).toMatch(/server error/);
    expect(await snapshot(t)).toEqual(before);
  });
  it('two uploads of the same new file at once: one stored object, two fields', async () => {
    const before = await snapshot(t);
    const agent = await t.login('microscopist');
    const send = () => agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', fixture('uint16_strips5.tif'));
    const [a, b] = await Promise.all([send(), send()]);
    expect([a.status, b.status]).toEqual([201, 201]);
    const after = await snapshot(t);
    expect(after.store.length - before.store.length).toBe(1);
    expect(after.rows.fields - before.rows.fields).toBe(2);
    expect(after.rows.files - before.rows.files).toBe(1);
    expect(after.temps).toEqual([]);
  });
});
