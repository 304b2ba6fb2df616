/**
 * Outlines in open formats: GeoJSON (RFC 7946, Butler et al. 2016, doi:10.17487/RFC7946: Polygon and
 * MultiPolygon, closed rings of ≥ 4 positions, foreign members allowed) and label-image TIFFs (TIFF 6.0,
 * read back by the server's decoder). Round trips are exact: export → import → export gives the same file
 * and every imported cell covers exactly the pixels of the original; malformed files are refused with a
 * message naming the feature and the fault, and nothing is stored.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, isNull } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { addField, syntheticPair } from '../runs/helpers.js';
import { cells } from '../../server/db/schema.js';
import { decodeChannel } from '../../server/images/decode.js';
import { writeGrayTiff } from '../../server/images/tiff-write.js';
import { cellIndices, OutlineCollection, PIXEL_CONVENTION, type Cell } from '../../shared/schemas/cells.js';

const W = 40, H = 30;
let t: TestApp;
let bio: Awaited<ReturnType<TestApp['login']>>;

async function newField(name: string) {
  const [a, b] = syntheticPair(W, H, name.length);
  return (await addField(t.ctx, t.world.coverslipA, { name, width: W, height: H, ch1: a, ch2: b, cells: [] })).fieldId;
}
const liveCells = async (fieldId: number) => ((await bio.get(`/api/fields/${fieldId}/cells`)).body.cells as Cell[]);
const exportGeo = async (fieldId: number) => {
  const res = await bio.get(`/api/fields/${fieldId}/cells.geojson`);
  expect(res.status).toBe(200);
  expect(res.headers['content-type']).toMatch(/^application\/geo\+json/);
  return JSON.parse(res.text) as OutlineCollection;
};
const importGeo = (fieldId: number, doc: unknown, q = '') =>
  bio.post(`/api/fields/${fieldId}/cells/geojson${q}`).attach('file', Buffer.from(typeof doc === 'string' ? doc : JSON.stringify(doc)), 'outlines.geojson');
/** The file without what names the source field and its cell ids. */
const portable = (doc: OutlineCollection) => ({
  ...doc,
  properties: { ...doc.properties, fieldId: 0, field: '' },
  features: doc.features.map(({ id: _id, properties: { cellId: _c, ...p }, ...f }) => ({ ...f, properties: p })),
});

/** A label image with a holed square (3), a two-part label (7) and a one-pixel label (70000, so 32-bit). */
function labelImage() {
  const lab = new Uint32Array(W * H);
  for (let y = 2; y < 12; y++) for (let x = 2; x < 12; x++) lab[y * W + x] = 3;
  for (let y = 5; y < 8; y++) for (let x = 5; x < 8; x++) lab[y * W + x] = 0; // hole
  lab[6 * W + 6] = 3; // island inside the hole
  for (let y = 20; y < 25; y++) for (let x = 20; x < 23; x++) lab[y * W + x] = 7;
  for (let y = 20; y < 22; y++) for (let x = 30; x < 36; x++) lab[y * W + x] = 7;
  lab[29 * W + 39] = 70000;
  return lab;
}

let drawnField: number;
beforeAll(async () => {
  t = await makeTestApp();
  bio = await t.login('biologist');
  drawnField = await newField('drawn');
  for (const body of [
    { name: 'Nucleus', geometry: { kind: 'polygon', points: [[1.25, 1.5], [10.5, 2], [6, 9.75]] } },
    { name: 'Trace', geometry: { kind: 'freehand', points: [[20, 2], [30, 3], [29, 9], [21, 8]] } },
    { name: 'Box', geometry: { kind: 'rect', x: 2, y: 15, width: 6.5, height: 4 } },
    { name: 'Round', geometry: { kind: 'ellipse', cx: 18.3, cy: 20.1, rx: 4.2, ry: 3 } },
    { name: 'Dark corner', role: 'background', geometry: { kind: 'rect', x: 33, y: 24, width: 6, height: 5 } },
  ]) {
    const res = await bio.post(`/api/fields/${drawnField}/cells`).send(body);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
  }
}, 60_000);
afterAll(() => t?.close());

