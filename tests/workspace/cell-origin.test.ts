/**
 * Every cell records how it was made (issue 19 item 2): drawn, imported from a label image (file and label),
 * found by "Find cells…" with the settings used (level, smoothing, sizes, the field's pixel size); an imported
 * or found outline changed by hand is marked edited; rows stored before the record derive it from `source`.
 * "Find cells…" can preview: nothing is stored, and keeping with the same settings stores the same outlines.
 * (common practice; the outlines themselves are checked in cells-api.test.ts and segment.test.ts)
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { cells, fields } from '../../server/db/schema.js';
import { insertField, inDisk, writeTiff } from './helpers.js';
import { ingestField } from '../../server/images/intake.js';
import { Cell } from '../../shared/schemas/cells.js';

let t: TestApp;
let autoField: number;
const W = 128, H = 96;
const disks: [number, number, number][] = [[30, 30, 12], [95, 60, 15], [30, 75, 8]];

beforeAll(async () => {
  t = await makeTestApp();
  const ch1 = new Uint16Array(W * H).fill(200), ch2 = new Uint16Array(W * H).fill(150);
  for (const [cx, cy, r] of disks) for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) if (inDisk(x, y, cx, cy, r)) (ch1[y * W + x] = 3000), (ch2[y * W + x] = 2000);
  const file = path.join(t.dataDir, 'origin.tif');
  fs.writeFileSync(file, writeTiff([ch1, ch2], W, H, 16));
  autoField = (await ingestField(t.ctx, { coverslipId: t.world.coverslipA, userId: t.world.users.microscopist.id, name: 'origin', sources: [{ path: file, originalName: 'origin.tif', channel: 1 }, { path: file, originalName: 'origin.tif', channel: 2 }] })).id;
  t.ctx.db.update(fields).set({ pixelSizeUm: 0.5 }).where(eq(fields.id, autoField)).run();
});
afterAll(() => t.close());

describe('how a cell was made', () => {
  it('drawn and imported cells say so; the import names its file and label', async () => {
    const a = await t.login('microscopist');
    const f = insertField(t.ctx, t.world.coverslipA, 40, 30).id;
    const drawn = await a.post(`/api/fields/${f}/cells`).send({ geometry: { kind: 'rect', x: 1, y: 1, width: 5, height: 5 } });
    expect(Cell.parse(drawn.body.cell).origin).toEqual({ how: 'drawn' });
    const lab = new Uint16Array(40 * 30);
    for (let i = 0; i < 50; i++) lab[i] = 3;
    const imp = await a.post(`/api/fields/${f}/cells/import`).attach('file', writeTiff([lab], 40, 30, 16), 'nuclei-labels.tif');
    expect(imp.status).toBe(201);
    expect(imp.body.cells[0].origin).toEqual({ how: 'imported', file: 'nuclei-labels.tif', label: 3, edited: false });
  });

  it('a preview stores nothing; keeping with the same settings stores the same outlines, each with the settings used', async () => {
    const a = await t.login('microscopist');
    const body = { channel: 'sum', smoothing: 1.5, seedDistance: 6, minPixels: 100, maxPixels: 2000 };
    const before = t.ctx.db.select().from(cells).where(eq(cells.fieldId, autoField)).all().length;
    const look = await a.post(`/api/fields/${autoField}/cells/auto`).send({ ...body, preview: true });
    expect(look.status).toBe(200);
    expect(look.body.kept).toBe(false);
    expect(look.body.cells).toEqual([]);
    expect(look.body.outlines).toHaveLength(3);
    expect(t.ctx.db.select().from(cells).where(eq(cells.fieldId, autoField)).all().length).toBe(before);
    const keep = await a.post(`/api/fields/${autoField}/cells/auto`).send(body);
    expect(keep.status).toBe(201);
    expect(keep.body.kept).toBe(true);
    expect(keep.body.outlines).toEqual(look.body.outlines);
    expect(keep.body.cells.map((c: Cell) => c.geometry)).toEqual(look.body.outlines.map((o: { points: unknown }) => ({ kind: 'polygon', points: o.points })));
    for (const c of keep.body.cells.map((x: unknown) => Cell.parse(x))) {
      expect(c.origin).toEqual({
        how: 'found',
        edited: false,
        settings: { channel: 'sum', method: 'otsu', level: keep.body.level, smoothing: 1.5, z: null, fillHoles: true, split: true, seedDistance: 6, minPixels: 100, maxPixels: 2000, pixelSizeUm: 0.5 },
      });
    }
  });

  it('changing a found outline by hand keeps its record and marks it edited; a rename does not', async () => {
    const a = await t.login('microscopist');
    const list = (await a.get(`/api/fields/${autoField}/cells`)).body.cells as Cell[];
    const found = list.find((c) => c.origin.how === 'found')!;
    const renamed = await a.patch(`/api/cells/${found.id}`).send({ name: 'Renamed' });
    expect(renamed.body.cell.origin).toMatchObject({ how: 'found', edited: false });
    const moved = await a.patch(`/api/cells/${found.id}`).send({ geometry: { kind: 'rect', x: 10, y: 10, width: 8, height: 8 } });
    expect(moved.status).toBe(200);
    expect(moved.body.cell.origin).toMatchObject({ how: 'found', edited: true, settings: { smoothing: 1.5 } });
  });

  it('rows stored before origins were recorded read from their source, settings unknown', async () => {
    const f = insertField(t.ctx, t.world.coverslipA, 20, 20).id;
    const geometry = { kind: 'rect' as const, x: 0, y: 0, width: 4, height: 4 };
    for (const source of ['drawn', 'label_image', 'automatic', 'seed'] as const) t.ctx.db.insert(cells).values({ fieldId: f, name: source, geometry, source, pixelCount: 16 }).run();
    const a = await t.login('microscopist');
    const got = Object.fromEntries(((await a.get(`/api/fields/${f}/cells`)).body.cells as Cell[]).map((c) => [c.name, c.origin]));
    expect(got).toEqual({
      drawn: { how: 'drawn' },
      label_image: { how: 'imported', file: null, label: null, edited: false },
      automatic: { how: 'found', settings: null, edited: false },
      seed: { how: 'demo' },
    });
  });

  it('refuses a negative smoothing with 400 quoting the value', async () => {
    const a = await t.login('microscopist');
    const res = await a.post(`/api/fields/${autoField}/cells/auto`).send({ smoothing: -1 });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/smoothing/);
  });
});
