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
import { badRequest, conflict, forbidden, notFound, parse } from '../http/errors.js';
import { idParam } from '../http/params.js';
import {
  CalibrationTransitionRequest,
  CreateCalibrationRequest,
  CreateInstrumentRequest,
  UpdateCalibrationRequest,
  type CalibrationDetail,
  type CalibrationSummary,
  type InstrumentDetail,
  type InstrumentSummary,
} from '../../shared/schemas/instruments.js';
import type { RecipeStatus } from '../../shared/schemas/recipes.js';
import { RECIPE_TRANSITIONS, userNames } from './recipes.js';
import { approvedCalibration } from '../runs/records.js';
import { notifyCalibrationApproved } from '../mail/notify.js';

type CalibrationRow = typeof calibrations.$inferSelect;
type InstrumentRow = typeof instruments.$inferSelect;
type Transition = keyof typeof RECIPE_TRANSITIONS;
const EDITABLE: RecipeStatus[] = ['draft', 'returned'];
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
    history: events.map((e) => ({
      at: e.at,
      action: e.action.replace(/^calibration\./, ''),
      actor: name(e.actorId),
      note: typeof e.details?.note === 'string' ? (e.details.note as string) : null,
    })),
    allowed,
  };
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
        .values({ instrumentId: i.id, version: (top?.v ?? 0) + 1, status: 'draft', dx: pick('dx'), dy: pick('dy'), a21: pick('a21'), a12: pick('a12'), note: body.note, proposerId: u.id })
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
      const cur = tx.select().from(calibrations).where(eq(calibrations.id, id)).get();
      if (!cur) throw notFound(`no calibration with id ${id}`);
      if (!isOwnerOrReviewer(u, cur)) throw forbidden('only the proposer or a facility manager may edit this calibration');
      if (!EDITABLE.includes(cur.status))
        throw conflict(`calibration v${cur.version} is ${cur.status} and cannot change${cur.status === 'submitted' ? ' until it is returned' : '; make a new version instead'}`);
      const changed = (Object.keys(body) as (keyof typeof body)[]).filter((k) => body[k] !== undefined);
      checkShiftPair(body.dx !== undefined ? body.dx : cur.dx, body.dy !== undefined ? body.dy : cur.dy);
      const next = tx.update(calibrations).set(Object.fromEntries(changed.map((k) => [k, body[k]]))).where(eq(calibrations.id, id)).returning().get();
      audit(tx, u.id, 'edit', next, { changed });
      return next;
    });
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
