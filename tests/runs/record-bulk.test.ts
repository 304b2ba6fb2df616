/**
 * The run writer's prepared-statement inserts (server/db/bulk.ts, used by recordFieldResults) store exactly the
 * rows Drizzle's `insert(...).values(...)` stores for the same field result: every measurement column (JSON
 * provenance, booleans, nulls) and every spot, a duplicate delivery writes nothing, and the field is marked done.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { seedDemo, DEMO_RECIPE, DEMO_STUDY } from '../../server/db/seed/index.js';
import { measurements, recipes, runFields, spots, studies } from '../../server/db/schema.js';
import { buildJob, createRun, recordFieldResults, resolveScope } from '../../server/runs/records.js';
import { runFieldJob } from '../../server/runs/compute.js';
import type { RunQueue } from '../../server/services.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
  await seedDemo(t.ctx, { size: 192 });
});
afterAll(() => t.close());

/** a queue that keeps the run's fields queued, so this test writes their results itself */
const idleQueue = { enqueue: async () => {} } as unknown as RunQueue;

it('stores the same measurement and spot rows as a Drizzle insert of the same result', async () => {
  const { db } = t.ctx;
  const recipe = db.select().from(recipes).where(and(eq(recipes.name, DEMO_RECIPE), eq(recipes.status, 'approved'))).get()!;
  const study = db.select().from(studies).where(eq(studies.name, DEMO_STUDY)).get()!;
  const field = { id: resolveScope(db, 'study', study.id).fieldIds[0] };
  const scope = { kind: 'field' as const, id: field.id, ...resolveScope(db, 'field', field.id) };
  const userId = t.world.users.microscopist.id;
  const a = await createRun({ db, runs: idleQueue }, { recipe, scope, userId });
  const b = await createRun({ db, runs: idleQueue }, { recipe, scope, userId });
  const res = await runFieldJob(t.ctx.store, buildJob(db, a.id, field.id));
  if (!res.ok) throw new Error(res.error);
  expect(res.measurements.length).toBeGreaterThan(0);
  expect(res.spots.length).toBeGreaterThan(0); // the demo recipe has Spots on

  expect(recordFieldResults(db, [res])).toEqual([true]);
  expect(recordFieldResults(db, [res])).toEqual([false]); // a duplicate delivery writes nothing
  // the reference: the same result through Drizzle's insert builder
  db.insert(measurements).values(res.measurements.map((m) => ({ ...m, runId: b.id, fieldId: field.id, provisional: b.provisional }))).run();
  db.insert(spots).values(res.spots.map((s) => ({ ...s, runId: b.id, fieldId: field.id }))).run();

  const raw = db.$client;
  const rowsOf = (table: string, runId: number, order: string) =>
    raw
      .prepare(`SELECT * FROM ${table} WHERE run_id = ? ORDER BY ${order}`)
      .all(runId)
      .map((r) => {
        const { id: _id, run_id: _run, created_at: _at, ...rest } = r as Record<string, unknown>;
        return rest;
      });
  const mA = rowsOf('measurements', a.id, 'cell_id'), mB = rowsOf('measurements', b.id, 'cell_id');
  expect(mA.length).toBe(res.measurements.length);
  expect(mA).toEqual(mB);
  // stored types too (SQLite's typeof: integer vs real vs text vs null), not only values
  const typesOf = (runId: number) => raw.prepare('SELECT typeof(pearson) p, typeof(pixels) n, typeof(provisional) v, typeof(provenance) j, typeof(mic_e) e FROM measurements WHERE run_id = ? ORDER BY cell_id').all(runId);
  expect(typesOf(a.id)).toEqual(typesOf(b.id));
  const sA = rowsOf('spots', a.id, 'id'), sB = rowsOf('spots', b.id, 'id');
  expect(sA.length).toBe(res.spots.length);
  expect(sA).toEqual(sB);
  expect(db.select().from(runFields).where(and(eq(runFields.runId, a.id), eq(runFields.fieldId, field.id))).get()!.status).toBe('done');
});
