/**
 * Runs: `POST /api/runs { recipeId, scope: { kind, id } }` applies one recipe version to a field, coverslip,
 * condition or whole study; `GET /api/runs?studyId=` lists; `GET /api/runs/:id` shows progress per field.
 * A run whose recipe version is not approved is provisional (and so is every measurement it writes).
 * `GET /api/runs/:id/fields/:fieldId/spots` lists the spots the run found in one field (objects section on),
 * readable by whoever may read the run's measurements.
 * `POST /api/runs/check` (the body of `POST /api/runs`) lists the scope's fields the recipe can measure and
 * the blocked ones with their problem and a link to fix it; `POST /api/runs { onlyReady: true }` starts on
 * the ready ones only.
 */
import { once } from 'node:events';
import { Router, type Request } from 'express';
import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { conditions, coverslips, fields, measurements, recipes, runFields, runs, spots, studies, users } from '../db/schema.js';
import { notFoundAsked, requireStudy, studyPermissions } from '../auth/policy.js';
import { conflict, notFound, parse, unauthorized } from '../http/errors.js';
import { idParam } from '../http/params.js';
import { createRun } from '../runs/records.js';
import { CreateRunRequest, FieldSpotsResponse, type RunCheckResponse, MEASUREMENT_CSV_COLUMNS, RunListQuery, RunMeasurementsQuery, type RunDetail, type RunMeasurementsPage, type RunSummary } from '../../shared/schemas/runs.js';
import { csvValues, measurementPage } from '../runs/export.js';
import { csvLine, fileSafe } from '../compare/csv.js';

/** Rows per page of the streamed measurements CSV. */
const CSV_PAGE = 2000;
import { checkRunInputs, resolveScope, runSettings } from '../runs/records.js';
import { plural } from '../../shared/format/plural.js';

type RunRow = typeof runs.$inferSelect;

function scopeName(ctx: AppContext, r: RunRow): string {
  const db = ctx.db;
  switch (r.scopeKind) {
    case 'field':
      return db.select({ n: fields.name }).from(fields).where(eq(fields.id, r.scopeId)).get()?.n ?? `field ${r.scopeId}`;
    case 'coverslip': {
      const c = db.select({ cs: coverslips.name, cond: conditions.name }).from(coverslips).innerJoin(conditions, eq(coverslips.conditionId, conditions.id)).where(eq(coverslips.id, r.scopeId)).get();
      return c ? `${c.cond} / ${c.cs}` : `coverslip ${r.scopeId}`;
    }
    case 'condition':
      return db.select({ n: conditions.name }).from(conditions).where(eq(conditions.id, r.scopeId)).get()?.n ?? `condition ${r.scopeId}`;
    case 'study':
      return db.select({ n: studies.name }).from(studies).where(eq(studies.id, r.scopeId)).get()?.n ?? `study ${r.scopeId}`;
  }
}

export function runSummary(ctx: AppContext, r: RunRow): RunSummary {
  const db = ctx.db;
  const recipe = db.select().from(recipes).where(eq(recipes.id, r.recipeId)).get()!;
  const study = db.select({ name: studies.name }).from(studies).where(eq(studies.id, r.studyId)).get();
  const failed = db.select({ n: sql<number>`count(*)` }).from(runFields).where(and(eq(runFields.runId, r.id), eq(runFields.status, 'failed'))).get()?.n ?? 0;
  const by = r.startedBy ? db.select({ id: users.id, name: users.name }).from(users).where(eq(users.id, r.startedBy)).get() ?? null : null;
  return {
    id: r.id,
    studyId: r.studyId,
    studyName: study?.name ?? '',
    recipe: { id: recipe.id, name: recipe.name, version: recipe.version, status: recipe.status },
    scope: { kind: r.scopeKind, id: r.scopeId, name: scopeName(ctx, r) },
    status: r.status,
    provisional: r.provisional,
    fieldsTotal: r.fieldsTotal,
    fieldsDone: r.fieldsDone,
    fieldsFailed: Number(failed),
    currentField: r.currentField,
    error: r.error,
    engineVersion: r.engineVersion,
    seed: r.seed,
    startedBy: by,
    startedAt: r.startedAt,
    finishedAt: r.finishedAt,
    createdAt: r.createdAt,
  };
}