describe('GeoJSON export', () => {
  it('is a FeatureCollection of closed Polygons in pixel coordinates, with names, flags and exact shapes', async () => {
    const doc = OutlineCollection.parse(await exportGeo(drawnField));
    expect(doc.properties).toMatchObject({ coordinates: 'pixel', convention: PIXEL_CONVENTION, width: W, height: H, fieldId: drawnField });
    expect(doc.features.map((f) => [f.properties.name, f.properties.kind, f.properties.background])).toEqual([
      ['Nucleus', 'polygon', false],
      ['Trace', 'freehand', false],
      ['Box', 'rect', false],
      ['Round', 'ellipse', false],
      ['Dark corner', 'rect', true],
    ]);
    for (const f of doc.features) {
      expect(f.geometry.type).toBe('Polygon');
      for (const ring of f.geometry.coordinates as [number, number][][]) {
        expect(ring.length).toBeGreaterThanOrEqual(4);
        expect(ring[ring.length - 1]).toEqual(ring[0]);
      }
    }
    expect(doc.features[0].geometry.coordinates).toEqual([[[1.25, 1.5], [10.5, 2], [6, 9.75], [1.25, 1.5]]]);
    expect(doc.features[2].properties.shape).toEqual({ x: 2, y: 15, width: 6.5, height: 4 });
    expect(doc.features[3].properties.shape).toEqual({ cx: 18.3, cy: 20.1, rx: 4.2, ry: 3 });
  });

  it('a label cell with a hole is a Polygon with two rings and one in two parts a MultiPolygon', async () => {
    const f = await newField('labels-geo');
    const imp = await bio.post(`/api/fields/${f}/cells/import`).attach('file', writeGrayTiff([labelImage()], W, H), 'labels.tif');
    expect(imp.status, JSON.stringify(imp.body)).toBe(201);
    const doc = await exportGeo(f);
    const by = new Map(doc.features.map((x) => [x.properties.label, x]));
    expect(by.get(3)!.geometry.type).toBe('MultiPolygon'); // the island inside the hole is a second polygon
    const holed = by.get(3)!.geometry.coordinates as number[][][][];
    expect(holed.map((p) => p.length)).toEqual([2, 1]); // outer + hole, then the island
    expect(holed[0][0]).toEqual([[2, 2], [12, 2], [12, 12], [2, 12], [2, 2]]);
    expect(by.get(7)!.geometry.type).toBe('MultiPolygon');
    expect(by.get(70000)!.geometry.coordinates).toEqual([[[39, 29], [40, 29], [40, 30], [39, 30], [39, 29]]]);
  });
});

describe('GeoJSON round trip', () => {
  it('export → import into another field → export gives the same file and the same pixels, holes included', async () => {
    const source = await newField('source');
    await bio.post(`/api/fields/${source}/cells/import`).attach('file', writeGrayTiff([labelImage()], W, H), 'labels.tif');
    // drawn outlines beside the label cells
    for (const c of await liveCells(drawnField)) await bio.post(`/api/fields/${source}/cells`).send({ name: c.name, role: c.role, geometry: c.geometry });
    const first = await exportGeo(source);
    const target = await newField('target');
    const imp = await importGeo(target, first);
    expect(imp.status, JSON.stringify(imp.body)).toBe(201);
    expect(imp.body.features).toBe(first.features.length);
    const second = await exportGeo(target);
    expect(portable(second)).toEqual(portable(first));
    const [a, b] = [await liveCells(source), await liveCells(target)];
    expect(b.map((c) => [c.name, c.role, c.source])).toEqual(a.map((c) => [c.name, c.role, 'geojson']));
    for (const [i, c] of a.entries()) {
      expect(Array.from(cellIndices(b[i].geometry, W, H)), c.name).toEqual(Array.from(cellIndices(c.geometry, W, H)));
      expect(b[i].pixelCount).toBe(c.pixelCount);
    }
    // ?replace=1 replaces the earlier GeoJSON import instead of adding to it
    const again = await importGeo(target, first, '?replace=1');
    expect(again.status).toBe(201);
    expect((await liveCells(target)).length).toBe(a.length);
  });

  it('reads a plain polygon with a hole from another tool (no kind), keeping the hole', async () => {
    const f = await newField('foreign');
    const doc = {
      type: 'FeatureCollection',
      features: [
        {
          type: 'Feature',
          properties: { name: 'Donut' },
          geometry: { type: 'Polygon', coordinates: [[[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]], [[3, 3], [3, 7], [7, 7], [7, 3], [3, 3]]] },
        },
      ],
    };
    const res = await importGeo(f, doc);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const [c] = await liveCells(f);
    expect(c.pixelCount).toBe(100 - 16);
    expect(c.role).toBe('cell');
    expect(cellIndices(c.geometry, W, H).includes(5 * W + 5)).toBe(false); // inside the hole
  });
});

