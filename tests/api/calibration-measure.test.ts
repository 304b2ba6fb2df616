/**
 * Measuring a calibration from stored fields (issue 15): `POST /api/calibrations/:id/measure-shift` on a bead
 * field and `POST /api/calibrations/:id/measure-bleed` on single-label controls, both uploaded through the
 * upload route. Reference data: tests/fixtures/calibration (generate.py: planted sub-pixel shifts made by the
 * Fourier shift theorem with Poisson noise, checked there against scikit-image's phase_cross_correlation;
 * controls with a known bleed fraction, constant background and Poisson noise, checked against
 * numpy.polyfit). The route must recover the planted shift within 0.05 px and the bleed within 2 %, and give
 * exactly what the engine gives on the same decoded pixels. The measuring runs in a decoding thread: another
 * request is answered while it measures.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { auditEvents } from '../../server/db/schema.js';
import { CalibrationDetail, FieldShift } from '../../shared/schemas/instruments.js';
import { UploadResponse } from '../../shared/schemas/fields.js';
import { decodeChannel } from '../../server/images/decode.js';
import { alignChannel, bleedThroughSlope, crossCorrelationCurves, measureShift, pooledBleedThroughSlope } from '../../shared/analysis/index.js';
import { curveHalfWidth } from '../../server/images/calibration-measure.js';
import { tiff16 } from '../runs/helpers.js';
import { Xoshiro128 } from '../../shared/analysis/prng.js';

const DIR = path.join(import.meta.dirname, '..', 'fixtures', 'calibration');
const expected = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8')) as {
  shifts: { file: string; truth: { dx: number; dy: number } }[];
  controls: { file: string; label: 1 | 2; truth: number }[];
};

let t: TestApp;
type Agent = Awaited<ReturnType<TestApp['login']>>;
let fm: Agent;
let mic: Agent;
let instrumentId: number;
const fieldIds = new Map<string, number>();

async function upload(agent: Agent, name: string, bytes: Buffer, coverslip = t.world.coverslipA): Promise<number> {
  const res = await agent.post(`/api/coverslips/${coverslip}/fields`).attach('files', bytes, { filename: name, contentType: 'image/tiff' });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const r = UploadResponse.parse(res.body).results[0];
  if (!r.ok) throw new Error(r.error);
  return r.field.id;
}

async function decoded(file: string) {
  const bytes = new Uint8Array(fs.readFileSync(path.join(DIR, file)));
  const a = await decodeChannel(bytes, 1);
  const b = await decodeChannel(bytes, 2);
  return { width: a.width, height: a.height, ch1: a.slices[0], ch2: b.slices[0] };
}

async function newDraft(agent: Agent): Promise<CalibrationDetail> {
  const res = await agent.post(`/api/instruments/${instrumentId}/calibrations`).send({ dx: null, dy: null, a21: null, a12: null });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return CalibrationDetail.parse(res.body);
}

beforeAll(async () => {
  t = await makeTestApp();
  fm = await t.login('manager');
  mic = await t.login('microscopist');
  instrumentId = (await fm.post('/api/instruments').send({ name: 'Confocal 3', objective: '63× oil', channel1: 'GFP', channel2: 'mCherry' })).body.id;
  for (const f of [...expected.shifts.map((s) => s.file), ...expected.controls.map((c) => c.file)]) fieldIds.set(f, await upload(mic, f, fs.readFileSync(path.join(DIR, f))));
});
afterAll(() => t?.close());

describe('measuring a draft calibration from a stored bead field', () => {
  it('recovers each planted shift within 0.05 px, equal to the engine on the same pixels, with the curves around it; stays a draft', async () => {
    const draft = await newDraft(fm);
    for (const s of expected.shifts) {
      const res = await fm.post(`/api/calibrations/${draft.id}/measure-shift`).send({ fieldId: fieldIds.get(s.file) });
      expect(res.status, JSON.stringify(res.body)).toBe(200);
      const c = CalibrationDetail.parse(res.body);
      expect(c.status).toBe('draft');
      expect(Math.abs(c.dx! - s.truth.dx), `${s.file} dx`).toBeLessThan(0.05);
      expect(Math.abs(c.dy! - s.truth.dy), `${s.file} dy`).toBeLessThan(0.05);
      const px = await decoded(s.file);
      const engine = measureShift(px.ch1, px.ch2, px.width, px.height);
      expect([c.dx, c.dy]).toEqual([engine.dx, engine.dy]);
      const src = c.sources.shift!;
      expect(src).toMatchObject({ field: { id: fieldIds.get(s.file), name: s.file.replace(/\.tif$/, ''), studyId: t.world.studyA }, dx: c.dx, dy: c.dy, peak: engine.peak, z: 'single plane', measuredBy: { name: expect.any(String) } });
      // van Steensel curves: the engine's, wide enough to show the peak, which sits within 1 px of the planted shift
      const half = curveHalfWidth(8, engine.dx!, engine.dy!);
      const through = { dx: Math.round(engine.dx!), dy: Math.round(engine.dy!) };
      expect(src.curves).toEqual({ through, ...crossCorrelationCurves(px.ch1, px.ch2, px.width, px.height, half, null, through) });
      const argmax = (r: (number | null)[]) => src.curves.shifts[r.reduce<number>((best, v, i) => ((v ?? -2) > (r[best] ?? -2) ? i : best), 0)];
      expect(Math.abs(argmax(src.curves.x) - s.truth.dx)).toBeLessThanOrEqual(1);
      expect(Math.abs(argmax(src.curves.y) - s.truth.dy)).toBeLessThanOrEqual(1);
    }
    const events = t.ctx.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'calibration.measure_shift'), eq(auditEvents.entityId, draft.id))).all();
    expect(events).toHaveLength(expected.shifts.length);
    // the value stays editable; the source stays beside it
    const edited = CalibrationDetail.parse((await fm.patch(`/api/calibrations/${draft.id}`).send({ dx: 1.5 })).body);
    expect(edited.dx).toBe(1.5);
    expect(edited.sources.shift?.field.id).toBe(fieldIds.get(expected.shifts.at(-1)!.file));
    // submitting is the usual transition; a submitted version cannot be measured
    expect((await fm.post(`/api/calibrations/${draft.id}/submit`).send({})).body.status).toBe('submitted');
    const late = await fm.post(`/api/calibrations/${draft.id}/measure-shift`).send({ fieldId: fieldIds.get(expected.shifts[0].file) });
    expect(late.status).toBe(409);
    expect(late.body.error).toMatch(/is submitted and cannot change/);
    await fm.post(`/api/calibrations/${draft.id}/retire`).send({});
  });

  it('GET /api/fields/:id/shift measures a field without storing anything', async () => {
    const s = expected.shifts[1];
    const res = await mic.get(`/api/fields/${fieldIds.get(s.file)}/shift?maxShift=3`);
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const m = FieldShift.parse(res.body);
    expect(Math.abs(m.dx - s.truth.dx)).toBeLessThan(0.05);
    expect(Math.abs(m.dy - s.truth.dy)).toBeLessThan(0.05);
    // asked ±3, widened to reach 2 px past the shift (|dx| ≈ 7.4 → ±10)
    expect(m.curves.shifts[0]).toBe(-10);
    expect(m.curves.shifts.at(-1)).toBe(10);
    const bad = await mic.get(`/api/fields/${fieldIds.get(s.file)}/shift?maxShift=99`);
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/1 to 24 px, got 99/);
    expect((await (await t.login('outsider')).get(`/api/fields/${fieldIds.get(s.file)}/shift`)).status).toBe(404);
  });
});

describe('measuring bleed-through from single-label controls', () => {
  it('recovers a21 and a12 within 2 %, equal to the engine; aligned with the draft shift once it has one; pooled over controls', async () => {
    const draft = await newDraft(fm);
    for (const c of expected.controls) {
      const res = await fm.post(`/api/calibrations/${draft.id}/measure-bleed`).send({ label: c.label, fieldIds: [fieldIds.get(c.file)] });
      expect(res.status, JSON.stringify(res.body)).toBe(200);
      const d = CalibrationDetail.parse(res.body);
      const key = c.label === 1 ? 'a21' : 'a12';
      expect(Math.abs(d[key]! - c.truth) / c.truth, `${c.file} ${key}`).toBeLessThan(0.02);
      const px = await decoded(c.file);
      expect(d[key]).toBe(c.label === 1 ? bleedThroughSlope(px.ch1, px.ch2) : bleedThroughSlope(px.ch2, px.ch1));
      expect(d.sources[key]).toMatchObject({ fields: [{ id: fieldIds.get(c.file) }], slope: d[key], value: d[key], alignedWith: null, pixels: px.width * px.height });
    }
    // two controls of label 1 pooled: each keeps its own background
    const both = expected.controls.filter((c) => c.label === 1);
    const pooled = CalibrationDetail.parse((await fm.post(`/api/calibrations/${draft.id}/measure-bleed`).send({ label: 1, fieldIds: both.map((c) => fieldIds.get(c.file)) })).body);
    const pxs = await Promise.all(both.map((c) => decoded(c.file)));
    expect(pooled.a21).toBe(pooledBleedThroughSlope(pxs.map((p) => ({ labelled: p.ch1, seen: p.ch2 }))).slope);
    expect(pooled.sources.a21?.fields.map((f) => f.id)).toEqual(both.map((c) => fieldIds.get(c.file)));
    // with a shift in the draft, channel 2 is aligned first
    await fm.patch(`/api/calibrations/${draft.id}`).send({ dx: 0.4, dy: -0.3 });
    const c0 = expected.controls[0];
    const aligned = CalibrationDetail.parse((await fm.post(`/api/calibrations/${draft.id}/measure-bleed`).send({ label: 1, fieldIds: [fieldIds.get(c0.file)] })).body);
    const px = await decoded(c0.file);
    expect(aligned.a21).toBe(bleedThroughSlope(px.ch1, alignChannel(px.ch2, px.width, px.height, 0.4, -0.3)));
    expect(aligned.sources.a21?.alignedWith).toEqual({ dx: 0.4, dy: -0.3 });
    // a new version takes the values over with their sources
    await fm.post(`/api/calibrations/${draft.id}/submit`).send({});
    await fm.post(`/api/calibrations/${draft.id}/approve`).send({});
    const carried = CalibrationDetail.parse((await fm.post(`/api/instruments/${instrumentId}/calibrations`).send({})).body);
    expect(carried).toMatchObject({ a21: aligned.a21, a12: aligned.a12 });
    expect(carried.sources.a21).toEqual(aligned.sources.a21);
    const typed = await newDraft(fm);
    expect(typed.sources).toEqual({ shift: null, a21: null, a12: null }); // values given in the request: no sources
  });

  it('refuses what a single-label control cannot give, quoting it', async () => {
    const draft = await newDraft(fm);
    // a control labelled in channel 2 taken for one labelled in channel 1: the slope is about 1 / a12
    const res = await fm.post(`/api/calibrations/${draft.id}/measure-bleed`).send({ label: 1, fieldIds: [fieldIds.get('control1.tif')] });
    expect(res.status).toBe(422);
    expect(res.body.error).toMatch(/the controls give a21 = \d+\.\d{4}, outside the fractions \[0, 1\) a bleed-through can be: are they labelled in channel 1 only\?/);
    for (const [body, msg] of [
      [{ label: 3, fieldIds: [1] }, /label must be 1 or 2 .*got 3/],
      [{ label: 1, fieldIds: [] }, /choose at least one control field/],
      [{ label: 1, fieldIds: [fieldIds.get('control0.tif'), fieldIds.get('control0.tif')] }, /listed twice/],
    ] as const) {
      const r = await fm.post(`/api/calibrations/${draft.id}/measure-bleed`).send(body);
      expect(r.status).toBe(400);
      expect(r.body.error).toMatch(msg);
    }
    const unknown = await fm.post(`/api/calibrations/${draft.id}/measure-bleed`).send({ label: 1, fieldIds: [999999] });
    expect(unknown.status).toBe(404);
    expect(unknown.body.error).toMatch(/no field with id 999999/);
  });
});

describe('who may measure', () => {
  it('collaborators never; others only on versions they may edit and fields they may read', async () => {
    const draft = await newDraft(fm);
    const field = fieldIds.get(expected.shifts[0].file)!;
    expect((await (await t.login('collaborator')).post(`/api/calibrations/${draft.id}/measure-shift`).send({ fieldId: field })).status).toBe(403);
    // a microscopist may propose, but this draft is the manager's
    const notOwner = await mic.post(`/api/calibrations/${draft.id}/measure-shift`).send({ fieldId: field });
    expect(notOwner.status).toBe(403);
    expect(notOwner.body.error).toMatch(/only the proposer or a facility manager/);
    // the outsider (lab B) proposes a draft but cannot read lab A's field
    const outsider = await t.login('outsider');
    const own = CalibrationDetail.parse((await outsider.post(`/api/instruments/${instrumentId}/calibrations`).send({ dx: null, dy: null, a21: null, a12: null })).body);
    const hidden = await outsider.post(`/api/calibrations/${own.id}/measure-shift`).send({ fieldId: field });
    expect(hidden.status).toBe(404);
    expect(hidden.body.error).toMatch(new RegExp(`no field with id ${field}`));
    const bleedHidden = await outsider.post(`/api/calibrations/${own.id}/measure-bleed`).send({ label: 2, fieldIds: [fieldIds.get('control1.tif')] });
    expect(bleedHidden.status).toBe(404);
    expect((await fm.post('/api/calibrations/999999/measure-shift').send({ fieldId: field })).status).toBe(404);
    const bad = await fm.post(`/api/calibrations/${draft.id}/measure-shift`).send({ fieldId: field, maxShift: 0.5 });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/whole number of pixels, got 0.5/);
  });
});

describe('off the web thread', () => {
  it('answers other requests while a large field is measured', async () => {
    // 1024² beads, channel 2 displaced by (3, −2) px: long enough to measure that requests can overlap it
    const W = 1024, H = 1024;
    const rng = new Xoshiro128(15);
    const a = new Uint16Array(W * H), b = new Uint16Array(W * H);
    const beads = Array.from({ length: 900 }, () => [rng.nextFloat() * W, rng.nextFloat() * H]);
    for (const [cx, cy] of beads)
      for (let y = Math.max(0, Math.floor(cy) - 5); y < Math.min(H, cy + 6); y++)
        for (let x = Math.max(0, Math.floor(cx) - 5); x < Math.min(W, cx + 6); x++) {
          a[y * W + x] += Math.round(2000 * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / 4));
          const x2 = x - 3, y2 = y + 2;
          if (x2 >= 0 && y2 < H) b[y2 * W + x2] += Math.round(1500 * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / 4));
        }
    const big = await upload(mic, 'big-beads.tif', tiff16(W, H, [a, b]));
    const draft = await newDraft(fm);
    // warm the decoding thread first, so what overlaps below is the measuring itself
    await mic.get(`/api/fields/${fieldIds.get(expected.shifts[4].file)}/shift`);
    let finished = 0;
    const measuring = fm
      .post(`/api/calibrations/${draft.id}/measure-shift`)
      .send({ fieldId: big, maxShift: 12 })
      .then((r) => {
        finished = performance.now();
        return r;
      });
    const answered: number[] = [];
    while (!finished && answered.length < 200) {
      const r = await mic.get('/api/instruments');
      expect(r.status).toBe(200);
      if (!finished) answered.push(performance.now());
    }
    const res = await measuring;
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    const c = CalibrationDetail.parse(res.body);
    expect(Math.abs(c.dx! - -3)).toBeLessThan(0.05);
    expect(Math.abs(c.dy! - 2)).toBeLessThan(0.05);
    expect(answered.length, 'requests answered while measuring').toBeGreaterThanOrEqual(3);
  }, 60_000);
});

describe('limits of one measurement', () => {
  it('a measurement that overruns the decoding threads’ time limit is one 422 line, and nothing changes', async () => {
    const slow = await makeTestApp({ DECODE_TIMEOUT_MS: '1' });
    try {
      const m = await slow.login('manager');
      const inst = (await m.post('/api/instruments').send({ name: 'Slow stand', channel1: 'a', channel2: 'b' })).body.id;
      const d = CalibrationDetail.parse((await m.post(`/api/instruments/${inst}/calibrations`).send({})).body);
      // stored directly (an upload would meet the same 1 ms limit)
      const { addField, syntheticPair } = await import('../runs/helpers.js');
      const [a, b] = syntheticPair(64, 64, 2);
      const { fieldId } = await addField(slow.ctx, slow.world.coverslipA, { name: 'slow beads', width: 64, height: 64, ch1: a, ch2: b, cells: [] });
      const res = await m.post(`/api/calibrations/${d.id}/measure-shift`).send({ fieldId });
      expect(res.status).toBe(422);
      expect(res.body.error).toBe('measuring the shift of "slow beads" took longer than the 1 ms allowed for one measurement and was stopped');
      expect(CalibrationDetail.parse((await m.get(`/api/calibrations/${d.id}`)).body)).toMatchObject({ dx: null, dy: null, sources: { shift: null } });
    } finally {
      await slow.close();
    }
  });
});