export function runDetail(ctx: AppContext, r: RunRow): RunDetail {
  const db = ctx.db;
  const rows = db
    .select({
      fieldId: runFields.fieldId,
      field: fields.name,
      coverslip: coverslips.name,
      condition: conditions.name,
      status: runFields.status,
      error: runFields.error,
      attempts: runFields.attempts,
      finishedAt: runFields.finishedAt,
    })
    .from(runFields)
    .innerJoin(fields, eq(runFields.fieldId, fields.id))
    .innerJoin(coverslips, eq(fields.coverslipId, coverslips.id))
    .innerJoin(conditions, eq(coverslips.conditionId, conditions.id))
    .where(eq(runFields.runId, r.id))
    .orderBy(conditions.position, conditions.id, coverslips.position, coverslips.id, fields.id)
    .all()
    .map(({ field, coverslip, condition, ...rest }) => ({ ...rest, name: `${condition} / ${coverslip} / ${field}` }));
  const perField = new Map(
    db
      .select({ fieldId: measurements.fieldId, n: sql<number>`count(*)` })
      .from(measurements)
      .where(eq(measurements.runId, r.id))
      .groupBy(measurements.fieldId)
      .all()
      .map((x) => [x.fieldId, Number(x.n)]),
  );
  return {
    ...runSummary(ctx, r),
    settings: runSettings(db, r),
    fields: rows.map((f) => ({ ...f, measurements: perField.get(f.fieldId) ?? 0 })),
    measurements: [...perField.values()].reduce((a, b) => a + b, 0),
  };
}