describe('malformed GeoJSON', () => {
  const good = { type: 'Feature', properties: { name: 'Fine' }, geometry: { type: 'Polygon', coordinates: [[[1, 1], [5, 1], [5, 5], [1, 1]]] } };
  const withSecond = (second: unknown) => ({ type: 'FeatureCollection', features: [good, second] });
  const cases: [string, unknown, RegExp][] = [
    ['not JSON', '{"type": "FeatureCollection", ', /not valid JSON/],
    ['not a collection', { type: 'GeometryCollection' }, /expected a GeoJSON FeatureCollection or Feature, received type "GeometryCollection"/],
    ['a point', withSecond({ type: 'Feature', properties: { name: 'Spot' }, geometry: { type: 'Point', coordinates: [1, 1] } }), /^feature 2 \("Spot"\): geometry type "Point" is not an outline/],
    ['no geometry', withSecond({ type: 'Feature', properties: {}, geometry: null }), /^feature 2: has no geometry/],
    ['an open ring', withSecond({ type: 'Feature', properties: { name: 'Open' }, geometry: { type: 'Polygon', coordinates: [[[1, 1], [5, 1], [5, 5], [1, 5]]] } }), /^feature 2 \("Open"\): ring 1 is not closed: it starts at \[1,1\] and ends at \[1,5\]/],
    ['a short ring', withSecond({ type: 'Feature', properties: {}, geometry: { type: 'Polygon', coordinates: [[[1, 1], [5, 1], [1, 1]]] } }), /^feature 2: ring 1 has 3 positions; a closed ring needs at least 4/],
    ['3-D positions', withSecond({ type: 'Feature', properties: {}, geometry: { type: 'MultiPolygon', coordinates: [[[[1, 1, 0], [5, 1, 0], [5, 5, 0], [1, 1, 0]]]] } }), /^feature 2: polygon 1, ring 1, position 1 must be two finite numbers \[x, y\] in pixels, received \[1,1,0\]/],
    ['a bad background flag', withSecond({ ...good, properties: { name: 'Bg', background: 'yes' } }), /^feature 2 \("Bg"\): background must be true or false, received "yes"/],
    ['an ellipse without its shape', withSecond({ ...good, properties: { name: 'Oval', kind: 'ellipse' } }), /^feature 2 \("Oval"\): kind "ellipse" needs its exact shape in properties.shape/],
    ['outside the field', withSecond({ type: 'Feature', properties: { name: 'Far' }, geometry: { type: 'Polygon', coordinates: [[[100, 100], [110, 100], [110, 110], [100, 100]]] } }), /^feature 2 \("Far"\): the outline covers no pixel centre of the 40 × 30 field/],
    ['geographic coordinates', { type: 'FeatureCollection', properties: { coordinates: 'wgs84' }, features: [good] }, /coordinates are "wgs84"/],
  ];
  it.each(cases)('%s → 400 naming the feature and the fault; nothing stored', async (_what, doc, message) => {
    const f = await newField('bad');
    const res = await importGeo(f, doc);
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(message);
    expect(t.ctx.db.select().from(cells).where(and(eq(cells.fieldId, f), isNull(cells.deletedAt))).all()).toEqual([]);
  });

  it('a reader cannot import; a file is required', async () => {
    const collab = await t.login('collaborator');
    expect((await collab.post(`/api/fields/${drawnField}/cells/geojson`).attach('file', Buffer.from(JSON.stringify(good)), 'x.geojson')).status).toBe(403);
    const none = await bio.post(`/api/fields/${drawnField}/cells/geojson`).field('x', '1');
    expect(none.status).toBe(400);
    expect(none.body.error).toMatch(/attach the GeoJSON file as the form field "file"/);
  });
});

