/**
 * The decoding thread's limits (server/images/decode-pool.ts): a file whose checks or decoding need more
 * heap than DECODE_HEAP_MB, or more time than DECODE_TIMEOUT_MS, ends that thread; the upload gets a
 * one-line 422, nothing is stored, and the web server keeps serving (the next upload is decoded by a fresh
 * thread). The memory case is an OME-XML description of 200,000 channel elements (11 MB): parsing it into
 * objects needs far more than a 32 MB heap.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { tiffFromEntries, tiffPages, twoChannels } from './tiff.js';
import { storedState } from './stored.js';

function metadataBomb(elements: number) {
  const xml = '<OME><Image><Pixels SizeC="2" SizeZ="1" SizeT="1" DimensionOrder="XYCZT">' + '<Channel Name="c" ID="Channel:0:0" SamplesPerPixel="1"/>'.repeat(elements) + '</Pixels></Image></OME>';
  const desc = Buffer.from(xml + '\0');
  return tiffFromEntries([[256, 4, 1, 1], [257, 4, 1, 1], [258, 3, 1, 8], [270, 2, desc.length, 'blob'], [273, 4, 1, -1], [277, 3, 1, 1], [279, 4, 1, 1]], desc, new Uint8Array(1));
}

const [a, c] = twoChannels(16, 16);
const good = () => tiffPages(16, 16, [a, c]);

describe('heap limit', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp({ DECODE_HEAP_MB: '32' });
  });
  afterAll(() => t?.close());

  it('a file that needs more than 32 MB of heap to read is refused with a one-line 422; the server keeps serving', async () => {
    const agent = await t.login('microscopist');
    const url = `/api/coverslips/${t.world.coverslipA}/fields`;
    // the thread starts and decodes a genuine file within the limit
    expect((await agent.post(url).attach('files', good(), 'first.tif')).status).toBe(201);
    const before = await storedState(t);
    const res = await agent.post(url).attach('files', metadataBomb(200_000), 'bomb.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error).toBe('decoding "bomb.tif" needed more than the 32 MB of memory allowed for decoding one upload and was stopped');
    expect(await storedState(t)).toEqual(before);
    // the web server answers, and the next upload is decoded by a fresh thread
    expect((await agent.get('/api/health')).status).toBe(200);
    expect((await agent.get(`/api/coverslips/${t.world.coverslipA}/fields`)).body.fields).toHaveLength(1);
    const again = await agent.post(url).attach('files', good(), 'second.tif');
    expect(again.status, JSON.stringify(again.body)).toBe(201);
  });

  it('the label import route has the same limit', async () => {
    const agent = await t.login('microscopist');
    const fieldId = (await agent.get(`/api/coverslips/${t.world.coverslipA}/fields`)).body.fields[0].id;
    const res = await agent.post(`/api/fields/${fieldId}/cells/import`).attach('file', metadataBomb(200_000), 'labels.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error).toMatch(/^decoding "labels\.tif" needed more than the 32 MB of memory/);
    expect((await agent.get(`/api/fields/${fieldId}/cells`)).body.cells).toHaveLength(0);
  });
});

describe('time limit', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp({ DECODE_TIMEOUT_MS: '1' });
  });
  afterAll(() => t?.close());

  it('decoding that overruns DECODE_TIMEOUT_MS is stopped with a one-line 422 and nothing is stored', async () => {
    const agent = await t.login('microscopist');
    const before = await storedState(t);
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', good(), 'slow.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(422);
    expect(res.body.error).toBe('decoding "slow.tif" took longer than the 1 ms allowed for decoding one upload and was stopped');
    expect(await storedState(t)).toEqual(before);
    expect((await agent.get('/api/health')).status).toBe(200);
    expect((await agent.get(`/api/studies/${t.world.studyA}/fields`)).status).toBe(200);
  });
});