export default function runsRoutes(ctx: AppContext) {
  const r = Router();

  /** The recipe and resolved scope of a `POST /api/runs` or `/api/runs/check` body, after the caller's right to run it. */
  const runRequest = (req: Request) => {
    if (!req.user) throw unauthorized();
    const body = parse(CreateRunRequest, req.body);
    const recipe = ctx.db.select().from(recipes).where(eq(recipes.id, body.recipeId)).get();
    if (!recipe) throw notFound(`no recipe with id ${body.recipeId}`);
    const scope = resolveScope(ctx.db, body.scope.kind, body.scope.id);
    requireStudy(ctx.db, req.user, scope.studyId, 'run', { what: body.scope.kind, id: body.scope.id });
    if (recipe.status === 'retired') throw conflict(`recipe ${recipe.name} v${recipe.version} is retired; choose a current version`);
    if (!scope.fieldIds.length) throw conflict(`nothing to measure: ${body.scope.kind} "${scope.name}" has no fields`);
    return { body, recipe, scope, userId: req.user.id };
  };

  r.post('/runs/check', (req, res) => {
    const { recipe, scope } = runRequest(req);
    const body: RunCheckResponse = checkRunInputs(ctx.db, recipe, scope.studyId, scope.fieldIds);
    res.json(body);
  });

  r.post('/runs', async (req, res) => {
    const { body, recipe, scope, userId } = runRequest(req);
    let fieldIds = scope.fieldIds;
    if (body.onlyReady) {
      const check = checkRunInputs(ctx.db, recipe, scope.studyId, fieldIds);
      if (!check.ready.length)
        throw conflict(`no field of ${body.scope.kind} "${scope.name}" can be measured with recipe ${recipe.name} v${recipe.version}: ${check.blocked[0].fieldName}: ${check.blocked[0].problem}${check.blocked.length > 1 ? ` (and ${plural(check.blocked.length - 1, 'more field')})` : ''}`);
      fieldIds = check.ready;
    }
    const run = await createRun(ctx, { recipe, scope: { kind: body.scope.kind, id: body.scope.id, ...scope, fieldIds }, userId });
    const fresh = ctx.db.select().from(runs).where(eq(runs.id, run.id)).get()!;
    res.status(201).json(runDetail(ctx, fresh));
  });

  r.get('/runs', (req, res) => {
    if (!req.user) throw unauthorized();
    const q = parse(RunListQuery, req.query);
    const u = req.user;
    if (q.studyId) requireStudy(ctx.db, u, q.studyId, 'read');
    // the studies this user may read first, so the newest 500 runs are the newest 500 the user may see
    const readable = q.studyId
      ? [q.studyId]
      : ctx.db.select().from(studies).all().filter((s) => studyPermissions(ctx.db, u, s).has('read')).map((s) => s.id);
    if (!readable.length) return void res.json({ runs: [] });
    const conds = [inArray(runs.studyId, readable)];
    if (q.status) conds.push(eq(runs.status, q.status));
    const rows = ctx.db.select().from(runs).where(and(...conds)).orderBy(desc(runs.id)).limit(500).all();
    res.json({ runs: rows.map((x) => runSummary(ctx, x)) });
  });

  /** The run of path segment :id, after checking the caller may read its study. */
  const readableRun = (req: Request) => {
    const id = idParam(req, 'id');
    const row = ctx.db.select().from(runs).where(eq(runs.id, id)).get();
    if (!row) throw notFoundAsked({ what: 'run', id });
    requireStudy(ctx.db, req.user, row.studyId, 'read', { what: 'run', id });
    return row;
  };

  r.get('/runs/:id', (req, res) => {
    res.json(runDetail(ctx, readableRun(req)));
  });

  r.get('/runs/:id/measurements', (req, res) => {
    const run = readableRun(req);
    const q = parse(RunMeasurementsQuery, req.query);
    const recipe = ctx.db.select().from(recipes).where(eq(recipes.id, run.recipeId)).get()!;
    const page = measurementPage(ctx.db, run.id, q.cursor ?? 0, q.limit);
    const body: RunMeasurementsPage = {
      run: { id: run.id, studyId: run.studyId, status: run.status, provisional: !!run.provisional, recipeId: recipe.id, recipeName: recipe.name, recipeVersion: recipe.version },
      measurements: page.rows,
      nextCursor: page.nextCursor,
    };
    res.json(body);
  });

  // streamed: pages of CSV_PAGE rows, waiting for the client to drain between pages (no query stays open meanwhile)
  r.get('/runs/:id/measurements.csv', async (req, res) => {
    const run = readableRun(req);
    const recipe = ctx.db.select().from(recipes).where(eq(recipes.id, run.recipeId)).get()!;
    res.setHeader('content-type', 'text/csv; charset=utf-8; header=present');
    res.setHeader('content-disposition', `attachment; filename="run-${run.id}-${fileSafe(recipe.name)}-v${recipe.version}-measurements.csv"`);
    res.write(csvLine([...MEASUREMENT_CSV_COLUMNS]));
    let cursor: number | null = 0;
    while (cursor !== null) {
      if (res.destroyed) return;
      const page = measurementPage(ctx.db, run.id, cursor, CSV_PAGE);
      const text = page.rows.map((m) => csvLine(csvValues(m, MEASUREMENT_CSV_COLUMNS))).join('');
      cursor = page.nextCursor;
      if (!res.write(text) && cursor !== null) await once(res, 'drain');
    }
    res.end();
  });

  r.get('/runs/:id/fields/:fieldId/spots', (req, res) => {
    const id = idParam(req, 'id');
    const fieldId = idParam(req, 'fieldId');
    const row = ctx.db.select().from(runs).where(eq(runs.id, id)).get();
    if (!row) throw notFoundAsked({ what: 'run', id });
    requireStudy(ctx.db, req.user, row.studyId, 'read', { what: 'run', id });
    const inRun = ctx.db.select({ fieldId: runFields.fieldId }).from(runFields).where(and(eq(runFields.runId, id), eq(runFields.fieldId, fieldId))).get();
    if (!inRun) throw notFound(`run ${id} has no field with id ${fieldId}`);
    const rows = ctx.db
      .select({ cellId: spots.cellId, channel: spots.channel, x: spots.x, y: spots.y, z: spots.z, peak: spots.peak, integrated: spots.integrated })
      .from(spots)
      .where(and(eq(spots.runId, id), eq(spots.fieldId, fieldId)))
      .orderBy(spots.cellId, spots.channel, spots.id)
      .all()
      // z only for spots found in 3D
      .map(({ z, ...rest }) => (z === null ? rest : { ...rest, z }));
    // the settings as applied are in every measurement's provenance (absent when the objects section was off)
    const m = ctx.db.select({ provenance: measurements.provenance }).from(measurements).where(and(eq(measurements.runId, id), eq(measurements.fieldId, fieldId))).limit(1).get();
    const settings = (m?.provenance as { objects?: unknown } | undefined)?.objects ?? null;
    res.json(FieldSpotsResponse.parse({ runId: id, fieldId, settings, spots: rows }));
  });

  return r;
}
