/**
 * Instruments and calibrations (issue 15): facility managers record instruments; calibrations are versioned
 * with the recipes' life cycle (draft → submitted → approved | returned; retired), approved versions are
 * immutable, every change is audited, an instrument's approved calibration is its highest approved version.
 * Requests and responses are checked against the shared schemas. (common practice; no outside reference value)
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents } from '../../server/db/schema.js';
import { CalibrationDetail, InstrumentDetail, InstrumentListResponse } from '../../shared/schemas/instruments.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t?.close());

describe('instruments', () => {
  it('a facility manager records an instrument; others read it; collaborators and microscopists cannot record', async () => {
    const fm = await t.login('manager');
    const res = await fm.post('/api/instruments').send({ name: '  Spinning disk 2 ', objective: '60× / 1.4 oil', channel1: 'GFP', channel2: 'mCherry' });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const d = InstrumentDetail.parse(res.body);
    expect(d).toMatchObject({ name: 'Spinning disk 2', objective: '60× / 1.4 oil', approved: null, calibrations: [] });
    const mic = await t.login('microscopist');
    expect((await mic.post('/api/instruments').send({ name: 'x', channel1: 'a', channel2: 'b' })).status).toBe(403);
    const list = InstrumentListResponse.parse((await mic.get('/api/instruments')).body);
    expect(list.instruments.map((i) => i.name)).toContain('Spinning disk 2');
    expect((await (await t.login('collaborator')).get('/api/instruments')).status).toBe(403);
    const dup = await fm.post('/api/instruments').send({ name: 'Spinning disk 2', channel1: 'a', channel2: 'b' });
    expect(dup.status).toBe(409);
    expect(dup.body.error).toMatch(/"Spinning disk 2" exists already/);
    expect((await fm.post('/api/instruments').send({ name: '', channel1: 'a', channel2: 'b' })).status).toBe(400);
    expect((await mic.get('/api/instruments/999999')).body.error).toMatch(/no instrument with id 999999/);
  });
});

describe('calibrations', () => {
  let instrumentId: number;
  beforeAll(async () => {
    const fm = await t.login('manager');
    instrumentId = (await fm.post('/api/instruments').send({ name: 'Widefield A', channel1: 'DAPI', channel2: 'Cy5' })).body.id;
  });

  it('draft → submitted → approved, audited; approved values are immutable; the instrument shows the approved version', async () => {
    const mic = await t.login('microscopist');
    const fm = await t.login('manager');
    const c = await mic.post(`/api/instruments/${instrumentId}/calibrations`).send({ dx: 1.25, dy: -0.6, note: 'beads 2026-12-01' });
    expect(c.status, JSON.stringify(c.body)).toBe(201);
    const d = CalibrationDetail.parse(c.body);
    expect(d).toMatchObject({ version: 1, status: 'draft', dx: 1.25, dy: -0.6, a21: null, a12: null });
    expect(d.allowed).toEqual(['edit', 'submit']);
    const e = await mic.patch(`/api/calibrations/${d.id}`).send({ a21: 0.12, a12: 0.05 });
    expect(e.status).toBe(200);
    expect((await mic.post(`/api/calibrations/${d.id}/approve`).send({})).status).toBe(403);
    expect((await mic.post(`/api/calibrations/${d.id}/submit`).send({})).body.status).toBe('submitted');
    expect((await mic.patch(`/api/calibrations/${d.id}`).send({ a21: 0.2 })).status).toBe(409);
    const ok = CalibrationDetail.parse((await fm.post(`/api/calibrations/${d.id}/approve`).send({ note: 'checked' })).body);
    expect(ok).toMatchObject({ status: 'approved', a21: 0.12, a12: 0.05, reviewNote: 'checked' });
    expect(ok.history.map((h) => h.action)).toEqual(['create', 'edit', 'submit', 'approve']);
    const frozen = await fm.patch(`/api/calibrations/${d.id}`).send({ dx: 0 });
    expect(frozen.status).toBe(409);
    expect(frozen.body.error).toMatch(/approved and cannot change; make a new version/);
    const inst = InstrumentDetail.parse((await mic.get(`/api/instruments/${instrumentId}`)).body);
    expect(inst.approved).toMatchObject({ id: d.id, version: 1, dx: 1.25, dy: -0.6 });
    const events = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.entity, 'calibration'), eq(auditEvents.entityId, d.id))).all();
    expect(events.map((x) => x.action)).toEqual(['calibration.create', 'calibration.edit', 'calibration.submit', 'calibration.approve']);
  });

  it('a new version starts from the latest values; approving it makes it the instrument\'s calibration', async () => {
    const fm = await t.login('manager');
    const v2 = CalibrationDetail.parse((await fm.post(`/api/instruments/${instrumentId}/calibrations`).send({ dx: 1.3 })).body);
    expect(v2).toMatchObject({ version: 2, dx: 1.3, dy: -0.6, a21: 0.12, a12: 0.05, status: 'draft' });
    // still version 1 until version 2 is approved
    expect((await fm.get(`/api/instruments/${instrumentId}`)).body.approved.version).toBe(1);
    await fm.post(`/api/calibrations/${v2.id}/submit`).send({});
    const back = await fm.post(`/api/calibrations/${v2.id}/return`).send({});
    expect(back.status).toBe(400);
    expect((await fm.post(`/api/calibrations/${v2.id}/return`).send({ note: 'remeasure the beads' })).body.status).toBe('returned');
    expect((await fm.patch(`/api/calibrations/${v2.id}`).send({ dx: 1.31 })).status).toBe(200);
    await fm.post(`/api/calibrations/${v2.id}/submit`).send({});
    await fm.post(`/api/calibrations/${v2.id}/approve`).send({});
    const inst = InstrumentDetail.parse((await fm.get(`/api/instruments/${instrumentId}`)).body);
    expect(inst.approved).toMatchObject({ version: 2, dx: 1.31 });
    expect(inst.calibrations.map((c) => [c.version, c.status])).toEqual([[2, 'approved'], [1, 'approved']]);
    expect((await fm.post(`/api/calibrations/${v2.id}/retire`).send({})).body.status).toBe('retired');
    expect((await fm.get(`/api/instruments/${instrumentId}`)).body.approved.version).toBe(1);
  });

  it('bad values are 400 quoting them; a shift needs both components; an empty draft cannot be submitted', async () => {
    const mic = await t.login('microscopist');
    const bad = await mic.post(`/api/instruments/${instrumentId}/calibrations`).send({ a21: 1 });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/a21 must be a fraction in \[0, 1\)/);
    expect((await mic.post(`/api/instruments/${instrumentId}/calibrations`).send({ dx: 'left' })).status).toBe(400);
    // a fresh instrument has no values to inherit
    const fm = await t.login('manager');
    const other = (await fm.post('/api/instruments').send({ name: 'Empty scope', channel1: 'a', channel2: 'b' })).body.id;
    const half = await mic.post(`/api/instruments/${other}/calibrations`).send({ dx: 1 });
    expect(half.status).toBe(400);
    expect(half.body.error).toMatch(/both shift components or neither, received dx 1 and dy null/);
    const d = (await mic.post(`/api/instruments/${other}/calibrations`).send({})).body;
    const sub = await mic.post(`/api/calibrations/${d.id}/submit`).send({});
    expect(sub.status).toBe(409);
    expect(sub.body.error).toMatch(/no values yet/);
    const bio = await t.login('biologist');
    expect((await bio.patch(`/api/calibrations/${d.id}`).send({ a21: 0.1 })).status).toBe(403);
  });
});
