/**
 * Recipes: draft → submitted → approved | returned (with the reviewer's note); approved versions are immutable
 * (editing one makes a new draft version in the same family); retire instead of delete.
 * Anyone but collaborators proposes; only facility managers approve, return or retire.
 * An illegal transition is 409. Every transition is an audit event (who, when, note) in the same transaction.
 */
import { Router } from 'express';
import { and, desc, eq, inArray, max } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { notifyRecipe } from '../mail/notify.js';
import { auditEvents, recipes, runs, users } from '../db/schema.js';
import { can, hasRole, requireCan } from '../auth/policy.js';
import type { SessionUser } from '../auth/session.js';
import { badRequest, conflict, forbidden, notFound, parse } from '../http/errors.js';
import { idParam } from '../http/params.js';
import {
  CreateRecipeRequest,
  RecipeListQuery,
  RecipeSettings,
  RecipeTransitionRequest,
  UpdateRecipeRequest,
  diffSettings,
  type RecipeDetail,
  type RecipeStatus,
  type RecipeSummary,
} from '../../shared/schemas/recipes.js';

type RecipeRow = typeof recipes.$inferSelect;
type Transition = 'submit' | 'approve' | 'return' | 'retire';

/** The state machine: from which statuses each transition is legal, and where it leads. */
export const RECIPE_TRANSITIONS: Record<Transition, { from: RecipeStatus[]; to: RecipeStatus; reviewer: boolean }> = {
  submit: { from: ['draft', 'returned'], to: 'submitted', reviewer: false },
  approve: { from: ['submitted'], to: 'approved', reviewer: true },
  return: { from: ['submitted'], to: 'returned', reviewer: true },
  retire: { from: ['draft', 'submitted', 'returned', 'approved'], to: 'retired', reviewer: true },
};
const EDITABLE: RecipeStatus[] = ['draft', 'returned'];


export function loadRecipe(ctx: AppContext, id: number): RecipeRow {
  const row = ctx.db.select().from(recipes).where(eq(recipes.id, id)).get();
  if (!row) throw notFound(`no recipe with id ${id}`);
  return row;
}

export function userNames(ctx: AppContext, ids: (number | null)[]) {
  const wanted = [...new Set(ids.filter((x): x is number => x != null))];
  const m = new Map<number, string>();
  if (wanted.length) for (const u of ctx.db.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, wanted)).all()) m.set(u.id, u.name);
  return (id: number | null) => (id != null && m.has(id) ? { id, name: m.get(id)! } : null);
}

function toSummary(r: RecipeRow, name: (id: number | null) => { id: number; name: string } | null): RecipeSummary {
  return {
    id: r.id,
    familyId: r.familyId ?? r.id,
    name: r.name,
    version: r.version,
    status: r.status,
    description: r.description,
    proposer: name(r.proposerId),
    reviewer: name(r.reviewerId),
    reviewNote: r.reviewNote,
    submittedAt: r.submittedAt,
    reviewedAt: r.reviewedAt,
    createdAt: r.createdAt,
  };
}

const isOwnerOrReviewer = (u: SessionUser, r: RecipeRow) => r.proposerId === u.id || hasRole(u, 'facility_manager');

function allowedActions(u: SessionUser, r: RecipeRow): RecipeDetail['allowed'] {
  const a: RecipeDetail['allowed'] = [];
  if (EDITABLE.includes(r.status) && isOwnerOrReviewer(u, r)) a.push('edit');
  if (RECIPE_TRANSITIONS.submit.from.includes(r.status) && isOwnerOrReviewer(u, r)) a.push('submit');
  if (can(u, 'review_recipe')) {
    if (RECIPE_TRANSITIONS.approve.from.includes(r.status)) a.push('approve', 'return');
    if (RECIPE_TRANSITIONS.retire.from.includes(r.status)) a.push('retire');
  }
  if ((r.status === 'approved' || r.status === 'retired') && can(u, 'propose_recipe')) a.push('new_version');
  return a;
}

export function recipeDetail(ctx: AppContext, u: SessionUser, r: RecipeRow): RecipeDetail {
  const familyId = r.familyId ?? r.id;
  const versions = ctx.db
    .select({ id: recipes.id, version: recipes.version, status: recipes.status })
    .from(recipes)
    .where(eq(recipes.familyId, familyId))
    .orderBy(desc(recipes.version))
    .all();
  const events = ctx.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.entity, 'recipe'), eq(auditEvents.entityId, r.id)))
    .orderBy(auditEvents.id)
    .all();
  const name = userNames(ctx, [r.proposerId, r.reviewerId, ...events.map((e) => e.actorId)]);
  return {
    ...toSummary(r, name),
    settings: RecipeSettings.parse(r.settings),
    versions,
    history: events.map((e) => ({
      at: e.at,
      action: e.action.replace(/^recipe\./, ''),
      actor: name(e.actorId),
      note: typeof e.details?.note === 'string' ? (e.details.note as string) : null,
    })),
    allowed: allowedActions(u, r),
  };
}

