/**
 * Studies, conditions and coverslips. Route list and shapes: shared/schemas/studies.ts.
 * Every permission goes through server/auth/policy.ts (404 when the study is not visible, 403 when visible
 * but the action is not allowed); every multi-row write runs in one transaction; deletes are audited.
 */
import { Router, type Request } from 'express';
import { and, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, cells, conditions, coverslips, fields, instruments, labMembers, labs, measurements, runFields, studies, users } from '../db/schema.js';
import {
  CreateConditionRequest,
  CreateCoverslipRequest,
  CreateStudyRequest,
  DeleteStudyRequest,
  ReorderRequest,
  StudyDetail,
  StudyListResponse,
  StudySummary,
  UpdateConditionRequest,
  UpdateCoverslipRequest,
  UpdateStudyRequest,
  type StudyAction,
} from '../../shared/schemas/studies.js';
import { badRequest, conflict, parse } from '../http/errors.js';
import { requireUser, type SessionUser } from '../auth/session.js';
import { notFoundAsked, requireCan, requireStudy, studyPermissions, hasRole, type Study } from '../auth/policy.js';
import { idParam } from '../http/params.js';

type Tx = Parameters<Parameters<AppContext['db']['transaction']>[0]>[0];
const ACTION_ORDER: StudyAction[] = ['read', 'edit_structure', 'add_coverslips', 'edit_images', 'run', 'exclude', 'report', 'delete'];

const issue = (path: string, message: string) => badRequest(`${path}: ${message}`, { issues: [{ path, message }] });

