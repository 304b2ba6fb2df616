/**
 * The people of the facility (screen "People & labs"): accounts, invitations and labs, for facility managers.
 * API paths /api/users and /api/labs. Schemas and route list: shared/schemas/people.ts.
 */
import { Router, type Request } from 'express';
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, labMembers, labs, studies, users } from '../db/schema.js';
import { CreateLabRequest, InviteUserRequest, InviteUserResponse, Lab, LabListResponse, UpdateLabRequest, UpdateUserRequest, UserListResponse, UserRow } from '../../shared/schemas/people.js';
import { idParam } from '../http/params.js';
import { badRequest, conflict, notFound, parse } from '../http/errors.js';
import { requireUser } from '../auth/session.js';
import { can, requireCan } from '../auth/policy.js';
import { createInvitation, sendInvitationMail } from '../auth/invitations.js';
import { plural } from '../../shared/format/plural.js';

type UserRecord = typeof users.$inferSelect;

export default function peopleRoutes(ctx: AppContext) {
  const r = Router();
  const db = ctx.db;

  const labIdsOf = (userIds: number[]) => {
    const map = new Map<number, number[]>();
    if (!userIds.length) return map;
    for (const m of db.select().from(labMembers).where(inArray(labMembers.userId, userIds)).all()) {
      map.set(m.userId, [...(map.get(m.userId) ?? []), m.labId]);
    }
    return map;
  };
  const toRow = (u: UserRecord, labIds: number[]) =>
    UserRow.parse({
      id: u.id,
      email: u.email,
      name: u.name,
      roles: u.roles,
      disabled: u.disabled,
      status: u.disabled ? 'disabled' : u.passwordHash ? 'active' : 'invited',
      labIds: [...labIds].sort((a, b) => a - b),
      createdAt: u.createdAt,
    });
  const userOr404 = (id: number) => {
    const u = db.select().from(users).where(eq(users.id, id)).get();
    if (!u) throw notFound(`no user with id ${id}`);
    return u;
  };
  const checkLabs = (ids: number[]) => {
    const found = ids.length ? db.select({ id: labs.id }).from(labs).where(inArray(labs.id, ids)).all().map((l) => l.id) : [];
    const missing = ids.filter((i) => !found.includes(i));
    if (missing.length) throw badRequest(`labIds: no lab with id ${missing.join(', ')}`, { issues: [{ path: 'labIds', message: `no lab with id ${missing.join(', ')}` }] });
  };
  const labOut = (labId: number) => {
    const l = db.select().from(labs).where(eq(labs.id, labId)).get();
    if (!l) throw notFound(`no lab with id ${labId}`);
    return labsOut([l])[0];
  };
  const labsOut = (rows: (typeof labs.$inferSelect)[]) => {
    const ids = rows.map((l) => l.id);
    const members = ids.length
      ? db.select({ labId: labMembers.labId, id: users.id, name: users.name, email: users.email, roles: users.roles }).from(labMembers).innerJoin(users, eq(users.id, labMembers.userId)).where(inArray(labMembers.labId, ids)).all()
      : [];
    const counts = ids.length
      ? db.select({ labId: studies.labId, n: sql<number>`count(*)` }).from(studies).where(inArray(studies.labId, ids)).groupBy(studies.labId).all()
      : [];
    return rows.map((l) =>
      Lab.parse({
        id: l.id,
        name: l.name,
        createdAt: l.createdAt,
        studyCount: counts.find((c) => c.labId === l.id)?.n ?? 0,
        members: members.filter((m) => m.labId === l.id).map(({ labId: _l, ...m }) => m).sort((a, b) => a.name.localeCompare(b.name)),
      }),
    );
  };
  const audit = (tx: Pick<AppContext['db'], 'insert'>, req: Request, action: string, entity: string, entityId: number, details: Record<string, unknown> = {}) =>
    tx.insert(auditEvents).values({ actorId: req.user!.id, action, entity, entityId, details }).run();

  // ---- users -------------------------------------------------------------------------------------------
  r.get('/users', requireUser, (req, res) => {
    requireCan(req.user, 'manage_users');
    const all = db.select().from(users).orderBy(users.name).all();
    const labMap = labIdsOf(all.map((u) => u.id));
    res.json(UserListResponse.parse({ users: all.map((u) => toRow(u, labMap.get(u.id) ?? [])) }));
  });

  r.post('/users', requireUser, async (req, res) => {
    requireCan(req.user, 'manage_users');
    const body = parse(InviteUserRequest, req.body);
    const labIds = [...new Set(body.labIds ?? [])];
    checkLabs(labIds);
    if (db.select({ id: users.id }).from(users).where(eq(users.email, body.email)).get()) {
      throw conflict(`an account for ${body.email} already exists`);
    }
    const { user, token, expiresAt } = db.transaction((tx) => {
      const user = tx.insert(users).values({ email: body.email, name: body.name, roles: body.roles, passwordHash: null }).returning().get();
      for (const labId of labIds) tx.insert(labMembers).values({ labId, userId: user.id }).run();
      const inv = createInvitation(tx, user.id, req.user!.id);
      audit(tx, req, 'user_invited', 'user', user.id, { email: body.email, roles: body.roles, labIds });
      return { user, ...inv };
    });
    await sendInvitationMail(ctx, req, user, token, expiresAt, req.user!.name);
    res.status(201).json(InviteUserResponse.parse({ user: toRow(user, labIds), expiresAt }));
  });

  /** A fresh invitation link for someone who has not set a password yet (the old link stops working). */
  r.post('/users/:id/invite', requireUser, async (req, res) => {
    requireCan(req.user, 'manage_users');
    const u = userOr404(idParam(req, 'id'));
    if (u.passwordHash) throw conflict(`${u.email} has already set a password`);
    if (u.disabled) throw conflict(`${u.email} is disabled; enable the account first`);
    const { token, expiresAt } = db.transaction((tx) => {
      const inv = createInvitation(tx, u.id, req.user!.id);
      audit(tx, req, 'user_reinvited', 'user', u.id);
      return inv;
    });
    await sendInvitationMail(ctx, req, u, token, expiresAt, req.user!.name);
    res.json(InviteUserResponse.parse({ user: toRow(u, labIdsOf([u.id]).get(u.id) ?? []), expiresAt }));
  });

  r.patch('/users/:id', requireUser, (req, res) => {
    requireCan(req.user, 'manage_users');
    const id = idParam(req, 'id');
    const body = parse(UpdateUserRequest, req.body);
    const u = userOr404(id);
    if (id === req.user!.id) {
      if (body.disabled) throw badRequest('disabled: you cannot disable your own account', { issues: [{ path: 'disabled', message: 'you cannot disable your own account' }] });
      if (body.roles && !body.roles.includes('facility_manager')) {
        throw badRequest('roles: you cannot remove your own facility manager role', { issues: [{ path: 'roles', message: 'you cannot remove your own facility manager role' }] });
      }
    }
    const updated = db.transaction((tx) => {
      const set: Record<string, unknown> = {};
      if (body.name !== undefined) set.name = body.name;
      if (body.roles !== undefined) set.roles = body.roles;
      if (body.disabled !== undefined && body.disabled !== u.disabled) {
        set.disabled = body.disabled;
        // disabling ends every session at once
        if (body.disabled) set.sessionVersion = sql`${users.sessionVersion} + 1`;
      }
      const row = Object.keys(set).length ? tx.update(users).set(set as never).where(eq(users.id, id)).returning().get()! : u;
      audit(tx, req, 'user_updated', 'user', id, { before: { name: u.name, roles: u.roles, disabled: u.disabled }, after: { name: row.name, roles: row.roles, disabled: row.disabled } });
      return row;
    });
    res.json(toRow(updated, labIdsOf([id]).get(id) ?? []));
  });

  // ---- labs --------------------------------------------------------------------------------------------
  r.get('/labs', requireUser, (req, res) => {
    let rows;
    if (can(req.user, 'manage_users')) rows = db.select().from(labs).orderBy(labs.name).all();
    else {
      const mine = db.select({ labId: labMembers.labId }).from(labMembers).where(eq(labMembers.userId, req.user!.id)).all().map((m) => m.labId);
      rows = mine.length ? db.select().from(labs).where(inArray(labs.id, mine)).orderBy(labs.name).all() : [];
    }
    res.json(LabListResponse.parse({ labs: labsOut(rows) }));
  });

  const labNameFree = (name: string, except?: number) => {
    const other = db.select().from(labs).where(sql`lower(${labs.name}) = lower(${name})`).get();
    if (other && other.id !== except) throw conflict(`a lab named "${name}" already exists`);
  };

  r.post('/labs', requireUser, (req, res) => {
    requireCan(req.user, 'manage_users');
    const body = parse(CreateLabRequest, req.body);
    labNameFree(body.name);
    const lab = db.transaction((tx) => {
      const lab = tx.insert(labs).values({ name: body.name }).returning().get();
      audit(tx, req, 'lab_created', 'lab', lab.id, { name: body.name });
      return lab;
    });
    res.status(201).json(labOut(lab.id));
  });

  r.patch('/labs/:id', requireUser, (req, res) => {
    requireCan(req.user, 'manage_users');
    const id = idParam(req, 'id');
    const body = parse(UpdateLabRequest, req.body);
    const before = labOut(id);
    labNameFree(body.name, id);
    db.transaction((tx) => {
      tx.update(labs).set({ name: body.name }).where(eq(labs.id, id)).run();
      audit(tx, req, 'lab_renamed', 'lab', id, { from: before.name, to: body.name });
    });
    res.json(labOut(id));
  });

  r.delete('/labs/:id', requireUser, (req, res) => {
    requireCan(req.user, 'manage_users');
    const id = idParam(req, 'id');
    const lab = labOut(id);
    if (lab.studyCount > 0) throw conflict(`lab "${lab.name}" still has ${plural(lab.studyCount, 'study', 'studies')}; move or delete them first`);
    db.transaction((tx) => {
      tx.delete(labs).where(eq(labs.id, id)).run();
      audit(tx, req, 'lab_deleted', 'lab', id, { name: lab.name, members: lab.members.map((m) => m.id) });
    });
    res.json({ ok: true });
  });

  /** The lab and the user of a membership route: the caller may manage users and both exist (else 403/404). */
  const membership = (req: Request) => {
    requireCan(req.user, 'manage_users');
    const id = idParam(req, 'id');
    const userId = idParam(req, 'userId');
    labOut(id);
    userOr404(userId);
    return { id, userId };
  };

  r.put('/labs/:id/members/:userId', requireUser, (req, res) => {
    const { id, userId } = membership(req);
    db.transaction((tx) => {
      const added = tx.insert(labMembers).values({ labId: id, userId }).onConflictDoNothing().run();
      if (added.changes) audit(tx, req, 'lab_member_added', 'lab', id, { userId });
    });
    res.json(labOut(id));
  });

  r.delete('/labs/:id/members/:userId', requireUser, (req, res) => {
    const { id, userId } = membership(req);
    db.transaction((tx) => {
      const removed = tx.delete(labMembers).where(and(eq(labMembers.labId, id), eq(labMembers.userId, userId))).run();
      if (removed.changes) audit(tx, req, 'lab_member_removed', 'lab', id, { userId });
    });
    res.json(labOut(id));
  });

  return r;
}
