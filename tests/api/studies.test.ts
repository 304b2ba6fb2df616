/** Studies, conditions, coverslips: create, detail with counts, rename, reorder, delete with confirmation, audit. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents, cells, conditions, coverslips, fields, files, labMembers, measurements, recipes, runFields, runs, studies } from '../../server/db/schema.js';
import { StudyDetail, StudyListResponse } from '../../shared/schemas/studies.js';

let t: TestApp;
let bio: Awaited<ReturnType<TestApp['login']>>;
beforeAll(async () => {
  t = await makeTestApp();
  bio = await t.login('biologist');
});
afterAll(() => t.close());

/** a fake ready field with two cells on a coverslip (rows only; no image file needed for counting) */
function fakeField(coverslipId: number, deleted = false) {
  const db = t.ctx.db;
  db.insert(files).values({ sha256: 'a'.repeat(64), size: 1, storeKey: 'aa/x.tif', originalName: 'x.tif' }).onConflictDoNothing().run();
  const ch = { min: 0, max: 1, mean: 0.5, saturatedFraction: 0, plateauFraction: null };
  const f = db
    .insert(fields)
    .values({ coverslipId, name: 'F', file1Sha: 'a'.repeat(64), file2Sha: 'a'.repeat(64), channelNames: [null, null], fileSize: 1, width: 4, height: 4, bitDepth: 16, sampleFormat: 'uint', facts: { ch1: ch, ch2: ch }, status: deleted ? 'deleted' : 'ready' })
    .returning()
    .get();
  for (const name of ['c1', 'c2']) db.insert(cells).values({ fieldId: f.id, name, geometry: { kind: 'rect', x: 0, y: 0, width: 2, height: 2 }, pixelCount: 4 }).run();
  db.insert(cells).values({ fieldId: f.id, name: 'bg', role: 'background', geometry: { kind: 'rect', x: 2, y: 2, width: 2, height: 2 }, pixelCount: 4 }).run();
  return f.id;
}

