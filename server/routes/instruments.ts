/**
 * Instruments (facility managers record them) and their versioned calibrations: channel 2's shift and the
 * bleed-through coefficients, with the recipes' life cycle (draft → submitted → approved | returned;
 * retired), the same transitions table (`RECIPE_TRANSITIONS`), 409 for an illegal transition and an audit
 * event per change in the same transaction. An instrument's approved calibration is its highest approved
 * version; approved versions are immutable (a change is a new version).
 */
import { Router } from 'express';
import { and, desc, eq, max } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, calibrations, instruments } from '../db/schema.js';
import { can, hasRole, requireCan } from '../auth/policy.js';
import type { SessionUser } from '../auth/session.js';
import { badRequest, conflict, forbidden, HttpError, notFound, parse } from '../http/errors.js';
import { idParam } from '../http/params.js';
import {
  CalibrationTransitionRequest,
  CreateCalibrationRequest,
  CreateInstrumentRequest,
  MeasureBleedRequest,
  MeasureShiftRequest,
  UpdateCalibrationRequest,
  type BleedSource,
  type CalibrationSources,
  type CalibrationDetail,
  type CalibrationSummary,
  type InstrumentDetail,
  type InstrumentSummary,
} from '../../shared/schemas/instruments.js';
import type { RecipeStatus } from '../../shared/schemas/recipes.js';
import { RECIPE_TRANSITIONS, userNames } from './recipes.js';
import { approvedCalibration } from '../runs/records.js';
import { notifyCalibrationApproved } from '../mail/notify.js';
import { decodePoolOf } from '../images/decode-pool.js';
import { loadFieldFor } from './fields.js';
import { storedFieldBytes } from '../images/calibration-bytes.js';

type CalibrationRow = typeof calibrations.$inferSelect;
type InstrumentRow = typeof instruments.$inferSelect;
type Transition = keyof typeof RECIPE_TRANSITIONS;
const EDITABLE: RecipeStatus[] = ['draft', 'returned'];
/** How far below 0 a measured bleed-through slope may come out from noise and still be recorded as 0. */
const NEGATIVE_NOISE = 0.01;
type Names = ReturnType<typeof userNames>;

function loadInstrument(ctx: AppContext, id: number): InstrumentRow {
  const row = ctx.db.select().from(instruments).where(eq(instruments.id, id)).get();
  if (!row) throw notFound(`no instrument with id ${id}`);
  return row;
}

function calibrationSummary(c: CalibrationRow, name: Names): CalibrationSummary {
  return {
    id: c.id,
    instrumentId: c.instrumentId,
    version: c.version,
    status: c.status,
    dx: c.dx,
    dy: c.dy,
    a21: c.a21,
    a12: c.a12,
    note: c.note,
    proposer: name(c.proposerId),
    reviewer: name(c.reviewerId),
    reviewNote: c.reviewNote,
    submittedAt: c.submittedAt,
    reviewedAt: c.reviewedAt,
    createdAt: c.createdAt,
  };
}

function instrumentSummary(ctx: AppContext, i: InstrumentRow): InstrumentSummary {
  const a = approvedCalibration(ctx.db, i.id);
  const name = userNames(ctx, a ? [a.proposerId, a.reviewerId] : []);
  return { id: i.id, name: i.name, objective: i.objective, channel1: i.channel1, channel2: i.channel2, createdAt: i.createdAt, approved: a ? calibrationSummary(a, name) : null };
}

const isOwnerOrReviewer = (u: SessionUser, c: CalibrationRow) => c.proposerId === u.id || hasRole(u, 'facility_manager');

function calibrationDetail(ctx: AppContext, u: SessionUser, c: CalibrationRow): CalibrationDetail {
  const events = ctx.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.entity, 'calibration'), eq(auditEvents.entityId, c.id)))
    .orderBy(auditEvents.id)
    .all();
  const name = userNames(ctx, [c.proposerId, c.reviewerId, ...events.map((e) => e.actorId)]);
  const allowed: CalibrationDetail['allowed'] = [];
  if (EDITABLE.includes(c.status) && isOwnerOrReviewer(u, c)) allowed.push('edit');
  if (RECIPE_TRANSITIONS.submit.from.includes(c.status) && isOwnerOrReviewer(u, c)) allowed.push('submit');
  if (can(u, 'review_calibration')) {
    if (RECIPE_TRANSITIONS.approve.from.includes(c.status)) allowed.push('approve', 'return');
    if (RECIPE_TRANSITIONS.retire.from.includes(c.status)) allowed.push('retire');
  }
  return {
    ...calibrationSummary(c, name),
    sources: c.sources ?? NO_SOURCES,
    history: events.map((e) => ({
      at: e.at,
      action: e.action.replace(/^calibration\./, ''),
      actor: name(e.actorId),
      note: typeof e.details?.note === 'string' ? (e.details.note as string) : null,
    })),
    allowed,
  };
}

