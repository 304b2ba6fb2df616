/**
 * Cells API: drawn outlines (pixel counts by the one rasterizer), rename / move / delete (soft when measured),
 * background regions, permissions, label-image import (one cell per label, right pixel counts, size must
 * match) and automatic outlines on a real ingested field.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents, cells, measurements, recipes, runs } from '../../server/db/schema.js';
import { insertField, inDisk, writeTiff } from './helpers.js';
import { ingestField } from '../../server/images/intake.js';
import { cellIndices } from '../../shared/schemas/cells.js';

let t: TestApp;
let fieldId: number;
beforeAll(async () => {
  t = await makeTestApp();
  fieldId = insertField(t.ctx, t.world.coverslipA, 40, 30).id;
});
afterAll(() => t.close());

describe('drawn outlines', () => {
  it('creates a polygon with the pixel count of the pixel-centre rule and an audit event', async () => {
    const a = await t.login('microscopist');
    // the square [2, 12) × [3, 8): centres x+0.5 in 2..12, y+0.5 in 3..8 → 10 × 5 pixels (hand count)
    const res = await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'polygon', points: [[2, 3], [12, 3], [12, 8], [2, 8]] } });
    expect(res.status).toBe(201);
    expect(res.body.cell).toMatchObject({ name: 'Cell 1', role: 'cell', source: 'drawn', pixelCount: 50 });
    const audit = t.ctx.db.select().from(auditEvents).where(eq(auditEvents.entityId, res.body.cell.id)).all();
    expect(audit.map((e) => e.action)).toContain('cell.create');
    const list = await a.get(`/api/fields/${fieldId}/cells`);
    expect(list.body.cells.map((c: { id: number }) => c.id)).toContain(res.body.cell.id);
  });
  it('rect and ellipse pixel counts equal the shared rasterizer and a hand count', async () => {
    const a = await t.login('microscopist');
    const r = await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'rect', x: 0.6, y: 0.6, width: 3, height: 2 } });
    // centres 0.5..: x+0.5 in (0.6, 3.6] → x = 1, 2, 3; y+0.5 in (0.6, 2.6] → y = 1, 2 → 6 pixels
    expect(r.body.cell.pixelCount).toBe(6);
    const e = await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'ellipse', cx: 20, cy: 15, rx: 5, ry: 3 } });
    let hand = 0;
    for (let y = 0; y < 30; y++) for (let x = 0; x < 40; x++) if (((x + 0.5 - 20) / 5) ** 2 + ((y + 0.5 - 15) / 3) ** 2 <= 1) hand++;
    expect(e.body.cell.pixelCount).toBe(hand);
    expect(e.body.cell.pixelCount).toBe(cellIndices(e.body.cell.geometry, 40, 30).length);
  });
  it('refuses an outline outside the image, a 2-point polygon and NaN, quoting the problem', async () => {
    const a = await t.login('microscopist');
    const out = await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'rect', x: 100, y: 100, width: 5, height: 5 } });
    expect(out.status).toBe(400);
    expect(out.body.error).toMatch(/no pixel centre of the 40 × 30 field/);
    const two = await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'polygon', points: [[1, 1], [5, 5]] } });
    expect(two.status).toBe(400);
    expect(two.body.error).toMatch(/at least 3 points/);
    const nan = await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'ellipse', cx: 'x', cy: 1, rx: 1, ry: 1 } });
    expect(nan.status).toBe(400);
  });
  it('renames, moves vertices (new pixel count), marks background, deletes', async () => {
    const a = await t.login('microscopist');
    const c = (await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'polygon', points: [[0, 0], [4, 0], [4, 4], [0, 4]] } })).body.cell;
    expect(c.pixelCount).toBe(16);
    const moved = await a.patch(`/api/cells/${c.id}`).send({ name: 'Nucleus 3', geometry: { kind: 'polygon', points: [[0, 0], [6, 0], [6, 4], [0, 4]] } });
    expect(moved.status).toBe(200);
    expect(moved.body.cell).toMatchObject({ id: c.id, name: 'Nucleus 3', pixelCount: 24 });
    const bg = await a.patch(`/api/cells/${c.id}`).send({ role: 'background' });
    expect(bg.body.cell.role).toBe('background');
    const empty = await a.patch(`/api/cells/${c.id}`).send({});
    expect(empty.status).toBe(400);
    const del = await a.delete(`/api/cells/${c.id}`);
    expect(del.body).toEqual({ ok: true, soft: false });
    expect((await a.patch(`/api/cells/${c.id}`).send({ name: 'x' })).status).toBe(404);
  });
  it('a background region is created with its own name sequence', async () => {
    const a = await t.login('microscopist');
    const res = await a.post(`/api/fields/${fieldId}/cells`).send({ role: 'background', geometry: { kind: 'rect', x: 30, y: 20, width: 5, height: 5 } });
    expect(res.body.cell).toMatchObject({ role: 'background', name: expect.stringMatching(/^Background \d+$/) });
  });
  it('soft-deletes a measured cell and keeps a measured outline intact when its geometry changes', async () => {
    const a = await t.login('microscopist');
    const c = (await a.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'rect', x: 5, y: 20, width: 4, height: 4 } })).body.cell;
    const db = t.ctx.db;
    const recipe = db.insert(recipes).values({ name: 'r', version: 1, settings: {} }).returning().get();
    const run = db.insert(runs).values({ studyId: t.world.studyA, recipeId: recipe.id, scopeKind: 'field', scopeId: fieldId }).returning().get();
    db.insert(measurements).values({ runId: run.id, cellId: c.id, fieldId, pixels: 16, provenance: {} }).run();
    const moved = await a.patch(`/api/cells/${c.id}`).send({ geometry: { kind: 'rect', x: 5, y: 20, width: 5, height: 4 } });
    expect(moved.status).toBe(200);
    expect(moved.body.cell.id).not.toBe(c.id);
    expect(moved.body.cell).toMatchObject({ name: c.name, pixelCount: 20 });
    const old = db.select().from(cells).where(eq(cells.id, c.id)).get()!;
    expect(old.deletedAt).not.toBeNull();
    expect(old.geometry).toEqual(c.geometry);
    db.insert(measurements).values({ runId: run.id, cellId: moved.body.cell.id, fieldId, pixels: 20, provenance: {} }).run();
    const del = await a.delete(`/api/cells/${moved.body.cell.id}`);
    expect(del.body).toEqual({ ok: true, soft: true });
    const list = (await a.get(`/api/fields/${fieldId}/cells`)).body.cells.map((x: { id: number }) => x.id);
    expect(list).not.toContain(c.id);
    expect(list).not.toContain(moved.body.cell.id);
  });
});

describe('permissions', () => {
  it('collaborators read but cannot change; outsiders do not see the field; signed-out is 401', async () => {
    const col = await t.login('collaborator');
    expect((await col.get(`/api/fields/${fieldId}/cells`)).status).toBe(200);
    expect((await col.post(`/api/fields/${fieldId}/cells`).send({ geometry: { kind: 'rect', x: 1, y: 1, width: 2, height: 2 } })).status).toBe(403);
    const out = await t.login('outsider');
    expect((await out.get(`/api/fields/${fieldId}/cells`)).status).toBe(404);
    const anyCell = t.ctx.db.select().from(cells).where(eq(cells.fieldId, fieldId)).all().find((c) => !c.deletedAt)!;
    expect((await out.delete(`/api/cells/${anyCell.id}`)).status).toBe(404);
    const { default: request } = await import('supertest');
    expect((await request(t.app).get(`/api/fields/${fieldId}/cells`)).status).toBe(401);
  });
});

describe('label image import', () => {
  it('one cell per positive label with exactly its pixel count (labels 1, 2, 7; 0 = background)', async () => {
    const W = 40, H = 30;
    const lab = new Uint16Array(W * H);
    const expected = new Map<number, number>();
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) {
        let v = 0;
        if (inDisk(x, y, 10, 10, 6)) v = 1;
        else if (x >= 20 && x < 30 && y >= 2 && y < 9) v = 2;
        else if ((x === 35 && y === 25) || (x === 2 && y === 28)) v = 7; // one label, two separate pixels
        lab[y * W + x] = v;
        if (v) expected.set(v, (expected.get(v) ?? 0) + 1);
      }
    const f = insertField(t.ctx, t.world.coverslipA, W, H).id;
    const a = await t.login('microscopist');
    const res = await a.post(`/api/fields/${f}/cells/import`).attach('file', writeTiff([lab], W, H, 16), 'labels.tif');
    expect(res.status).toBe(201);
    expect(res.body.labels).toBe(3);
    const got = new Map<number, number>(res.body.cells.map((c: { geometry: { label: number }; pixelCount: number }) => [c.geometry.label, c.pixelCount]));
    expect(got).toEqual(expected);
    // the stored run-length mask decodes back to exactly the label's pixels
    for (const c of res.body.cells) {
      const idx = cellIndices(c.geometry, W, H);
      expect(idx.length).toBe(c.pixelCount);
      for (const i of idx) expect(lab[i]).toBe(c.geometry.label);
      expect(c).toMatchObject({ source: 'label_image', role: 'cell', name: `Label ${c.geometry.label}` });
    }
    // replace=1 swaps the previous import
    const again = await a.post(`/api/fields/${f}/cells/import?replace=1`).attach('file', writeTiff([lab], W, H, 8), 'labels8.tif');
    expect(again.status).toBe(201);
    expect((await a.get(`/api/fields/${f}/cells`)).body.cells).toHaveLength(3);
  });
  it('refuses a label image of another size (422, naming both sizes), a non-TIFF and a missing file', async () => {
    const f = insertField(t.ctx, t.world.coverslipA, 40, 30).id;
    const a = await t.login('microscopist');
    const res = await a.post(`/api/fields/${f}/cells/import`).attach('file', writeTiff([new Uint16Array(20 * 10).fill(1)], 20, 10), 'small.tif');
    expect(res.status).toBe(422);
    expect(res.body.error).toMatch(/20 × 10 .* 40 × 30/);
    const junk = await a.post(`/api/fields/${f}/cells/import`).attach('file', Buffer.from('not a tiff at all'), 'x.tif');
    expect(junk.status).toBeGreaterThanOrEqual(400);
    expect(junk.status).toBeLessThan(500);
    const none = await a.post(`/api/fields/${f}/cells/import`);
    expect(none.status).toBe(400);
    const zero = await a.post(`/api/fields/${f}/cells/import`).attach('file', writeTiff([new Uint16Array(40 * 30)], 40, 30), 'zero.tif');
    expect(zero.status).toBe(422);
    expect(zero.body.error).toMatch(/no positive labels/);
    expect((await a.get(`/api/fields/${f}/cells`)).body.cells).toHaveLength(0);
  });
});

describe('automatic outlines on an ingested field', () => {
  it('finds the disks of a synthetic two-channel field (Otsu on the sum), editable polygons with pixel counts', async () => {
    const W = 128, H = 96;
    const disks: [number, number, number][] = [[30, 30, 12], [50, 30, 10], [95, 60, 15], [30, 75, 8]];
    const ch1 = new Uint16Array(W * H).fill(200), ch2 = new Uint16Array(W * H).fill(150);
    for (const [cx, cy, r] of disks) for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) if (inDisk(x, y, cx, cy, r)) (ch1[y * W + x] = 3000), (ch2[y * W + x] = 2000);
    const file = path.join(t.dataDir, 'auto.tif');
    fs.writeFileSync(file, writeTiff([ch1, ch2], W, H, 16));
    const field = await ingestField(t.ctx, { coverslipId: t.world.coverslipA, userId: t.world.users.microscopist.id, name: 'auto', sources: [{ path: file, originalName: 'auto.tif', channel: 1 }, { path: file, originalName: 'auto.tif', channel: 2 }] });
    const a = await t.login('microscopist');
    const res = await a.post(`/api/fields/${field.id}/cells/auto`).send({ channel: 'sum', seedDistance: 6, minPixels: 20 });
    expect(res.status).toBe(201);
    expect(res.body.cells).toHaveLength(4);
    expect(res.body.level).toBeGreaterThanOrEqual(350);
    expect(res.body.level).toBeLessThan(5000);
    const areas = res.body.cells.map((c: { pixelCount: number }) => c.pixelCount).sort((x: number, y: number) => x - y);
    const exact = disks.map(([, , r]) => Math.PI * r * r).sort((x, y) => x - y);
    // the touching pair (centres 20 apart, radii 12 + 10) is split; areas within 10 % of πr² (common practice)
    areas.forEach((ar: number, i: number) => expect(Math.abs(ar - exact[i]) / exact[i]).toBeLessThan(0.1));
    for (const c of res.body.cells) expect(c).toMatchObject({ source: 'automatic', geometry: { kind: 'polygon' } });
    // replace keeps one set
    const again = await a.post(`/api/fields/${field.id}/cells/auto`).send({ channel: 'ch1', threshold: { method: 'manual', level: 1000 }, replace: true, minPixels: 20 });
    expect(again.status).toBe(201);
    expect((await a.get(`/api/fields/${field.id}/cells`)).body.cells).toHaveLength(4);
    const bad = await a.post(`/api/fields/${field.id}/cells/auto`).send({ minPixels: 50, maxPixels: 10 });
    expect(bad.status).toBe(400);
    const col = await t.login('collaborator');
    expect((await col.post(`/api/fields/${field.id}/cells/auto`).send({})).status).toBe(403);
  });
});