describe('studies', () => {
  let id = 0;
  it('a biologist creates a study in their only lab; the answer is a StudyDetail', async () => {
    const res = await bio.post('/api/studies').send({ name: '  Mito contacts  ', description: 'pilot' });
    expect(res.status).toBe(201);
    const d = StudyDetail.parse(res.body);
    expect(d).toMatchObject({ name: 'Mito contacts', description: 'pilot', labId: t.world.labA, labName: 'Lab A', ownerName: 'biologist', conditions: [], fieldCount: 0 });
    expect(d.permissions).toEqual(['read', 'edit_structure', 'add_coverslips', 'edit_images', 'run', 'exclude', 'report', 'delete']);
    id = d.id;
  });

  it('with several labs the lab must be chosen; a lab they are not in is refused', async () => {
    t.ctx.db.insert(labMembers).values({ labId: t.world.labB, userId: t.world.users.biologist.id }).run();
    const res = await bio.post('/api/studies').send({ name: 'Two labs' });
    expect(res.status).toBe(400);
    expect(res.body.issues[0].path).toBe('labId');
    expect((await bio.post('/api/studies').send({ name: 'Two labs', labId: t.world.labB })).status).toBe(201);
    t.ctx.db.delete(labMembers).where(and(eq(labMembers.labId, t.world.labB), eq(labMembers.userId, t.world.users.biologist.id))).run();
    const out = await bio.post('/api/studies').send({ name: 'Not mine', labId: t.world.labB });
    expect(out.status).toBe(400);
    expect(out.body.error).toMatch(/not a member of lab/);
  });

  it('conditions and coverslips: create with defaults, rename, counts of fields and cells', async () => {
    let res = await bio.post(`/api/studies/${id}/conditions`).send({ name: 'control' });
    expect(res.status).toBe(201);
    res = await bio.post(`/api/studies/${id}/conditions`).send({ name: 'knockdown' });
    const [c1, c2] = StudyDetail.parse(res.body).conditions;
    expect([c1.name, c1.position, c2.name, c2.position]).toEqual(['control', 0, 'knockdown', 1]);
    expect((await bio.post(`/api/studies/${id}/conditions`).send({ name: 'CONTROL' })).status).toBe(409);
    await bio.post(`/api/conditions/${c1.id}/coverslips`).send({});
    res = await bio.post(`/api/conditions/${c1.id}/coverslips`).send({ preparedOn: '2026-11-30', notes: 'fixed 4% PFA' });
    const slips = StudyDetail.parse(res.body).conditions[0].coverslips;
    expect(slips.map((s) => [s.name, s.replicate, s.position])).toEqual([['Coverslip 1', 1, 0], ['Coverslip 2', 2, 1]]);
    expect(slips[1]).toMatchObject({ preparedOn: '2026-11-30', notes: 'fixed 4% PFA', fieldCount: 0, cellCount: 0 });
    expect((await bio.post(`/api/conditions/${c1.id}/coverslips`).send({ preparedOn: '30.11.2026' })).status).toBe(400);
    fakeField(slips[0].id);
    fakeField(slips[0].id, true); // deleted fields do not count
    res = await bio.get(`/api/studies/${id}`);
    const d = StudyDetail.parse(res.body);
    expect(d.conditions[0].coverslips[0]).toMatchObject({ fieldCount: 1, cellCount: 2 });
    expect([d.conditionCount, d.coverslipCount, d.fieldCount]).toEqual([2, 2, 1]);
    res = await bio.patch(`/api/conditions/${c2.id}`).send({ name: 'siRNA' });
    expect(res.status).toBe(200);
    expect(res.body.conditions[1].name).toBe('siRNA');
    res = await bio.patch(`/api/coverslips/${slips[0].id}`).send({ name: 'CS-A', replicate: 7 });
    expect(res.body.conditions[0].coverslips[0]).toMatchObject({ name: 'CS-A', replicate: 7 });
    res = await bio.patch(`/api/studies/${id}`).send({ name: 'Mito contacts 2' });
    expect(res.body.name).toBe('Mito contacts 2');
    const list = StudyListResponse.parse((await bio.get('/api/studies')).body);
    expect(list.studies.find((s) => s.id === id)).toMatchObject({ name: 'Mito contacts 2', fieldCount: 1 });
  });

  it('reorder: conditions and coverslips (moving one to another condition); incomplete lists are 400', async () => {
    let d = StudyDetail.parse((await bio.get(`/api/studies/${id}`)).body);
    const [c1, c2] = d.conditions;
    const [s1, s2] = c1.coverslips;
    let res = await bio.post(`/api/studies/${id}/reorder`).send({ conditionIds: [c2.id, c1.id], coverslips: [{ conditionId: c1.id, coverslipIds: [s2.id] }, { conditionId: c2.id, coverslipIds: [s1.id] }] });
    expect(res.status).toBe(200);
    d = StudyDetail.parse(res.body);
    expect(d.conditions.map((c) => c.id)).toEqual([c2.id, c1.id]);
    expect(d.conditions[0].coverslips.map((s) => s.id)).toEqual([s1.id]);
    expect(d.conditions[1].coverslips.map((s) => s.id)).toEqual([s2.id]);
    expect((await bio.post(`/api/studies/${id}/reorder`).send({ conditionIds: [c1.id] })).status).toBe(400);
    expect((await bio.post(`/api/studies/${id}/reorder`).send({ conditionIds: [c1.id, c1.id] })).status).toBe(400);
    expect((await bio.post(`/api/studies/${id}/reorder`).send({ coverslips: [{ conditionId: c1.id, coverslipIds: [t.world.coverslipA] }] })).status).toBe(400);
    expect((await bio.post(`/api/studies/${id}/reorder`).send({})).status).toBe(400);
  });

  it('deletes are audited; a coverslip with fields goes with its fields and cells', async () => {
    const d = StudyDetail.parse((await bio.get(`/api/studies/${id}`)).body);
    const slip = d.conditions.flatMap((c) => c.coverslips).find((s) => s.fieldCount === 1)!;
    const res = await bio.delete(`/api/coverslips/${slip.id}`);
    expect(res.status).toBe(200);
    expect(t.ctx.db.select().from(coverslips).where(eq(coverslips.id, slip.id)).get()).toBeUndefined();
    expect(t.ctx.db.select().from(fields).where(eq(fields.coverslipId, slip.id)).all()).toEqual([]);
    const ev = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'coverslip_deleted'), eq(auditEvents.entityId, slip.id))).get()!;
    expect(ev).toMatchObject({ actorId: t.world.users.biologist.id, studyId: id });
    expect(ev.details).toMatchObject({ name: slip.name, fields: 2 });
    const cond = d.conditions[0];
    expect((await bio.delete(`/api/conditions/${cond.id}`)).status).toBe(200);
    expect(t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'condition_deleted'), eq(auditEvents.entityId, cond.id))).get()).toBeDefined();
  });

  it('deleting a study needs its exact name; then it is gone (404) and audited', async () => {
    const name = t.ctx.db.select().from(studies).where(eq(studies.id, id)).get()!.name;
    const wrong = await bio.delete(`/api/studies/${id}`).send({ confirmName: 'something else' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.issues[0].path).toBe('confirmName');
    expect((await bio.delete(`/api/studies/${id}`)).status).toBe(400);
    expect((await bio.delete(`/api/studies/${id}`).send({ confirmName: name })).status).toBe(200);
    expect((await bio.get(`/api/studies/${id}`)).status).toBe(404);
    expect(t.ctx.db.select().from(conditions).where(eq(conditions.studyId, id)).all()).toEqual([]);
    const ev = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'study_deleted'), eq(auditEvents.entityId, id))).get()!;
    expect(ev.details).toMatchObject({ name });
  });

  it('a study whose fields were measured can still be deleted (measurements and run rows go in the same transaction)', async () => {
    const db = t.ctx.db;
    const st = db.insert(studies).values({ labId: t.world.labA, ownerId: t.world.users.biologist.id, name: 'Measured' }).returning().get();
    const cd = db.insert(conditions).values({ studyId: st.id, name: 'a' }).returning().get();
    const cs = db.insert(coverslips).values({ conditionId: cd.id, name: 'cs', replicate: 1 }).returning().get();
    const fieldId = fakeField(cs.id);
    const cell = db.select().from(cells).where(eq(cells.fieldId, fieldId)).get()!;
    const rec = db.insert(recipes).values({ name: 'r', version: 1, settings: {} }).returning().get();
    const run = db.insert(runs).values({ studyId: st.id, recipeId: rec.id, scopeKind: 'study', scopeId: st.id }).returning().get();
    db.insert(runFields).values({ runId: run.id, fieldId }).run();
    db.insert(measurements).values({ runId: run.id, cellId: cell.id, fieldId, pixels: 4, provenance: {} }).run();
    // deleting only the coverslip also removes the measurement rows that point at its cells
    const cs2 = db.insert(coverslips).values({ conditionId: cd.id, name: 'cs2', replicate: 2 }).returning().get();
    const f2 = fakeField(cs2.id);
    const cell2 = db.select().from(cells).where(eq(cells.fieldId, f2)).get()!;
    db.insert(measurements).values({ runId: run.id, cellId: cell2.id, fieldId: f2, pixels: 4, provenance: {} }).run();
    expect((await bio.delete(`/api/coverslips/${cs2.id}`)).status).toBe(200);
    expect(db.select().from(measurements).where(eq(measurements.fieldId, f2)).all()).toEqual([]);
    expect(db.select().from(measurements).where(eq(measurements.fieldId, fieldId)).all()).toHaveLength(1);
    expect((await bio.delete(`/api/studies/${st.id}`).send({ confirmName: 'Measured' })).status).toBe(200);
    expect(db.select().from(runs).where(eq(runs.id, run.id)).get()).toBeUndefined();
    expect(db.select().from(fields).where(eq(fields.id, fieldId)).get()).toBeUndefined();
  });

  it('the study list shows each study once, with the permissions of the caller', async () => {
    const mic = await t.login('microscopist');
    const list = StudyListResponse.parse((await mic.get('/api/studies')).body);
    const a = list.studies.find((s) => s.id === t.world.studyA)!;
    expect(a.permissions).toEqual(['read', 'add_coverslips', 'edit_images', 'run']);
    expect(new Set(list.studies.map((s) => s.id)).size).toBe(list.studies.length);
  });
});