const NO_SOURCES: CalibrationSources = { shift: null, a21: null, a12: null };

/** Loads a calibration the user may change now (proposer or facility manager, draft or returned), else 404/403/409. */
function loadEditable(db: Pick<AppContext['db'], 'select'>, u: SessionUser, id: number): CalibrationRow {
  const cur = db.select().from(calibrations).where(eq(calibrations.id, id)).get();
  if (!cur) throw notFound(`no calibration with id ${id}`);
  if (!isOwnerOrReviewer(u, cur)) throw forbidden('only the proposer or a facility manager may edit this calibration');
  if (!EDITABLE.includes(cur.status))
    throw conflict(`calibration v${cur.version} is ${cur.status} and cannot change${cur.status === 'submitted' ? ' until it is returned' : '; make a new version instead'}`);
  return cur;
}

/** A stored field the user may read, for measuring (404 naming it otherwise, deleted included). */
function sourceField(ctx: AppContext, u: SessionUser, fieldId: number) {
  const { field, studyId } = loadFieldFor(ctx, u, fieldId, 'read');
  if (field.status === 'deleted') throw notFound(`no field with id ${fieldId}`);
  return { field, studyId };
}

/** A shift is both components or neither (400 quoting them). */
function checkShiftPair(dx: number | null, dy: number | null): void {
  if ((dx === null) !== (dy === null)) throw badRequest(`give both shift components or neither, received dx ${dx} and dy ${dy}`);
}

function audit(tx: Pick<AppContext['db'], 'insert'>, actorId: number, action: string, c: CalibrationRow, details: Record<string, unknown> = {}) {
  tx.insert(auditEvents)
    .values({ actorId, action: `calibration.${action}`, entity: 'calibration', entityId: c.id, details: { instrumentId: c.instrumentId, version: c.version, ...details } })
    .run();
}

/** The sources of the values a new version takes over from the latest one (a value given in the request has none). */
function carriedSources(prev: CalibrationRow | undefined, body: { dx?: number | null; dy?: number | null; a21?: number | null; a12?: number | null }): CalibrationSources | null {
  const s = prev?.sources;
  if (!s) return null;
  const out: CalibrationSources = {
    shift: body.dx === undefined && body.dy === undefined ? s.shift : null,
    a21: body.a21 === undefined ? s.a21 : null,
    a12: body.a12 === undefined ? s.a12 : null,
  };
  return out.shift || out.a21 || out.a12 ? out : null;
}

/** Writes measured values into a still-editable version with their sources, audited; 409 if it moved on meanwhile. */
function recordMeasured(ctx: AppContext, u: SessionUser, id: number, action: string, values: Partial<Record<'dx' | 'dy' | 'a21' | 'a12', number>>, sources: Partial<CalibrationSources>, details: Record<string, unknown>) {
  return ctx.db.transaction((tx) => {
    const cur = loadEditable(tx, u, id);
    const next = tx
      .update(calibrations)
      .set({ ...values, sources: { ...NO_SOURCES, ...cur.sources, ...sources } })
      .where(and(eq(calibrations.id, id), eq(calibrations.status, cur.status)))
      .returning()
      .get();
    if (!next) throw conflict(`calibration ${id} changed meanwhile; reload and try again`);
    audit(tx, u.id, action, next, details);
    return next;
  });
}

