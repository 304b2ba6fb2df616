/**
 * A study's default instrument (issue 15): set with `PATCH /api/studies/:id { defaultInstrumentId }` by whoever
 * may edit the study, audited; uploads whose plan names no instrument (no plan, or an entry without
 * `instrumentId`) are recorded on it, an explicit null means none and another instrument wins. A field's
 * instrument name reaches every reader of the field (the workspace shows it as text to those who may not
 * change it). (common practice; no outside reference value)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents } from '../../server/db/schema.js';
import { StudyDetail } from '../../shared/schemas/studies.js';
import { FieldDetail, UploadResponse } from '../../shared/schemas/fields.js';
import { syntheticPair, tiff16 } from '../runs/helpers.js';

let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let owner: Agent;
let mic: Agent;
let stand: number;
let other: number;
const [A, B] = syntheticPair(24, 20, 7);

async function upload(plan?: unknown[]) {
  let req = mic.post(`/api/coverslips/${t.world.coverslipA}/fields`);
  if (plan) req = req.field('plan', JSON.stringify(plan));
  const res = await req.attach('files', tiff16(24, 20, [A, B]), { filename: `f${Math.random().toString(36).slice(2)}.tif`, contentType: 'image/tiff' });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return UploadResponse.parse(res.body).results.map((r) => (r.ok ? r.field.instrumentId : `refused: ${r.error}`));
}

beforeAll(async () => {
  t = await makeTestApp();
  owner = await t.login('biologist'); // owns study A
  mic = await t.login('microscopist');
  const fm = await t.login('manager');
  stand = (await fm.post('/api/instruments').send({ name: 'Stand 1', channel1: 'GFP', channel2: 'RFP' })).body.id;
  other = (await fm.post('/api/instruments').send({ name: 'Stand 2', channel1: 'GFP', channel2: 'RFP' })).body.id;
});
afterAll(() => t?.close());

describe('a study default instrument', () => {
  it('is set by whoever may edit the study, audited, shown in the study; others are refused; bad values quoted', async () => {
    const res = await owner.patch(`/api/studies/${t.world.studyA}`).send({ defaultInstrumentId: stand });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(StudyDetail.parse(res.body).defaultInstrument).toEqual({ id: stand, name: 'Stand 1' });
    const list = (await mic.get('/api/studies')).body.studies.find((s: { id: number }) => s.id === t.world.studyA);
    expect(list.defaultInstrument).toEqual({ id: stand, name: 'Stand 1' });
    const ev = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'study_updated'), eq(auditEvents.entityId, t.world.studyA))).all().at(-1);
    expect(ev?.details).toMatchObject({ before: { defaultInstrumentId: null }, after: { defaultInstrumentId: stand } });
    // the microscopist may add images but not edit the study; the collaborator only reads
    expect((await mic.patch(`/api/studies/${t.world.studyA}`).send({ defaultInstrumentId: other })).status).toBe(403);
    expect((await (await t.login('collaborator')).patch(`/api/studies/${t.world.studyA}`).send({ defaultInstrumentId: other })).status).toBe(403);
    const unknown = await owner.patch(`/api/studies/${t.world.studyA}`).send({ defaultInstrumentId: 999999 });
    expect(unknown.status).toBe(404);
    expect(unknown.body.error).toMatch(/no instrument with id 999999/);
    const bad = await owner.patch(`/api/studies/${t.world.studyA}`).send({ defaultInstrumentId: 'Stand 1' });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/defaultInstrumentId must be an instrument id or null, got "Stand 1"/);
  });

  it('uploads default to it unless the plan names another or none', async () => {
    expect(await upload()).toEqual([stand]);
    const ch = { ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } };
    expect(await upload([ch])).toEqual([stand]);
    expect(await upload([{ ...ch, instrumentId: null }])).toEqual([null]);
    expect(await upload([{ ...ch, instrumentId: other }])).toEqual([other]);
    // cleared: uploads carry none again
    expect(StudyDetail.parse((await owner.patch(`/api/studies/${t.world.studyA}`).send({ defaultInstrumentId: null })).body).defaultInstrument).toBeNull();
    expect(await upload([ch])).toEqual([null]);
  });

  it("a field's instrument name reaches every reader, collaborators included", async () => {
    const ch = { ch1: { file: 0, channel: 1 }, ch2: { file: 0, channel: 2 } };
    let req = mic.post(`/api/coverslips/${t.world.coverslipA}/fields`).field('plan', JSON.stringify([{ ...ch, instrumentId: other }]));
    req = req.attach('files', tiff16(24, 20, [B, A]), { filename: 'named.tif', contentType: 'image/tiff' });
    const up = UploadResponse.parse((await req).body).results[0];
    if (!up.ok) throw new Error(up.error);
    const collab = await t.login('collaborator');
    const d = FieldDetail.parse((await collab.get(`/api/fields/${up.field.id}`)).body);
    expect(d).toMatchObject({ instrumentId: other, instrumentName: 'Stand 2', canEdit: false });
  });
});