export default function studiesRoutes(ctx: AppContext) {
  const r = Router();
  const db = ctx.db;

  // ---- reading -----------------------------------------------------------------------------------------
  function fieldCounts(coverslipIds: number[]) {
    const f = new Map<number, number>();
    const c = new Map<number, number>();
    if (!coverslipIds.length) return { f, c };
    for (const row of db
      .select({ id: fields.coverslipId, n: sql<number>`count(*)` })
      .from(fields)
      .where(and(inArray(fields.coverslipId, coverslipIds), eq(fields.status, 'ready')))
      .groupBy(fields.coverslipId)
      .all())
      f.set(row.id, row.n);
    for (const row of db
      .select({ id: fields.coverslipId, n: sql<number>`count(*)` })
      .from(cells)
      .innerJoin(fields, eq(fields.id, cells.fieldId))
      .where(and(inArray(fields.coverslipId, coverslipIds), eq(fields.status, 'ready'), isNull(cells.deletedAt), eq(cells.role, 'cell')))
      .groupBy(fields.coverslipId)
      .all())
      c.set(row.id, row.n);
    return { f, c };
  }

  function summaries(user: SessionUser, rows: Study[]): StudySummary[] {
    if (!rows.length) return [];
    const ids = rows.map((s) => s.id);
    const labNames = new Map(db.select().from(labs).all().map((l) => [l.id, l.name]));
    const ownerNames = new Map(
      db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, [...new Set(rows.map((s) => s.ownerId))])).all().map((u) => [u.id, u.name]),
    );
    const conds = db.select({ id: conditions.id, studyId: conditions.studyId }).from(conditions).where(inArray(conditions.studyId, ids)).all();
    const slips = conds.length
      ? db.select({ id: coverslips.id, conditionId: coverslips.conditionId }).from(coverslips).where(inArray(coverslips.conditionId, conds.map((c) => c.id))).all()
      : [];
    const { f } = fieldCounts(slips.map((s) => s.id));
    const instrumentIds = [...new Set(rows.map((s) => s.defaultInstrumentId).filter((i): i is number => i !== null))];
    const instrumentNames = new Map(instrumentIds.length ? db.select({ id: instruments.id, name: instruments.name }).from(instruments).where(inArray(instruments.id, instrumentIds)).all().map((i) => [i.id, i.name]) : []);
    const studyOfCond = new Map(conds.map((c) => [c.id, c.studyId]));
    return rows.map((s) => {
      const mySlips = slips.filter((cs) => studyOfCond.get(cs.conditionId) === s.id);
      const perms = studyPermissions(ctx.db, user, s);
      return StudySummary.parse({
        id: s.id,
        name: s.name,
        description: s.description,
        labId: s.labId,
        labName: labNames.get(s.labId) ?? '',
        ownerId: s.ownerId,
        ownerName: ownerNames.get(s.ownerId) ?? '',
        isDemo: s.isDemo,
        createdAt: s.createdAt,
        conditionCount: conds.filter((c) => c.studyId === s.id).length,
        coverslipCount: mySlips.length,
        fieldCount: mySlips.reduce((a, cs) => a + (f.get(cs.id) ?? 0), 0),
        defaultInstrument: s.defaultInstrumentId === null ? null : { id: s.defaultInstrumentId, name: instrumentNames.get(s.defaultInstrumentId) ?? '' },
        permissions: ACTION_ORDER.filter((a) => perms.has(a)),
      });
    });
  }

  function detail(user: SessionUser, studyId: number): StudyDetail {
    const s = db.select().from(studies).where(eq(studies.id, studyId)).get()!;
    const [summary] = summaries(user, [s]);
    const conds = db.select().from(conditions).where(eq(conditions.studyId, studyId)).orderBy(conditions.position, conditions.id).all();
    const slips = conds.length
      ? db.select().from(coverslips).where(inArray(coverslips.conditionId, conds.map((c) => c.id))).orderBy(coverslips.position, coverslips.id).all()
      : [];
    const { f, c } = fieldCounts(slips.map((x) => x.id));
    return StudyDetail.parse({
      ...summary,
      conditions: conds.map((cd) => ({
        id: cd.id,
        studyId: cd.studyId,
        name: cd.name,
        position: cd.position,
        coverslips: slips
          .filter((x) => x.conditionId === cd.id)
          .map((x) => ({
            id: x.id,
            conditionId: x.conditionId,
            name: x.name,
            replicate: x.replicate,
            preparedOn: x.preparedOn,
            notes: x.notes,
            position: x.position,
            fieldCount: f.get(x.id) ?? 0,
            cellCount: c.get(x.id) ?? 0,
          })),
      })),
    });
  }

  /** condition → its study, checked for `action` (404 for an unknown id or an invisible study). */
  function conditionFor(user: SessionUser | undefined, id: number, action: 'read' | 'edit_structure' | 'add_coverslips') {
    const cd = db.select().from(conditions).where(eq(conditions.id, id)).get();
    if (!cd) throw notFoundAsked({ what: 'condition', id });
    return { cd, study: requireStudy(ctx.db, user, cd.studyId, action, { what: 'condition', id }) };
  }
  function coverslipFor(user: SessionUser | undefined, id: number, action: 'read' | 'edit_structure') {
    const cs = db.select().from(coverslips).where(eq(coverslips.id, id)).get();
    if (!cs) throw notFoundAsked({ what: 'coverslip', id });
    const cd = db.select().from(conditions).where(eq(conditions.id, cs.conditionId)).get()!;
    return { cs, cd, study: requireStudy(ctx.db, user, cd.studyId, action, { what: 'coverslip', id }) };
  }

  const audit = (tx: Tx, req: Request, action: string, entity: string, entityId: number, studyId: number, details: Record<string, unknown> = {}) =>
    tx.insert(auditEvents).values({ actorId: req.user!.id, action, entity, entityId, studyId, details }).run();

  const conditionNameFree = (studyId: number, name: string, except?: number) => {
    const other = db.select().from(conditions).where(and(eq(conditions.studyId, studyId), sql`lower(${conditions.name}) = lower(${name})`)).get();
    if (other && other.id !== except) throw conflict(`this study already has a condition named "${other.name}"`);
  };
  const coverslipNameFree = (conditionId: number, name: string, except?: number) => {
    const other = db.select().from(coverslips).where(and(eq(coverslips.conditionId, conditionId), sql`lower(${coverslips.name}) = lower(${name})`)).get();
    if (other && other.id !== except) throw conflict(`this condition already has a coverslip named "${other.name}"`);
  };

  /** Rows that refer to fields without ON DELETE CASCADE (measurements, run_fields): removed first, counted for the audit. */
  function dropFieldDependents(tx: Tx, coverslipIds: number[]) {
    if (!coverslipIds.length) return { fields: 0, measurements: 0 };
    const fieldIds = tx.select({ id: fields.id }).from(fields).where(inArray(fields.coverslipId, coverslipIds)).all().map((f) => f.id);
    if (!fieldIds.length) return { fields: 0, measurements: 0 };
    const m = tx.delete(measurements).where(inArray(measurements.fieldId, fieldIds)).run().changes;
    tx.delete(runFields).where(inArray(runFields.fieldId, fieldIds)).run();
    return { fields: fieldIds.length, measurements: m };
  }

  // ---- studies -----------------------------------------------------------------------------------------
  r.get('/studies', requireUser, (req, res) => {
    const user = req.user!;
    const all = db.select().from(studies).orderBy(studies.name, studies.id).all();
    const visible = all.filter((s) => studyPermissions(ctx.db, user, s).has('read'));
    res.json(StudyListResponse.parse({ studies: summaries(user, visible) }));
  });

  r.post('/studies', requireUser, (req, res) => {
    requireCan(req.user, 'create_study');
    const user = req.user!;
    const body = parse(CreateStudyRequest, req.body);
    const myLabs = db.select({ labId: labMembers.labId }).from(labMembers).where(eq(labMembers.userId, user.id)).all().map((m) => m.labId);
    let labId = body.labId;
    if (labId !== undefined) {
      if (!db.select().from(labs).where(eq(labs.id, labId)).get()) throw issue('labId', `no lab with id ${labId}`);
      if (!myLabs.includes(labId) && !hasRole(user, 'facility_manager')) throw issue('labId', `you are not a member of lab ${labId}`);
    } else if (myLabs.length === 1) labId = myLabs[0];
    else if (myLabs.length === 0) throw issue('labId', 'you belong to no lab yet; ask a facility manager to add you to one');
    else throw issue('labId', `you belong to several labs (${myLabs.join(', ')}); choose one`);
    const s = db.transaction((tx) => {
      const s = tx.insert(studies).values({ labId: labId!, ownerId: user.id, name: body.name, description: body.description ?? '' }).returning().get();
      audit(tx, req, 'study_created', 'study', s.id, s.id, { name: s.name });
      return s;
    });
    res.status(201).json(detail(user, s.id));
  });

  r.get('/studies/:studyId', requireUser, (req, res) => {
    const id = idParam(req, 'studyId');
    requireStudy(ctx.db, req.user, id, 'read');
    res.json(detail(req.user!, id));
  });

  r.patch('/studies/:studyId', requireUser, (req, res) => {
    const id = idParam(req, 'studyId');
    const study = requireStudy(ctx.db, req.user, id, 'edit_structure');
    const body = parse(UpdateStudyRequest, req.body);
    const instrumentId = body.defaultInstrumentId;
    if (instrumentId != null && !db.select({ id: instruments.id }).from(instruments).where(eq(instruments.id, instrumentId)).get()) throw notFoundAsked({ what: 'instrument', id: instrumentId });
    db.transaction((tx) => {
      tx.update(studies)
        .set({
          ...(body.name !== undefined && { name: body.name }),
          ...(body.description !== undefined && { description: body.description }),
          ...(instrumentId !== undefined && { defaultInstrumentId: instrumentId }),
        })
        .where(eq(studies.id, id))
        .run();
      audit(tx, req, 'study_updated', 'study', id, id, { before: { name: study.name, description: study.description, defaultInstrumentId: study.defaultInstrumentId }, after: body });
    });
    res.json(detail(req.user!, id));
  });

  r.delete('/studies/:studyId', requireUser, (req, res) => {
    const id = idParam(req, 'studyId');
    const study = requireStudy(ctx.db, req.user, id, 'delete');
    const body = parse(DeleteStudyRequest, { confirmName: req.body?.confirmName ?? req.query.confirmName });
    if (body.confirmName.trim() !== study.name) throw issue('confirmName', `type the study name "${study.name}" exactly to delete it`);
    db.transaction((tx) => {
      const condIds = tx.select({ id: conditions.id }).from(conditions).where(eq(conditions.studyId, id)).all().map((c) => c.id);
      const slipIds = condIds.length ? tx.select({ id: coverslips.id }).from(coverslips).where(inArray(coverslips.conditionId, condIds)).all().map((c) => c.id) : [];
      const dropped = dropFieldDependents(tx, slipIds);
      tx.delete(studies).where(eq(studies.id, id)).run();
      audit(tx, req, 'study_deleted', 'study', id, id, { name: study.name, labId: study.labId, conditions: condIds.length, coverslips: slipIds.length, ...dropped });
    });
    res.json({ ok: true });
  });

  // ---- conditions --------------------------------------------------------------------------------------
  r.post('/studies/:studyId/conditions', requireUser, (req, res) => {
    const id = idParam(req, 'studyId');
    requireStudy(ctx.db, req.user, id, 'edit_structure');
    const body = parse(CreateConditionRequest, req.body);
    conditionNameFree(id, body.name);
    db.transaction((tx) => {
      const pos = tx.select({ m: sql<number | null>`max(${conditions.position})` }).from(conditions).where(eq(conditions.studyId, id)).get()?.m;
      const cd = tx.insert(conditions).values({ studyId: id, name: body.name, position: (pos ?? -1) + 1 }).returning().get();
      audit(tx, req, 'condition_created', 'condition', cd.id, id, { name: cd.name });
    });
    res.status(201).json(detail(req.user!, id));
  });

  r.patch('/conditions/:id', requireUser, (req, res) => {
    const { cd, study } = conditionFor(req.user, idParam(req, 'id'), 'edit_structure');
    const body = parse(UpdateConditionRequest, req.body);
    conditionNameFree(study.id, body.name, cd.id);
    db.transaction((tx) => {
      tx.update(conditions).set({ name: body.name }).where(eq(conditions.id, cd.id)).run();
      audit(tx, req, 'condition_renamed', 'condition', cd.id, study.id, { from: cd.name, to: body.name });
    });
    res.json(detail(req.user!, study.id));
  });

  r.delete('/conditions/:id', requireUser, (req, res) => {
    const { cd, study } = conditionFor(req.user, idParam(req, 'id'), 'edit_structure');
    db.transaction((tx) => {
      const slipIds = tx.select({ id: coverslips.id }).from(coverslips).where(eq(coverslips.conditionId, cd.id)).all().map((c) => c.id);
      const dropped = dropFieldDependents(tx, slipIds);
      tx.delete(conditions).where(eq(conditions.id, cd.id)).run();
      audit(tx, req, 'condition_deleted', 'condition', cd.id, study.id, { name: cd.name, coverslips: slipIds.length, ...dropped });
    });
    res.json(detail(req.user!, study.id));
  });

  // ---- coverslips --------------------------------------------------------------------------------------
  r.post('/conditions/:id/coverslips', requireUser, (req, res) => {
    const { cd, study } = conditionFor(req.user, idParam(req, 'id'), 'add_coverslips');
    const body = parse(CreateCoverslipRequest, req.body ?? {});
    db.transaction((tx) => {
      const agg = tx
        .select({ maxRep: sql<number | null>`max(${coverslips.replicate})`, maxPos: sql<number | null>`max(${coverslips.position})` })
        .from(coverslips)
        .where(eq(coverslips.conditionId, cd.id))
        .get();
      const replicate = body.replicate ?? (agg?.maxRep ?? 0) + 1;
      const name = body.name ?? `Coverslip ${replicate}`;
      coverslipNameFree(cd.id, name);
      const cs = tx
        .insert(coverslips)
        .values({ conditionId: cd.id, name, replicate, preparedOn: body.preparedOn ?? null, notes: body.notes ?? '', position: (agg?.maxPos ?? -1) + 1 })
        .returning()
        .get();
      audit(tx, req, 'coverslip_created', 'coverslip', cs.id, study.id, { name, conditionId: cd.id });
    });
    res.status(201).json(detail(req.user!, study.id));
  });

  r.patch('/coverslips/:id', requireUser, (req, res) => {
    const { cs, study } = coverslipFor(req.user, idParam(req, 'id'), 'edit_structure');
    const body = parse(UpdateCoverslipRequest, req.body);
    if (body.name !== undefined) coverslipNameFree(cs.conditionId, body.name, cs.id);
    db.transaction((tx) => {
      const set: Partial<typeof coverslips.$inferInsert> = {};
      if (body.name !== undefined) set.name = body.name;
      if (body.replicate !== undefined) set.replicate = body.replicate;
      if (body.preparedOn !== undefined) set.preparedOn = body.preparedOn;
      if (body.notes !== undefined) set.notes = body.notes;
      tx.update(coverslips).set(set).where(eq(coverslips.id, cs.id)).run();
      audit(tx, req, 'coverslip_updated', 'coverslip', cs.id, study.id, { before: { name: cs.name, replicate: cs.replicate, preparedOn: cs.preparedOn, notes: cs.notes }, after: body });
    });
    res.json(detail(req.user!, study.id));
  });

  r.delete('/coverslips/:id', requireUser, (req, res) => {
    const { cs, cd, study } = coverslipFor(req.user, idParam(req, 'id'), 'edit_structure');
    db.transaction((tx) => {
      const dropped = dropFieldDependents(tx, [cs.id]);
      tx.delete(coverslips).where(eq(coverslips.id, cs.id)).run();
      audit(tx, req, 'coverslip_deleted', 'coverslip', cs.id, study.id, { name: cs.name, condition: cd.name, ...dropped });
    });
    res.json(detail(req.user!, study.id));
  });

  // ---- reorder -----------------------------------------------------------------------------------------
  r.post('/studies/:studyId/reorder', requireUser, (req, res) => {
    const id = idParam(req, 'studyId');
    requireStudy(ctx.db, req.user, id, 'edit_structure');
    const body = parse(ReorderRequest, req.body);
    if (!body.conditionIds && !body.coverslips) throw issue('body', 'send conditionIds and/or coverslips');
    const conds = db.select().from(conditions).where(eq(conditions.studyId, id)).all();
    const condIds = new Set(conds.map((c) => c.id));
    const slips = conds.length ? db.select().from(coverslips).where(inArray(coverslips.conditionId, [...condIds])).all() : [];
    const slipById = new Map(slips.map((s) => [s.id, s]));

    if (body.conditionIds) {
      const given = body.conditionIds;
      if (new Set(given).size !== given.length || given.length !== condIds.size || given.some((c) => !condIds.has(c))) {
        throw issue('conditionIds', `list every condition of the study exactly once (expected ids ${[...condIds].sort((a, b) => a - b).join(', ') || 'none'}, got ${given.join(', ') || 'none'})`);
      }
    }
    const moves: { id: number; conditionId: number; position: number }[] = [];
    if (body.coverslips) {
      const seen = new Set<number>();
      const listedConds = new Set<number>();
      for (const [i, entry] of body.coverslips.entries()) {
        if (!condIds.has(entry.conditionId)) throw issue(`coverslips.${i}.conditionId`, `no condition with id ${entry.conditionId} in this study`);
        if (listedConds.has(entry.conditionId)) throw issue(`coverslips.${i}.conditionId`, `condition ${entry.conditionId} is listed twice`);
        listedConds.add(entry.conditionId);
        for (const [j, sid] of entry.coverslipIds.entries()) {
          if (!slipById.has(sid)) throw issue(`coverslips.${i}.coverslipIds.${j}`, `no coverslip with id ${sid} in this study`);
          if (seen.has(sid)) throw issue(`coverslips.${i}.coverslipIds.${j}`, `coverslip ${sid} is listed twice`);
          seen.add(sid);
          moves.push({ id: sid, conditionId: entry.conditionId, position: j });
        }
      }
      // a listed condition must end up with exactly the listed coverslips
      for (const cid of listedConds) {
        const left = slips.filter((s) => s.conditionId === cid && !seen.has(s.id));
        if (left.length) throw issue('coverslips', `condition ${cid}: list all of its coverslips (missing ${left.map((s) => s.id).join(', ')})`);
      }
      // names stay unique within a condition after moves
      for (const cid of listedConds) {
        const names = moves.filter((m) => m.conditionId === cid).map((m) => slipById.get(m.id)!.name.toLowerCase());
        const dup = names.find((n, k) => names.indexOf(n) !== k);
        if (dup) throw conflict(`two coverslips named "${dup}" would end up in the same condition; rename one first`);
      }
    }
    db.transaction((tx) => {
      body.conditionIds?.forEach((cid, pos) => tx.update(conditions).set({ position: pos }).where(eq(conditions.id, cid)).run());
      for (const m of moves) tx.update(coverslips).set({ conditionId: m.conditionId, position: m.position }).where(eq(coverslips.id, m.id)).run();
      const moved = moves.filter((m) => slipById.get(m.id)!.conditionId !== m.conditionId).map((m) => ({ id: m.id, from: slipById.get(m.id)!.conditionId, to: m.conditionId }));
      audit(tx, req, 'study_reordered', 'study', id, id, { conditionIds: body.conditionIds ?? null, moved });
    });
    res.json(detail(req.user!, id));
  });

  return r;
}