export default function instrumentsRoutes(ctx: AppContext) {
  const r = Router();

  r.get('/instruments', (req, res) => {
    requireCan(req.user, 'read_instruments');
    const rows = ctx.db.select().from(instruments).orderBy(instruments.name).all();
    res.json({ instruments: rows.map((i) => instrumentSummary(ctx, i)) });
  });

  r.post('/instruments', (req, res) => {
    requireCan(req.user, 'manage_instruments');
    const body = parse(CreateInstrumentRequest, req.body);
    const u = req.user!;
    if (ctx.db.select({ id: instruments.id }).from(instruments).where(eq(instruments.name, body.name)).get())
      throw conflict(`an instrument named "${body.name}" exists already`);
    const row = ctx.db.transaction((tx) => {
      const created = tx.insert(instruments).values({ ...body, createdBy: u.id }).returning().get();
      tx.insert(auditEvents).values({ actorId: u.id, action: 'instrument.create', entity: 'instrument', entityId: created.id, details: { name: created.name } }).run();
      return created;
    });
    res.status(201).json({ ...instrumentSummary(ctx, row), calibrations: [] } satisfies InstrumentDetail);
  });

  r.get('/instruments/:id', (req, res) => {
    requireCan(req.user, 'read_instruments');
    const i = loadInstrument(ctx, idParam(req, 'id'));
    const rows = ctx.db.select().from(calibrations).where(eq(calibrations.instrumentId, i.id)).orderBy(desc(calibrations.version)).all();
    const name = userNames(ctx, rows.flatMap((c) => [c.proposerId, c.reviewerId]));
    res.json({ ...instrumentSummary(ctx, i), calibrations: rows.map((c) => calibrationSummary(c, name)) } satisfies InstrumentDetail);
  });

  /** A new draft calibration version of the instrument (values start from the latest version unless given). */
  r.post('/instruments/:id/calibrations', (req, res) => {
    requireCan(req.user, 'propose_calibration');
    const u = req.user!;
    const i = loadInstrument(ctx, idParam(req, 'id'));
    const body = parse(CreateCalibrationRequest, req.body ?? {});
    const row = ctx.db.transaction((tx) => {
      const top = tx.select({ v: max(calibrations.version) }).from(calibrations).where(eq(calibrations.instrumentId, i.id)).get();
      const prev = top?.v ? tx.select().from(calibrations).where(and(eq(calibrations.instrumentId, i.id), eq(calibrations.version, top.v))).get() : undefined;
      const pick = <K extends 'dx' | 'dy' | 'a21' | 'a12'>(k: K) => (body[k] !== undefined ? body[k] : (prev?.[k] ?? null));
      checkShiftPair(pick('dx'), pick('dy'));
      const created = tx
        .insert(calibrations)
        .values({ instrumentId: i.id, version: (top?.v ?? 0) + 1, status: 'draft', dx: pick('dx'), dy: pick('dy'), a21: pick('a21'), a12: pick('a12'), note: body.note, proposerId: u.id, sources: carriedSources(prev, body) })
        .returning()
        .get();
      audit(tx, u.id, 'create', created, prev ? { from: { id: prev.id, version: prev.version } } : {});
      return created;
    });
    res.status(201).json(calibrationDetail(ctx, u, row));
  });

  r.get('/calibrations/:id', (req, res) => {
    requireCan(req.user, 'read_instruments');
    const id = idParam(req, 'id');
    const c = ctx.db.select().from(calibrations).where(eq(calibrations.id, id)).get();
    if (!c) throw notFound(`no calibration with id ${id}`);
    res.json(calibrationDetail(ctx, req.user!, c));
  });

  r.patch('/calibrations/:id', (req, res) => {
    requireCan(req.user, 'propose_calibration');
    const u = req.user!;
    const id = idParam(req, 'id');
    const body = parse(UpdateCalibrationRequest, req.body);
    const row = ctx.db.transaction((tx) => {
      const cur = loadEditable(tx, u, id);
      const changed = (Object.keys(body) as (keyof typeof body)[]).filter((k) => body[k] !== undefined);
      checkShiftPair(body.dx !== undefined ? body.dx : cur.dx, body.dy !== undefined ? body.dy : cur.dy);
      const next = tx.update(calibrations).set(Object.fromEntries(changed.map((k) => [k, body[k]]))).where(eq(calibrations.id, id)).returning().get();
      audit(tx, u.id, 'edit', next, { changed });
      return next;
    });
    res.json(calibrationDetail(ctx, u, row));
  });

  /**
   * Measures channel 2's shift on a stored bead field (in a decoding thread) and writes it into the draft,
   * with the field, the peak and the cross-correlation curves as its source. The draft stays a draft.
   */
  r.post('/calibrations/:id/measure-shift', async (req, res) => {
    requireCan(req.user, 'propose_calibration');
    const u = req.user!;
    const id = idParam(req, 'id');
    const body = parse(MeasureShiftRequest, req.body);
    loadEditable(ctx.db, u, id);
    const { field, studyId } = sourceField(ctx, u, body.fieldId);
    const m = await decodePoolOf(ctx).measureShift(await storedFieldBytes(ctx, field), body.maxShift);
    const measuredAt = new Date().toISOString();
    const row = recordMeasured(
      ctx,
      u,
      id,
      'measure_shift',
      { dx: m.dx, dy: m.dy },
      { shift: { field: { id: field.id, name: field.name, studyId }, dx: m.dx, dy: m.dy, peak: m.peak, z: m.z, curves: m.curves, measuredAt, measuredBy: { id: u.id, name: u.name } } },
      { fieldId: field.id, dx: m.dx, dy: m.dy },
    );
    res.json(calibrationDetail(ctx, u, row));
  });

  /**
   * Measures a21 (controls labelled in channel 1) or a12 (labelled in channel 2) on stored control fields,
   * pooled, after aligning channel 2 with the draft's shift when it has one; writes it into the draft.
   * A slope below 0 by at most NEGATIVE_NOISE is recorded as 0 (stated in the source); further below, or 1 and
   * above, is refused quoting it.
   */
  r.post('/calibrations/:id/measure-bleed', async (req, res) => {
    requireCan(req.user, 'propose_calibration');
    const u = req.user!;
    const id = idParam(req, 'id');
    const body = parse(MeasureBleedRequest, req.body);
    const cur = loadEditable(ctx.db, u, id);
    const chosen = body.fieldIds.map((f) => sourceField(ctx, u, f));
    const bytes = [];
    for (const c of chosen) bytes.push(await storedFieldBytes(ctx, c.field));
    const align = cur.dx !== null && cur.dy !== null ? { dx: cur.dx, dy: cur.dy } : null;
    const m = await decodePoolOf(ctx).measureBleed(bytes, body.label, align);
    const key = body.label === 1 ? 'a21' : 'a12';
    if (m.slope >= 1 || m.slope < -NEGATIVE_NOISE)
      throw new HttpError(422, `the controls give ${key} = ${m.slope.toFixed(4)}, outside the fractions [0, 1) a bleed-through can be: are they labelled in channel ${body.label} only?`);
    const value = Math.max(0, m.slope);
    const source: BleedSource = {
      fields: chosen.map((c) => ({ id: c.field.id, name: c.field.name, studyId: c.studyId })),
      slope: m.slope,
      value,
      alignedWith: align,
      pixels: m.pixels,
      measuredAt: new Date().toISOString(),
      measuredBy: { id: u.id, name: u.name },
    };
    const row = recordMeasured(ctx, u, id, 'measure_bleed', { [key]: value }, { [key]: source }, { [key]: value, slope: m.slope, fieldIds: body.fieldIds });
    res.json(calibrationDetail(ctx, u, row));
  });

  for (const t of Object.keys(RECIPE_TRANSITIONS) as Transition[]) {
    r.post(`/calibrations/:id/${t}`, async (req, res) => {
      const rule = RECIPE_TRANSITIONS[t];
      requireCan(req.user, rule.reviewer ? 'review_calibration' : 'propose_calibration');
      const u = req.user!;
      const id = idParam(req, 'id');
      const { note } = parse(CalibrationTransitionRequest, req.body ?? {});
      if (t === 'return' && !note) throw badRequest('say what should change: a note is required to return a calibration');
      const row = ctx.db.transaction((tx) => {
        const cur = tx.select().from(calibrations).where(eq(calibrations.id, id)).get();
        if (!cur) throw notFound(`no calibration with id ${id}`);
        if (t === 'submit' && !isOwnerOrReviewer(u, cur)) throw forbidden('only the proposer or a facility manager may submit this calibration');
        if (!rule.from.includes(cur.status))
          throw conflict(`cannot ${t} calibration v${cur.version}: it is ${cur.status} (allowed from ${rule.from.join(' or ')})`);
        if (t === 'submit' && cur.dx === null && cur.dy === null && cur.a21 === null && cur.a12 === null)
          throw conflict(`calibration v${cur.version} has no values yet: give the shift or the bleed-through coefficients before submitting`);
        const at = new Date().toISOString();
        const next = tx
          .update(calibrations)
          .set({
            status: rule.to,
            ...(t === 'submit' ? { submittedAt: at } : {}),
            ...(t === 'approve' || t === 'return' ? { reviewerId: u.id, reviewedAt: at, reviewNote: note ?? null } : {}),
          })
          .where(and(eq(calibrations.id, id), eq(calibrations.status, cur.status)))
          .returning()
          .get();
        if (!next) throw conflict(`calibration ${id} changed meanwhile; reload and try again`);
        audit(tx, u.id, t, next, { from: cur.status, to: rule.to, note: note ?? null });
        return next;
      });
      if (t === 'approve') await notifyCalibrationApproved(ctx, row, u);
      res.json(calibrationDetail(ctx, u, row));
    });
  }

  return r;
}