function audit(tx: Pick<AppContext['db'], 'insert'>, actorId: number, action: string, r: RecipeRow, details: Record<string, unknown> = {}) {
  tx.insert(auditEvents)
    .values({ actorId, action: `recipe.${action}`, entity: 'recipe', entityId: r.id, details: { familyId: r.familyId ?? r.id, version: r.version, name: r.name, ...details } })
    .run();
}

/** `settings` in a PATCH / new-version body replaces the given top-level settings, keeping the others. */
function mergeSettings(cur: RecipeRow, body: unknown) {
  if (!body || typeof body !== 'object' || Array.isArray(body)) return body;
  const b = body as Record<string, unknown>;
  if (!b.settings || typeof b.settings !== 'object' || Array.isArray(b.settings)) return body;
  return { ...b, settings: { ...RecipeSettings.parse(cur.settings), ...(b.settings as object) } };
}

export default function recipesRoutes(ctx: AppContext) {
  const r = Router();

  r.get('/recipes', (req, res) => {
    requireCan(req.user, 'read_recipes');
    const q = parse(RecipeListQuery, req.query);
    const conds = [];
    if (q.status) conds.push(inArray(recipes.status, q.status));
    if (q.familyId) conds.push(eq(recipes.familyId, q.familyId));
    const rows = ctx.db
      .select()
      .from(recipes)
      .where(conds.length ? and(...conds) : undefined)
      .orderBy(recipes.name, desc(recipes.version))
      .all();
    const name = userNames(ctx, rows.flatMap((x) => [x.proposerId, x.reviewerId]));
    res.json({ recipes: rows.map((x) => toSummary(x, name)) });
  });

  r.post('/recipes', (req, res) => {
    requireCan(req.user, 'propose_recipe');
    const body = parse(CreateRecipeRequest, req.body);
    const u = req.user!;
    const row = ctx.db.transaction((tx) => {
      const created = tx
        .insert(recipes)
        .values({ name: body.name, description: body.description, settings: body.settings, version: 1, status: 'draft', proposerId: u.id })
        .returning()
        .get();
      const withFamily = tx.update(recipes).set({ familyId: created.id }).where(eq(recipes.id, created.id)).returning().get();
      audit(tx, u.id, 'create', withFamily);
      return withFamily;
    });
    res.status(201).json(recipeDetail(ctx, u, row));
  });

  r.get('/recipes/:id', (req, res) => {
    requireCan(req.user, 'read_recipes');
    res.json(recipeDetail(ctx, req.user!, loadRecipe(ctx, idParam(req, 'id'))));
  });

  r.get('/recipes/:id/diff/:otherId', (req, res) => {
    requireCan(req.user, 'read_recipes');
    const a = loadRecipe(ctx, idParam(req, 'id'));
    const b = loadRecipe(ctx, idParam(req, 'otherId'));
    const name = userNames(ctx, [a.proposerId, a.reviewerId, b.proposerId, b.reviewerId]);
    const entries = [
      { key: 'name', label: 'Name', a: a.name, b: b.name, changed: a.name !== b.name },
      { key: 'description', label: 'Description', a: a.description, b: b.description, changed: a.description !== b.description },
      ...diffSettings(RecipeSettings.parse(a.settings), RecipeSettings.parse(b.settings)),
    ];
    res.json({ a: toSummary(a, name), b: toSummary(b, name), entries });
  });

  r.patch('/recipes/:id', (req, res) => {
    requireCan(req.user, 'propose_recipe');
    const u = req.user!;
    const id = idParam(req, 'id');
    const row = ctx.db.transaction((tx) => {
      const cur = tx.select().from(recipes).where(eq(recipes.id, id)).get();
      if (!cur) throw notFound(`no recipe with id ${id}`);
      const body = parse(UpdateRecipeRequest, mergeSettings(cur, req.body));
      if (!isOwnerOrReviewer(u, cur)) throw forbidden('only the proposer or a facility manager may edit this recipe');
      if (!EDITABLE.includes(cur.status))
        throw conflict(
          cur.status === 'approved' || cur.status === 'retired'
            ? `recipe ${cur.name} v${cur.version} is ${cur.status} and cannot change; make a new version instead`
            : `recipe ${cur.name} v${cur.version} is ${cur.status}; it can be edited again once returned`,
        );
      const busy = tx.select({ id: runs.id }).from(runs).where(and(eq(runs.recipeId, id), inArray(runs.status, ['queued', 'running']))).get();
      if (busy && body.settings) throw conflict(`run #${busy.id} is measuring with recipe ${cur.name} v${cur.version}; change its settings when the run has finished`);
      const next = tx
        .update(recipes)
        .set({ ...(body.name !== undefined && { name: body.name }), ...(body.description !== undefined && { description: body.description }), ...(body.settings && { settings: body.settings }) })
        .where(eq(recipes.id, id))
        .returning()
        .get();
      const changed = Object.keys(body).filter((k) => (body as Record<string, unknown>)[k] !== undefined);
      audit(tx, u.id, 'edit', next, { changed });
      return next;
    });
    res.json(recipeDetail(ctx, u, row));
  });

  /** A new draft version of an approved (or retired) recipe, optionally with changes. */
  r.post('/recipes/:id/versions', (req, res) => {
    requireCan(req.user, 'propose_recipe');
    const u = req.user!;
    const id = idParam(req, 'id');
    const row = ctx.db.transaction((tx) => {
      const cur = tx.select().from(recipes).where(eq(recipes.id, id)).get();
      if (!cur) throw notFound(`no recipe with id ${id}`);
      const body = parse(UpdateRecipeRequest, mergeSettings(cur, req.body ?? {}));
      if (cur.status !== 'approved' && cur.status !== 'retired')
        throw conflict(`recipe ${cur.name} v${cur.version} is ${cur.status}: edit it directly; new versions start from approved or retired ones`);
      const familyId = cur.familyId ?? cur.id;
      const top = tx.select({ v: max(recipes.version) }).from(recipes).where(eq(recipes.familyId, familyId)).get();
      const created = tx
        .insert(recipes)
        .values({
          familyId,
          name: body.name ?? cur.name,
          description: body.description ?? cur.description,
          settings: body.settings ?? RecipeSettings.parse(cur.settings),
          version: (top?.v ?? cur.version) + 1,
          status: 'draft',
          proposerId: u.id,
        })
        .returning()
        .get();
      audit(tx, u.id, 'create', created, { from: { id: cur.id, version: cur.version } });
      return created;
    });
    res.status(201).json(recipeDetail(ctx, u, row));
  });

  for (const t of Object.keys(RECIPE_TRANSITIONS) as Transition[]) {
    r.post(`/recipes/:id/${t}`, async (req, res) => {
      const rule = RECIPE_TRANSITIONS[t];
      requireCan(req.user, rule.reviewer ? 'review_recipe' : 'propose_recipe');
      const u = req.user!;
      const id = idParam(req, 'id');
      const { note } = parse(RecipeTransitionRequest, req.body ?? {});
      if (t === 'return' && !note) throw badRequest('say what should change: a note is required to return a recipe');
      const row = ctx.db.transaction((tx) => {
        const cur = tx.select().from(recipes).where(eq(recipes.id, id)).get();
        if (!cur) throw notFound(`no recipe with id ${id}`);
        if (t === 'submit' && !isOwnerOrReviewer(u, cur)) throw forbidden('only the proposer or a facility manager may submit this recipe');
        if (!rule.from.includes(cur.status))
          throw conflict(`cannot ${t} recipe ${cur.name} v${cur.version}: it is ${cur.status} (allowed from ${rule.from.join(' or ')})`);
        const at = new Date().toISOString();
        const next = tx
          .update(recipes)
          .set({
            status: rule.to,
            ...(t === 'submit' ? { submittedAt: at } : {}),
            ...(t === 'approve' || t === 'return' ? { reviewerId: u.id, reviewedAt: at, reviewNote: note ?? null } : {}),
          })
          .where(and(eq(recipes.id, id), eq(recipes.status, cur.status)))
          .returning()
          .get();
        if (!next) throw conflict(`recipe ${id} changed meanwhile; reload and try again`);
        audit(tx, u.id, t, next, { from: cur.status, to: rule.to, note: note ?? null });
        return next;
      });
      await notifyRecipe(ctx, t, row, u);
      res.json(recipeDetail(ctx, u, row));
    });
  }

  return r;
}
