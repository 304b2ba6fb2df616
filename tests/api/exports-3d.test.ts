/**
 * Outlines and label images of a stack keep their depth (issue 16). GeoJSON: an outline with a z range carries
 * it as `properties.z` and the import gives it back; a 3-D label cell is its footprint with the slices it
 * spans. Label TIFF: a field with 3-D cells exports a label stack, one page per slice, holding exactly the
 * voxels runs measure (`cellVoxels`); the 3-D label import reads it back identically. Reference: the fixture
 * label stack written by tifffile (tests/fixtures/volumes/generate.py) comes back page for page. Refusals
 * quote what was received.
 */
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { UploadResponse } from '../../shared/schemas/fields.js';
import { CellList, OutlineCollection, cellVoxels, type Cell } from '../../shared/schemas/cells.js';
import { decodeChannel } from '../../server/images/decode.js';

const dir = fileURLToPath(new URL('../fixtures/volumes/', import.meta.url));
const W = 22, H = 18, Z = 5;
let t: TestApp;
let bio: Awaited<ReturnType<TestApp['login']>>;

const binary = (r: import('superagent').Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  r.on('data', (c: Buffer) => chunks.push(c));
  r.on('end', () => cb(null, Buffer.concat(chunks)));
};
async function stackField(name: string): Promise<number> {
  const plan = JSON.stringify([{ name, ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } }]);
  const r = UploadResponse.parse((await bio.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', plan).attach('files', dir + 'u16.xyzct.ome.tif')).body).results[0];
  if (!r.ok) throw new Error(r.error);
  expect(r.field.sizeZ).toBe(Z);
  return r.field.id;
}
const cellsOf = async (f: number): Promise<Cell[]> => CellList.parse((await bio.get(`/api/fields/${f}/cells`)).body).cells;
const labelTiff = async (f: number) => {
  const res = await bio.get(`/api/fields/${f}/cells/labels.tiff`).buffer(true).parse(binary);
  expect(res.status, String(res.body).slice(0, 200)).toBe(200);
  return res.body as Buffer;
};
const geojson = async (f: number) => OutlineCollection.parse(JSON.parse((await bio.get(`/api/fields/${f}/cells.geojson`).buffer(true).parse(binary)).body.toString('utf8')));
const postGeojson = (f: number, doc: unknown) => bio.post(`/api/fields/${f}/cells/geojson`).attach('file', Buffer.from(JSON.stringify(doc)), 'outlines.geojson');
const voxelsOf = (c: Cell) => Array.from(cellVoxels(c.geometry, W, H, 0, Z));

beforeAll(async () => {
  t = await makeTestApp();
  bio = await t.login('biologist');
}, 60_000);
afterAll(() => t?.close());

describe('label-stack TIFF export', () => {
  it('a 3-D label import exports as the same label stack, page for page, and imports back as the same cells', async () => {
    const a = await stackField('labels A');
    expect((await bio.post(`/api/fields/${a}/cells/import`).attach('file', dir + 'labels3d.tif')).status).toBe(201);
    const tiff = await labelTiff(a);
    const back = await decodeChannel(new Uint8Array(tiff), 1, { pages: 'slices' });
    const original = await decodeChannel(dir + 'labels3d.tif', 1, { pages: 'slices' });
    expect(back.slices).toHaveLength(Z);
    for (let z = 0; z < Z; z++) expect(Array.from(back.slices[z]), `slice ${z + 1}`).toEqual(Array.from(original.slices[z]));
    const b = await stackField('labels B');
    expect((await bio.post(`/api/fields/${b}/cells/import`).attach('file', tiff, 'exported.tif')).status).toBe(201);
    const [ca, cb] = [await cellsOf(a), await cellsOf(b)];
    expect(ca.every((c) => c.geometry.kind === 'label3d')).toBe(true);
    expect(cb.map((c) => [c.name, c.geometry, c.zRange, c.voxelCount])).toEqual(ca.map((c) => [c.name, c.geometry, c.zRange, c.voxelCount]));
  });

  it('outlines with z ranges export as the voxels runs measure; imported back, each cell has exactly those voxels', async () => {
    const f = await stackField('drawn');
    for (const body of [
      { name: 'Low box', geometry: { kind: 'rect', x: 1, y: 1, width: 8, height: 7, z: [1, 2] } },
      { name: 'High box', geometry: { kind: 'rect', x: 3, y: 3, width: 8, height: 7, z: [3, 5] } },
      { name: 'Column', geometry: { kind: 'ellipse', cx: 17, cy: 12, rx: 3.5, ry: 4 } },
      { name: 'Bg', role: 'background', geometry: { kind: 'rect', x: 0, y: 0, width: 22, height: 18 } },
    ])
      expect((await bio.post(`/api/fields/${f}/cells`).send(body)).status).toBe(201);
    const tiff = await labelTiff(f);
    const pages = (await decodeChannel(new Uint8Array(tiff), 1, { pages: 'slices' })).slices;
    expect(pages).toHaveLength(Z);
    const drawn = (await cellsOf(f)).filter((c) => c.role === 'cell');
    // every labelled voxel belongs to its cell, and only cells' voxels are labelled (footprints overlap, voxels do not)
    const flat = pages.flatMap((p) => Array.from(p));
    drawn.forEach((c, i) => expect(voxelsOf(c).every((v) => flat[v] === i + 1), c.name).toBe(true));
    expect(flat.filter((v) => v > 0).length).toBe(drawn.reduce((n, c) => n + c.voxelCount, 0));
    const g = await stackField('drawn again');
    expect((await bio.post(`/api/fields/${g}/cells/import`).attach('file', tiff, 'drawn.tif')).status).toBe(201);
    const again = await cellsOf(g);
    expect(again.map((c) => c.geometry.kind)).toEqual(['label3d', 'label3d', 'label3d']);
    expect(again.map(voxelsOf)).toEqual(drawn.map(voxelsOf));
    expect(again.map((c) => c.zRange)).toEqual([[1, 2], [3, 5], [1, 5]]);
  });

  it('refuses cells that share a voxel, naming both and the slice; a single-plane export stays one page', async () => {
    const f = await stackField('overlap');
    await bio.post(`/api/fields/${f}/cells`).send({ name: 'Left', geometry: { kind: 'rect', x: 0, y: 0, width: 5, height: 5, z: [1, 3] } });
    await bio.post(`/api/fields/${f}/cells`).send({ name: 'Right', geometry: { kind: 'rect', x: 3, y: 0, width: 5, height: 5, z: [3, 4] } });
    const res = await bio.get(`/api/fields/${f}/cells/labels.tiff`);
    expect(res.status).toBe(409);
    expect(res.body.error).toMatch(/^cells "Left" \(id \d+\) and "Right" \(id \d+\) share voxel \(3, 0\) of slice 3; a label image gives each voxel one cell/);
    const flat = await stackField('no depth');
    await bio.post(`/api/fields/${flat}/cells`).send({ name: 'Plain', geometry: { kind: 'rect', x: 0, y: 0, width: 5, height: 5 } });
    expect((await decodeChannel(new Uint8Array(await labelTiff(flat)), 1, { pages: 'slices' })).slices).toHaveLength(1);
  });
});

describe('GeoJSON of a stack', () => {
  it('carries z ranges and reads them back: the same outlines with the same slices', async () => {
    const f = await stackField('geo drawn');
    for (const body of [
      { name: 'Box', geometry: { kind: 'rect', x: 1, y: 1, width: 8, height: 7, z: [2, 4] } },
      { name: 'Tri', geometry: { kind: 'polygon', points: [[10, 2], [20, 4], [14, 15]], z: [5, 5] } },
      { name: 'Round', geometry: { kind: 'ellipse', cx: 6, cy: 13, rx: 3, ry: 2.5 } },
    ])
      expect((await bio.post(`/api/fields/${f}/cells`).send(body)).status).toBe(201);
    const doc = await geojson(f);
    expect(doc.features.map((x) => x.properties.z ?? null)).toEqual([[2, 4], [5, 5], null]);
    const g = await stackField('geo again');
    const res = await postGeojson(g, doc);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const [a, b] = [await cellsOf(f), await cellsOf(g)];
    expect(b.map((c) => [c.name, c.geometry, c.zRange, c.voxelCount])).toEqual(a.map((c) => [c.name, c.geometry, c.zRange, c.voxelCount]));
  });

  it('a 3-D label cell travels as its footprint over the slices it spans', async () => {
    const f = await stackField('geo labels');
    expect((await bio.post(`/api/fields/${f}/cells/import`).attach('file', dir + 'labels3d.tif')).status).toBe(201);
    const cells = await cellsOf(f);
    const doc = await geojson(f);
    expect(doc.features.map((x) => [x.properties.kind, x.properties.z])).toEqual(cells.map((c) => ['label3d', c.zRange]));
    const g = await stackField('geo labels again');
    expect((await postGeojson(g, doc)).status).toBe(201);
    const again = await cellsOf(g);
    for (const [i, c] of again.entries()) {
      const o = cells[i];
      expect([c.geometry.kind, c.zRange, c.pixelCount]).toEqual(['label3d', o.zRange, o.pixelCount]);
      expect(c.voxelCount).toBe(o.pixelCount * (o.zRange[1] - o.zRange[0] + 1));
    }
  });

  it('refuses a z range beyond the field or running backwards, naming the feature and quoting the range', async () => {
    const f = await stackField('geo bad');
    const feature = (z: unknown) => ({ type: 'FeatureCollection', features: [{ type: 'Feature', properties: { name: 'Deep', z }, geometry: { type: 'Polygon', coordinates: [[[1, 1], [6, 1], [6, 6], [1, 1]]] } }] });
    const beyond = await postGeojson(f, feature([2, 9]));
    expect(beyond.status).toBe(400);
    expect(beyond.body.error).toBe(`feature 1 ("Deep"): the z range [2, 9] goes beyond the field's 5 slices`);
    const back = await postGeojson(f, feature([4, 2]));
    expect(back.status).toBe(400);
    expect(back.body.error).toMatch(/^feature 1 \("Deep"\): z must be \[first slice, last slice\], counted from 1, received \[4,2\] \(a z range runs from a slice to the same or a later one, got \[4, 2\]\)$/);
    expect(await cellsOf(f)).toEqual([]);
  });
});
