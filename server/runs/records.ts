/**
 * The database side of runs (only the web server writes SQLite): scope → fields, building a field job,
 * recording a field's result in one transaction (measurements + run_fields done + run counters), and the
 * run's final status. Idempotent: a result for a field already done is ignored, so no field counts twice.
 */
import { and, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client.js';
import { preparedInsert } from '../db/bulk.js';
import type { RunQueue } from '../services.js';
import { auditEvents, calibrations, cells, conditions, coverslips, fields, files, instruments, measurements, recipes, runFields, runs, spots, studies } from '../db/schema.js';
import { RecipeSettings } from '../../shared/schemas/recipes.js';
import type { RunCheckResponse, RunScopeKind } from '../../shared/schemas/runs.js';
import { checkFieldInputs, FieldJobError } from './compute.js';
import { notFound } from '../http/errors.js';
import { ENGINE_VERSION } from '../../shared/analysis/index.js';
import type { FieldJob, FieldJobResult } from './job.js';
import { plural } from '../../shared/format/plural.js';

/** The study of a scope and its ready fields (in study order), or 404. */
export function resolveScope(db: Db, kind: RunScopeKind, id: number): { studyId: number; name: string; fieldIds: number[] } {
  const base = db
    .select({ fieldId: fields.id, fieldName: fields.name, coverslipId: coverslips.id, coverslipName: coverslips.name, conditionId: conditions.id, conditionName: conditions.name, studyId: conditions.studyId })
    .from(fields)
    .innerJoin(coverslips, eq(fields.coverslipId, coverslips.id))
    .innerJoin(conditions, eq(coverslips.conditionId, conditions.id));
  const ready = eq(fields.status, 'ready');
  const order = [conditions.position, conditions.id, coverslips.position, coverslips.id, fields.id] as const;
  if (kind === 'field') {
    const f = db.select().from(fields).innerJoin(coverslips, eq(fields.coverslipId, coverslips.id)).innerJoin(conditions, eq(coverslips.conditionId, conditions.id)).where(eq(fields.id, id)).get();
    if (!f || f.fields.status !== 'ready') throw notFound(`no field with id ${id}`);
    return { studyId: f.conditions.studyId, name: f.fields.name, fieldIds: [id] };
  }
  if (kind === 'coverslip') {
    const c = db.select().from(coverslips).innerJoin(conditions, eq(coverslips.conditionId, conditions.id)).where(eq(coverslips.id, id)).get();
    if (!c) throw notFound(`no coverslip with id ${id}`);
    const rows = base.where(and(ready, eq(coverslips.id, id))).orderBy(...order).all();
    return { studyId: c.conditions.studyId, name: `${c.conditions.name} / ${c.coverslips.name}`, fieldIds: rows.map((r) => r.fieldId) };
  }
  if (kind === 'condition') {
    const c = db.select().from(conditions).where(eq(conditions.id, id)).get();
    if (!c) throw notFound(`no condition with id ${id}`);
    const rows = base.where(and(ready, eq(conditions.id, id))).orderBy(...order).all();
    return { studyId: c.studyId, name: c.name, fieldIds: rows.map((r) => r.fieldId) };
  }
  const s = db.select().from(studies).where(eq(studies.id, id)).get();
  if (!s) throw notFound(`no study with id ${id}`);
  const rows = base.where(and(ready, eq(conditions.studyId, id))).orderBy(...order).all();
  return { studyId: id, name: s.name, fieldIds: rows.map((r) => r.fieldId) };
}

/**
 * The settings a run uses: the snapshot taken when it started (kept in its 'run.start' audit event, so a
 * draft edited later does not change a run in flight), else the recipe's current settings.
 */
export function runSettings(db: Db, run: { id: number; recipeId: number }): RecipeSettings {
  const ev = db
    .select({ details: auditEvents.details })
    .from(auditEvents)
    .where(and(eq(auditEvents.entity, 'run'), eq(auditEvents.entityId, run.id), eq(auditEvents.action, 'run.start')))
    .get();
  const snap = (ev?.details as { settings?: unknown } | undefined)?.settings;
  if (snap) return RecipeSettings.parse(snap);
  const recipe = db.select({ settings: recipes.settings }).from(recipes).where(eq(recipes.id, run.recipeId)).get();
  return RecipeSettings.parse(recipe?.settings ?? {});
}

/** The calibration runs apply for an instrument: its highest approved version, or undefined. */
export function approvedCalibration(db: DbOrTx, instrumentId: number): typeof calibrations.$inferSelect | undefined {
  return db
    .select()
    .from(calibrations)
    .where(and(eq(calibrations.instrumentId, instrumentId), eq(calibrations.status, 'approved')))
    .orderBy(desc(calibrations.version))
    .get();
}

/**
 * The calibration a field's job applies when its recipe asks for one ('approved'), or the sentence saying why
 * none can be (the field then fails with it, and is not measured uncorrected).
 */
function fieldCalibration(db: Db, settings: RecipeSettings, f: typeof fields.$inferSelect): Pick<FieldJob, 'calibration' | 'calibrationProblem' | 'instrumentId'> {
  const instrumentId = f.instrumentId;
  if (settings.calibration === 'none') return { calibration: null, calibrationProblem: null, instrumentId };
  if (f.instrumentId === null) return { calibration: null, calibrationProblem: `field ${f.name} has no instrument, so the recipe's calibration cannot be applied`, instrumentId };
  const inst = db.select().from(instruments).where(eq(instruments.id, f.instrumentId)).get()!;
  const c = approvedCalibration(db, inst.id);
  if (!c) return { calibration: null, calibrationProblem: `instrument ${inst.name} of field ${f.name} has no approved calibration`, instrumentId };
  return { calibration: { id: c.id, instrumentId: inst.id, instrument: inst.name, version: c.version, dx: c.dx, dy: c.dy, a21: c.a21, a12: c.a12 }, calibrationProblem: null, instrumentId };
}

/**
 * The pre-run check: each field of a scope through `checkFieldInputs` (the rules the run itself applies) with
 * a recipe's settings, before anything is queued. Blocked fields carry the problem and the page that fixes it.
 */
export function checkRunInputs(db: Db, recipe: typeof recipes.$inferSelect, studyId: number, fieldIds: number[]): RunCheckResponse {
  const settings = RecipeSettings.parse(recipe.settings);
  const ready: number[] = [];
  const blocked: RunCheckResponse['blocked'] = [];
  if (!fieldIds.length) return { ready, blocked };
  const rows = db.select().from(fields).where(inArray(fields.id, fieldIds)).all();
  const byId = new Map(rows.map((f) => [f.id, f]));
  const roles = db.select({ fieldId: cells.fieldId, role: cells.role }).from(cells).where(and(inArray(cells.fieldId, fieldIds), isNull(cells.deletedAt), eq(cells.role, 'background'))).all();
  for (const id of fieldIds) {
    const f = byId.get(id)!;
    try {
      checkFieldInputs({
        fieldName: f.name,
        sizeZ: f.sizeZ,
        settings,
        pixelSizeUm: f.pixelSizeUm,
        zStepUm: f.zStepUm ?? null,
        cells: roles.filter((r) => r.fieldId === id),
        ...fieldCalibration(db, settings, f),
      });
      ready.push(id);
    } catch (e) {
      if (!(e instanceof FieldJobError)) throw e;
      const fixUrl = e.fix === 'recipe' ? `/recipes/${recipe.id}` : e.fix === 'instrument' && f.instrumentId != null ? `/instruments/${f.instrumentId}` : `/studies/${studyId}/fields/${id}`;
      blocked.push({ fieldId: id, fieldName: fieldName(db, id), problem: e.message, fixUrl });
    }
  }
  return { ready, blocked };
}

/** What every job of one run shares (its row, recipe and settings snapshot), read once per batch. */
type RunPart = { run: typeof runs.$inferSelect; recipe: typeof recipes.$inferSelect; settings: RecipeSettings };
export type RunPartCache = Map<number, RunPart>;

function runPart(db: Db, runId: number, cache?: RunPartCache): RunPart {
  const hit = cache?.get(runId);
  if (hit) return hit;
  const run = db.select().from(runs).where(eq(runs.id, runId)).get();
  if (!run) throw new Error(`run ${runId} vanished`);
  const recipe = db.select().from(recipes).where(eq(recipes.id, run.recipeId)).get()!;
  const part = { run, recipe, settings: runSettings(db, run) };
  cache?.set(runId, part);
  return part;
}

/**
 * Everything a stateless worker needs for one field of a run. `cache`: jobs built together (a batch) read each
 * run's row, recipe and settings snapshot once; the jobs are the same with or without it.
 */
export function buildJob(db: Db, runId: number, fieldId: number, cache?: RunPartCache): FieldJob {
  const { run, recipe, settings } = runPart(db, runId, cache);
  const f = db.select().from(fields).where(eq(fields.id, fieldId)).get();
  if (!f) throw new Error(`field ${fieldId} vanished`);
  const fileRows = db.select().from(files).where(inArray(files.sha256, [f.file1Sha, f.file2Sha])).all();
  const key = (sha: string) => {
    const r = fileRows.find((x) => x.sha256 === sha);
    if (!r) throw new Error(`field ${f.name}: stored file ${sha.slice(0, 12)}… is missing`);
    return r.storeKey;
  };
  const cellRows = db
    .select({ id: cells.id, role: cells.role, geometry: cells.geometry })
    .from(cells)
    .where(and(eq(cells.fieldId, fieldId), isNull(cells.deletedAt)))
    .orderBy(cells.id)
    .all();
  return {
    runId,
    fieldId,
    fieldName: f.name,
    sources: [
      { key: key(f.file1Sha), sha256: f.file1Sha, channel: f.channel1 },
      { key: key(f.file2Sha), sha256: f.file2Sha, channel: f.channel2 },
    ],
    width: f.width,
    height: f.height,
    sizeZ: f.sizeZ,
    bitDepth: f.bitDepth,
    sampleFormat: f.sampleFormat,
    pixelSizeUm: f.pixelSizeUm,
    zStepUm: f.zStepUm ?? null,
    cells: cellRows,
    settings,
    recipe: { id: recipe.id, name: recipe.name, version: recipe.version, status: recipe.status },
    provisional: run.provisional,
    ...fieldCalibration(db, settings, f),
  };
}

/** Marks a field as handed to a worker (and the run as running). */
export function markFieldStarted(db: Db, runId: number, fieldId: number, fieldName: string) {
  markFieldsStarted(db, [{ runId, fieldId, fieldName }]);
}

/**
 * Marks a batch of fields as handed to a worker (and their runs as running, the last field of each run as its
 * current field) in one transaction.
 */
export function markFieldsStarted(db: Db, batch: { runId: number; fieldId: number; fieldName: string }[]) {
  if (!batch.length) return;
  db.transaction((tx) => {
    const current = new Map<number, string>();
    for (const { runId, fieldId, fieldName } of batch) {
      tx.update(runFields)
        .set({ status: 'running', attempts: sql`${runFields.attempts} + 1` })
        .where(and(eq(runFields.runId, runId), eq(runFields.fieldId, fieldId), inArray(runFields.status, ['queued', 'running'])))
        .run();
      current.set(runId, fieldName);
    }
    for (const [runId, fieldName] of current)
      tx.update(runs)
        .set({ status: 'running', currentField: fieldName, startedAt: sql`coalesce(${runs.startedAt}, strftime('%Y-%m-%dT%H:%M:%fZ','now'))` })
        .where(and(eq(runs.id, runId), inArray(runs.status, ['queued', 'running'])))
        .run();
  });
}

/**
 * Writes a field's result in one transaction. Returns false when the field was already finished
 * (a duplicate delivery), so nothing is written twice.
 */
export function recordFieldResult(db: Db, result: FieldJobResult, onRunFinished?: (runId: number) => void): boolean {
  return recordFieldResults(db, [result], onRunFinished)[0];
}

/**
 * Writes a batch of field results in one transaction (measurements, spots, run_fields done or failed, each
 * touched run's counters once). Per result: false when its field was already finished (a duplicate delivery),
 * so nothing is written twice. `onRunFinished` is called once for each run this batch finished.
 */
export function recordFieldResults(db: Db, results: FieldJobResult[], onRunFinished?: (runId: number) => void): boolean[] {
  const touched = new Set<number>();
  // one prepared statement per table, bound row by row inside this transaction (server/db/bulk.ts)
  const insertMeasurements = preparedInsert(db, measurements, ['id', 'createdAt'], 'ignore');
  const insertSpots = preparedInsert(db, spots, ['id']);
  const wrote = db.transaction((tx) => {
    const provisionalOf = new Map<number, boolean>();
    const at = new Date().toISOString();
    const out = results.map((result) => {
      const rf = tx.select().from(runFields).where(and(eq(runFields.runId, result.runId), eq(runFields.fieldId, result.fieldId))).get();
      if (!rf || rf.status === 'done' || rf.status === 'failed') return false;
      if (!provisionalOf.has(result.runId)) {
        const run = tx.select({ provisional: runs.provisional }).from(runs).where(eq(runs.id, result.runId)).get();
        if (!run) return false;
        provisionalOf.set(result.runId, run.provisional);
      }
      const provisional = provisionalOf.get(result.runId)!;
      if (result.ok) {
        // cells deleted meanwhile keep their rows (their ids are still valid: the cell existed at compute time)
        const ids = { runId: result.runId, fieldId: result.fieldId };
        insertMeasurements(result.measurements, { ...ids, provisional });
        insertSpots(result.spots, ids);
        tx.update(runFields).set({ status: 'done', error: null, finishedAt: at }).where(and(eq(runFields.runId, result.runId), eq(runFields.fieldId, result.fieldId))).run();
      } else {
        tx.update(runFields).set({ status: 'failed', error: result.error, finishedAt: at }).where(and(eq(runFields.runId, result.runId), eq(runFields.fieldId, result.fieldId))).run();
      }
      touched.add(result.runId);
      return true;
    });
    for (const runId of touched) refreshRun(tx, runId);
    return out;
  });
  // the runs this batch finished (a duplicate delivery wrote nothing, so it cannot finish a run twice)
  if (onRunFinished)
    for (const runId of touched) if (db.select({ s: runs.status }).from(runs).where(eq(runs.id, runId)).get()?.s.match(/^(done|failed|partial)$/)) onRunFinished(runId);
  return wrote;
}

/** Recomputes a run's counters and, when no field is left, its final status. */
export function refreshRun(db: DbOrTx, runId: number) {
  const counts = db
    .select({ status: runFields.status, n: sql<number>`count(*)` })
    .from(runFields)
    .where(eq(runFields.runId, runId))
    .groupBy(runFields.status)
    .all();
  const c = { queued: 0, running: 0, done: 0, failed: 0 } as Record<string, number>;
  for (const r of counts) c[r.status] = Number(r.n);
  const total = c.queued + c.running + c.done + c.failed;
  const finished = c.queued + c.running === 0;
  const status = !finished ? undefined : c.failed === 0 ? 'done' : c.done === 0 ? 'failed' : 'partial';
  let error: string | null = null;
  if (finished && c.failed > 0) error = `${c.failed} of ${plural(total, 'field')} failed`;
  db.update(runs)
    .set({
      fieldsTotal: total,
      fieldsDone: c.done + c.failed,
      ...(finished ? { status: status as 'done' | 'failed' | 'partial', finishedAt: new Date().toISOString(), currentField: null, error } : {}),
    })
    .where(eq(runs.id, runId))
    .run();
}

/** Unfinished fields of unfinished runs (after a restart: 'running' fields were interrupted → queued). */
export function unfinishedWork(db: Db): { runId: number; fieldId: number }[] {
  const active = db.select({ id: runs.id }).from(runs).where(inArray(runs.status, ['queued', 'running'])).all().map((r) => r.id);
  if (!active.length) return [];
  db.update(runFields).set({ status: 'queued' }).where(and(inArray(runFields.runId, active), eq(runFields.status, 'running'))).run();
  for (const id of active) refreshRun(db, id);
  return db
    .select({ runId: runFields.runId, fieldId: runFields.fieldId })
    .from(runFields)
    .where(and(inArray(runFields.runId, active), eq(runFields.status, 'queued')))
    .orderBy(runFields.runId, runFields.fieldId)
    .all();
}

export function queuedFieldsOf(db: Db, runId: number) {
  return db
    .select({ runId: runFields.runId, fieldId: runFields.fieldId })
    .from(runFields)
    .where(and(eq(runFields.runId, runId), eq(runFields.status, 'queued')))
    .orderBy(runFields.fieldId)
    .all();
}

/** "condition / coverslip / field", as progress shows the field being computed. */
export function fieldName(db: Db, fieldId: number) {
  const r = db
    .select({ f: fields.name, cs: coverslips.name, c: conditions.name })
    .from(fields)
    .innerJoin(coverslips, eq(fields.coverslipId, coverslips.id))
    .innerJoin(conditions, eq(coverslips.conditionId, conditions.id))
    .where(eq(fields.id, fieldId))
    .get();
  return r ? `${r.c} / ${r.cs} / ${r.f}` : `field ${fieldId}`;
}

/**
 * Creates a run of one recipe version over a resolved scope (its fields listed in run_fields, an audit event
 * with the settings used) in one transaction, then hands it to the run queue.
 */
export async function createRun(
  ctx: { db: Db; runs: RunQueue },
  args: { recipe: typeof recipes.$inferSelect; scope: { kind: RunScopeKind; id: number; studyId: number; fieldIds: number[] }; userId: number },
) {
  const { recipe, scope, userId } = args;
  const settings = RecipeSettings.parse(recipe.settings);
  const run = ctx.db.transaction((tx) => {
    const created = tx
      .insert(runs)
      .values({
        studyId: scope.studyId,
        recipeId: recipe.id,
        scopeKind: scope.kind,
        scopeId: scope.id,
        status: 'queued',
        fieldsTotal: scope.fieldIds.length,
        provisional: recipe.status !== 'approved',
        seed: settings.seed,
        engineVersion: ENGINE_VERSION,
        startedBy: userId,
      })
      .returning()
      .get();
    for (let i = 0; i < scope.fieldIds.length; i += 200)
      tx.insert(runFields).values(scope.fieldIds.slice(i, i + 200).map((fieldId) => ({ runId: created.id, fieldId }))).run();
    tx.insert(auditEvents)
      .values({
        actorId: userId,
        action: 'run.start',
        entity: 'run',
        entityId: created.id,
        studyId: scope.studyId,
        details: { recipeId: recipe.id, recipeVersion: recipe.version, recipeStatus: recipe.status, scope: { kind: scope.kind, id: scope.id }, fields: scope.fieldIds.length, settings },
      })
      .run();
    return created;
  });
  await ctx.runs.enqueue(run.id);
  return run;
}
