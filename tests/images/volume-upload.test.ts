/**
 * Z-stacks at intake: an OME z-stack keeps its slices and its voxel size (OME PhysicalSizeX/Z, in µm or nm,
 * OME data model: Goldberg et al. 2005, doi:10.1186/gb-2005-6-5-r47), a stack whose description states
 * channels= / slices= is read as a stack, and one whose page count does not fit its declared sizes is refused
 * (422) quoting both. Files: tests/fixtures/volumes (generate.py).
 */
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { FieldDetail, UploadResponse } from '../../shared/schemas/fields.js';
import { readTiffInfo } from '../../server/images/decode.js';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t.close());

const plan = JSON.stringify([{ name: 'Stack', ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]);

describe('z-stacks at intake', () => {
  it('the voxel size comes from OME-XML in either unit; stacks without it have none', async () => {
    for (const f of ['u8.xyczt.ome.tif', 'u8.xyzct.ome.tif']) {
      const info = await readTiffInfo(dir + f);
      expect(info.sizeZ, f).toBe(5);
      expect(info.pixelSizeUm!, f).toBeCloseTo(0.1, 12);
      expect(info.zStepUm!, f).toBeCloseTo(0.35, 12);
    }
    expect((await readTiffInfo(dir + 'u8.stated.tif')).zStepUm).toBeNull();
  });
  it('an OME z-stack upload keeps 5 slices and the z step; the field summary shows it', async () => {
    const agent = await t.login('microscopist');
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', dir + 'u16.xyzct.ome.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const r = UploadResponse.parse(res.body).results[0];
    if (!r.ok) throw new Error(r.error);
    expect(r.field).toMatchObject({ sizeZ: 5, bitDepth: 16, width: 22, height: 18 });
    expect(r.field.zStepUm!).toBeCloseTo(0.35, 12);
    const list = await agent.get(`/api/fields/${r.field.id}`);
    expect(list.status).toBe(200);
    expect(FieldDetail.parse(list.body).zStepUm!).toBeCloseTo(0.35, 12);
  });
  it('a stack whose description states its sizes uploads as 2 channels × 5 slices', async () => {
    const agent = await t.login('microscopist');
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', dir + 'u8.stated.tif');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const r = UploadResponse.parse(res.body).results[0];
    if (!r.ok) throw new Error(r.error);
    expect(r.field).toMatchObject({ sizeZ: 5, zStepUm: null });
  });
  it('a page count that does not fit the declared sizes is refused, quoting both', async () => {
    const agent = await t.login('microscopist');
    const res = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', dir + 'bad_stated.tif');
    expect(res.status).toBe(422);
    expect(res.body.results[0]).toMatchObject({ ok: false, status: 422 });
    expect(res.body.results[0].error).toBe('the image description states 2 channels × 5 slices × 1 time point = 10 planes, but the file has 9 pages; the file is incomplete or its description is wrong');
  });
});