describe('label-image TIFF', () => {
  it('exports the labels exactly (32-bit when a label exceeds 65535) and the label import reads them back identically', async () => {
    const f = await newField('labels-tiff');
    const original = labelImage();
    await bio.post(`/api/fields/${f}/cells/import`).attach('file', writeGrayTiff([original], W, H), 'labels.tif');
    const res = await bio.get(`/api/fields/${f}/cells/labels.tiff`).buffer(true).parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('image/tiff');
    const decoded = await decodeChannel(new Uint8Array(res.body as Buffer), 1);
    expect(decoded.info.bitsPerSample).toBe(32);
    expect(decoded.slices[0]).toBeInstanceOf(Uint32Array);
    expect(Array.from(decoded.slices[0])).toEqual(Array.from(original));
    // imported again into another field: the same cells (names, label numbers, pixels)
    const g = await newField('labels-again');
    const again = await bio.post(`/api/fields/${g}/cells/import`).attach('file', res.body as Buffer, 'exported.tif');
    expect(again.status).toBe(201);
    const [a, b] = [await liveCells(f), await liveCells(g)];
    expect(b.map((c) => [c.name, c.geometry])).toEqual(a.map((c) => [c.name, c.geometry]));
  });

  it('numbers drawn cells after the label numbers, leaves background regions out, and uses 16 bits when it can', async () => {
    const f = await newField('drawn-tiff');
    for (const body of [
      { name: 'A', geometry: { kind: 'rect', x: 0, y: 0, width: 5, height: 5 } },
      { name: 'B', geometry: { kind: 'ellipse', cx: 20, cy: 15, rx: 5, ry: 4 } },
      { name: 'Bg', role: 'background', geometry: { kind: 'rect', x: 0, y: 0, width: 40, height: 30 } },
    ])
      expect((await bio.post(`/api/fields/${f}/cells`).send(body)).status).toBe(201);
    const res = await bio.get(`/api/fields/${f}/cells/labels.tiff`).buffer(true).parse((r, cb) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => cb(null, Buffer.concat(chunks)));
    });
    const decoded = await decodeChannel(new Uint8Array(res.body as Buffer), 1);
    expect(decoded.slices[0]).toBeInstanceOf(Uint16Array);
    const cellsNow = await liveCells(f);
    for (const [i, c] of cellsNow.filter((x) => x.role === 'cell').entries())
      for (const p of cellIndices(c.geometry, W, H)) expect(decoded.slices[0][p]).toBe(i + 1);
    const labelled = Array.from(decoded.slices[0]).filter((v) => v > 0).length;
    expect(labelled).toBe(cellsNow.filter((x) => x.role === 'cell').reduce((s, c) => s + c.pixelCount, 0));
  });

  it('refuses overlapping cells by name (409) and a field without cells', async () => {
    const f = await newField('overlap');
    for (const [name, x] of [['Left', 0], ['Right', 3]] as const) await bio.post(`/api/fields/${f}/cells`).send({ name, geometry: { kind: 'rect', x, y: 0, width: 5, height: 5 } });
    const res = await bio.get(`/api/fields/${f}/cells/labels.tiff`);
    expect(res.status).toBe(409);
    expect(res.body.error).toMatch(/^cells "Left" \(id \d+\) and "Right" \(id \d+\) share pixel \(3, 0\); a label image gives each pixel one cell/);
    const empty = await newField('empty');
    const none = await bio.get(`/api/fields/${empty}/cells/labels.tiff`);
    expect(none.status).toBe(409);
    expect(none.body.error).toBe('this field has no cells to export as a label image');
  });
});
